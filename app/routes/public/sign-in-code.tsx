// /sign-in/code — the second step of sign-in for people with a second factor: the 6-digit code of their
// authenticator app. Only a session that has passed the password step reaches it; wrong codes are limited
// per session and count as failed sign-ins of the e-mail.
import { getFormProps, useForm } from "@conform-to/react";
import { parseWithZod } from "@conform-to/zod/v4";
import { data, Form, redirect, useNavigation, useSearchParams } from "react-router";
import { z } from "zod";
import { AuthCard } from "~/components/auth-card";
import { TotpCodeField } from "~/components/totp-code-field";
import { FormError } from "~/components/ui";
import { acceptTotpCode, SECOND_FACTOR_TRIES } from "~/models/accounts/security.server";
import { audit } from "~/models/audit.server";
import { readForm } from "~/utils/form.server";
import { actorFor } from "~/models/accounts/actors.server";
import { requireSecondFactorPending, workspacePath } from "~/utils/permissions.server";
import { sameSitePath } from "~/utils/safe-redirect";
import { countSecondFactorFailure, endSession, startSession } from "~/utils/session.server";
import { reserveSignInAttempt, signInAttemptSucceeded, TOO_MANY_ATTEMPTS } from "~/models/accounts/sign-in-limit.server";
import { redirectWithToast } from "~/utils/toast.server";
import { TOTP_MESSAGES } from "~/domain/totp-messages";
import type { Route } from "./+types/sign-in-code";

const CodeSchema = z.object({
  intent: z.literal("verify"),
  code: z.string({ error: "Enter the 6-digit code from your authenticator app." }).trim().max(20, TOTP_MESSAGES.malformed),
  // Only a path on this site is kept (see sign-in.tsx), checked before the session is started.
  redirectTo: z
    .string()
    .max(2000)
    .optional()
    .transform((to) => sameSitePath(to) ?? undefined),
});

export async function loader({ request }: Route.LoaderArgs) {
  const { user } = await requireSecondFactorPending(request);
  return { email: user.email };
}

export async function action({ request, context }: Route.ActionArgs) {
  const { user, session } = await requireSecondFactorPending(request);
  const form = await readForm(request);
  if (form.get("intent") === "cancel") {
    return redirect("/sign-in", { headers: { "Set-Cookie": await endSession(request) } });
  }
  const submission = parseWithZod(form, { schema: CodeSchema });
  if (submission.status !== "success") return data({ result: submission.reply({ hideFields: ["code"] }) }, { status: 400 });
  const email = user.email.toLowerCase();
  const address = context.clientAddress;
  // Counted before the code is checked, like the password step (sign-in.tsx).
  const attempt = await reserveSignInAttempt(email, address);
  if (attempt === null) {
    return redirectWithToast("/sign-in", { kind: "error", message: TOO_MANY_ATTEMPTS }, { headers: [["Set-Cookie", await endSession(request)]] });
  }
  const check = await acceptTotpCode(user, submission.value.code);
  if (!check.ok) {
    const failures = await countSecondFactorFailure(request);
    if (failures >= SECOND_FACTOR_TRIES) {
      await audit({
        actorUserId: user.id,
        action: "second_factor_failed",
        subjectType: "user",
        subjectId: user.id,
        details: { failures },
        clientAddress: address,
      });
      return redirectWithToast(
        "/sign-in",
        { kind: "error", message: "Too many wrong codes. Sign in again with your password." },
        { headers: [["Set-Cookie", await endSession(request)]] },
      );
    }
    return data({ result: submission.reply({ fieldErrors: { code: [TOTP_MESSAGES[check.reason]] }, hideFields: ["code"] }) }, { status: 400 });
  }
  await signInAttemptSucceeded(attempt);
  // A fresh token for the fully signed-in session; the waiting one ends.
  const cookie = await startSession(request, user.id, session.activeOrganisationId);
  await audit({ actorUserId: user.id, action: "signed_in", subjectType: "user", subjectId: user.id, details: { secondFactor: true }, clientAddress: address });
  const actor = await actorFor(user, session.activeOrganisationId);
  return redirect(submission.value.redirectTo ?? workspacePath(actor), { headers: { "Set-Cookie": cookie } });
}

export default function SignInCode({ loaderData, actionData }: Route.ComponentProps) {
  const { email } = loaderData;
  const [params] = useSearchParams();
  const navigation = useNavigation();
  const [form, fields] = useForm({
    lastResult: actionData?.result,
    onValidate: ({ formData }) => parseWithZod(formData, { schema: CodeSchema }),
    shouldValidate: "onSubmit",
  });
  const busy = navigation.state !== "idle";
  return (
    <AuthCard
      title="Enter your code"
      intro={
        <>
          The password for <strong>{email}</strong> is right. Open your authenticator app and enter the current 6-digit code for Diffractory.
        </>
      }
    >
      <Form method="post" className="mt-6 space-y-2" {...getFormProps(form)}>
        <input type="hidden" name="intent" value="verify" />
        <input type="hidden" name="redirectTo" value={params.get("redirectTo") ?? ""} />
        <TotpCodeField field={fields.code} label="Code" autoFocus />
        <FormError errors={form.errors} />
        <button type="submit" className="btn-primary w-full" disabled={busy}>
          {busy ? "Checking…" : "Verify and sign in"}
        </button>
      </Form>
      <Form method="post" className="mt-4 text-center">
        <input type="hidden" name="intent" value="cancel" />
        <button type="submit" className="text-sm text-beam-700 underline">
          Cancel and sign in as someone else
        </button>
      </Form>
    </AuthCard>
  );
}

export function meta(_: Route.MetaArgs) {
  return [
    { title: "Sign-in code — Diffractory" },
    { name: "description", content: "The second step of signing in to Diffractory: the six-digit code from your authenticator app." },
  ];
}
