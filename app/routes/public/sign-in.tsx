// Sign in with e-mail and password; failed attempts are limited per e-mail and per address. Someone with a
// second factor gets a session that waits for the code (/sign-in/code) and opens nothing else.
import { getFormProps, getInputProps, useForm } from "@conform-to/react";
import { parseWithZod } from "@conform-to/zod/v4";
import { data, Form, Link, redirect, useNavigation, useSearchParams } from "react-router";
import { z } from "zod";
import { AuthCard } from "~/components/auth-card";
import { Field, FormError } from "~/components/ui";
import { audit } from "~/models/audit.server";
import { authenticator, normaliseEmail, WrongCredentials } from "~/utils/auth.server";
import { readForm } from "~/utils/form.server";
import { actorFor } from "~/models/accounts/actors.server";
import { requireAnonymous, workspacePath } from "~/utils/permissions.server";
import { sameSitePath } from "~/utils/safe-redirect";
import { startSession } from "~/utils/session.server";
import { reserveSignInAttempt, signInAttemptSucceeded, TOO_MANY_ATTEMPTS } from "~/models/accounts/sign-in-limit.server";
import type { Route } from "./+types/sign-in";

const SignInSchema = z.object({
  email: z.email({ error: (i) => (i.input === undefined ? "Enter your e-mail address." : "Enter a valid e-mail address.") }),
  password: z.string({ error: "Enter your password." }).max(200, "A password has at most 200 characters."),
  // Anyone can write redirectTo into a link: only a path on this site is kept, checked here, before any session
  // exists; anything else (another host, a control character) falls back to the workspace.
  redirectTo: z
    .string()
    .optional()
    .transform((to) => sameSitePath(to) ?? undefined),
});

export async function loader({ request }: Route.LoaderArgs) {
  await requireAnonymous(request);
  return null;
}

export async function action({ request, context }: Route.ActionArgs) {
  await requireAnonymous(request);
  // The form strategy reads the body itself, so validation reads a clone.
  const formData = await readForm(request.clone());
  const submission = parseWithZod(formData, { schema: SignInSchema });
  if (submission.status !== "success") {
    return data({ result: submission.reply({ hideFields: ["password"] }) }, { status: 400 });
  }
  const email = normaliseEmail(submission.value.email);
  const address = context.clientAddress;
  // The attempt is counted before the password is checked, so attempts sent at once cannot pass the limit together.
  const attempt = await reserveSignInAttempt(email, address);
  if (attempt === null) {
    return data({ result: submission.reply({ formErrors: [TOO_MANY_ATTEMPTS], hideFields: ["password"] }) }, { status: 429 });
  }
  let user;
  try {
    user = await authenticator.authenticate("password", request);
  } catch (err) {
    if (!(err instanceof WrongCredentials)) throw err;
    return data({ result: submission.reply({ fieldErrors: { password: [err.message] }, hideFields: ["password"] }) }, { status: 400 });
  }
  // The password was right; with a second factor, the code screen counts its own attempts.
  await signInAttemptSucceeded(attempt);
  const actor = await actorFor(user, null);
  if (user.totpEnabledAt && user.totpSecret) {
    const waiting = await startSession(request, user.id, actor.active?.organisation.id ?? null, { awaitingSecondFactor: true });
    const then = submission.value.redirectTo;
    const next = then ? `?${new URLSearchParams({ redirectTo: then })}` : "";
    return redirect(`/sign-in/code${next}`, { headers: { "Set-Cookie": waiting } });
  }
  const cookie = await startSession(request, user.id, actor.active?.organisation.id ?? null);
  await audit({ actorUserId: user.id, action: "signed_in", subjectType: "user", subjectId: user.id, clientAddress: address });
  return redirect(submission.value.redirectTo ?? workspacePath(actor), { headers: { "Set-Cookie": cookie } });
}

export default function SignIn({ actionData }: Route.ComponentProps) {
  const [params] = useSearchParams();
  const navigation = useNavigation();
  const [form, fields] = useForm({
    lastResult: actionData?.result,
    onValidate: ({ formData }) => parseWithZod(formData, { schema: SignInSchema }),
    shouldValidate: "onSubmit",
    shouldRevalidate: "onInput",
  });
  const busy = navigation.state !== "idle" && navigation.formAction?.startsWith("/sign-in");
  return (
    <AuthCard
      title="Sign in"
      intro="Clients, lab staff and admins sign in here."
      footer={{ question: "New here?", to: "/create-account", label: "Create an account" }}
    >
      <Form method="post" className="mt-6 space-y-2" {...getFormProps(form)}>
        <input type="hidden" name="redirectTo" value={params.get("redirectTo") ?? ""} />
        <Field label="E-mail" id={fields.email.id} errors={fields.email.errors}>
          <input className="input" autoComplete="email" {...getInputProps(fields.email, { type: "email" })} />
        </Field>
        <Field label="Password" id={fields.password.id} errors={fields.password.errors}>
          <input className="input" autoComplete="current-password" {...getInputProps(fields.password, { type: "password" })} />
        </Field>
        <FormError errors={form.errors} />
        <button type="submit" className="btn-primary w-full" disabled={busy}>
          {busy ? "Signing in…" : "Sign in"}
        </button>
      </Form>
      <p className="mt-4 text-center text-sm">
        <Link to="/forgot-password" className="text-beam-700 underline">
          Forgot your password?
        </Link>
      </p>
    </AuthCard>
  );
}

export function meta(_: Route.MetaArgs) {
  return [
    { title: "Sign in — Diffractory" },
    { name: "description", content: "Sign in to Diffractory to request, quote, deliver and check powder-diffraction measurements." },
  ];
}
