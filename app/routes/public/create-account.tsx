// Create an account: a person starts a client organisation, or applies on behalf of a lab.
import { getFormProps, getInputProps, useForm } from "@conform-to/react";
import { parseWithZod } from "@conform-to/zod/v4";
import { data, Form, Link, useNavigation, useSearchParams } from "react-router";
import { z } from "zod";
import { Field, FormError } from "~/components/ui";
import { newPasswordField } from "~/domain/password-rules";
import { audit } from "~/models/audit.server";
import { createAccount, EmailTaken } from "~/utils/auth.server";
import { readForm } from "~/utils/form.server";
import { requireAnonymous } from "~/utils/permissions.server";
import { sameSitePath } from "~/utils/safe-redirect";
import { startSession } from "~/utils/session.server";
import { redirectWithToast } from "~/utils/toast.server";
import type { Route } from "./+types/create-account";

const text = (what: string, max: number) =>
  z
    .string({ error: `Enter ${what}.` })
    .trim()
    .min(2, `Enter ${what} (at least 2 characters).`)
    .max(max, `At most ${max} characters.`);

const CreateAccountSchema = z
  .object({
    kind: z.enum(["client", "lab"], { error: "Choose whether you buy measurements or run a lab." }),
    name: text("your name", 120),
    email: z.email({ error: (i) => (i.input === undefined ? "Enter your e-mail address." : "Enter a valid e-mail address.") }).max(254),
    password: newPasswordField(),
    organisationName: text("the organisation's name", 160),
    city: z.string().trim().max(120).optional(),
    country: z.string().trim().max(120).optional(),
    redirectTo: z.string().optional(),
  })
  // Checked even when other fields fail, so a lab sees every missing field at once.
  .refine((v) => v.kind !== "lab" || !!v.city, {
    path: ["city"],
    message: "Labs give the city of their instruments.",
    when: (p) => (p.value as { kind?: string })?.kind === "lab",
  })
  .refine((v) => v.kind !== "lab" || !!v.country, {
    path: ["country"],
    message: "Labs give their country.",
    when: (p) => (p.value as { kind?: string })?.kind === "lab",
  });

/** Someone following an invitation link comes back to it once the account exists; no other redirect is followed. */
const invitationReturn = (to: string | undefined) => {
  const path = sameSitePath(to);
  return path && /^\/invitations\/[A-Za-z0-9_-]{1,100}$/.test(path) ? path : null;
};

export async function loader({ request }: Route.LoaderArgs) {
  await requireAnonymous(request);
  return null;
}

export async function action({ request, context }: Route.ActionArgs) {
  await requireAnonymous(request);
  // The form reader refuses a NUL or bytes that are not UTF-8 with a 400, before anything is stored.
  const submission = parseWithZod(await readForm(request), { schema: CreateAccountSchema });
  if (submission.status !== "success") {
    return data({ result: submission.reply({ hideFields: ["password"] }) }, { status: 400 });
  }
  try {
    const { user, organisation } = await createAccount(submission.value);
    await audit({
      actorUserId: user.id,
      organisationId: organisation.id,
      action: organisation.kind === "lab" ? "lab_applied" : "account_created",
      subjectType: "organisation",
      subjectId: organisation.id,
      clientAddress: context.clientAddress,
    });
    const cookie = await startSession(request, user.id, organisation.id);
    const message =
      organisation.kind === "lab"
        ? `Welcome. ${organisation.name}'s application has been received; an admin will review it.`
        : `Welcome to Diffractory. ${organisation.name} is ready for its first request.`;
    const back = invitationReturn(submission.value.redirectTo);
    if (back)
      return redirectWithToast(
        back,
        { kind: "success", message: "Your account is ready. Accept the invitation to join." },
        { headers: [["Set-Cookie", cookie]] },
      );
    return redirectWithToast(organisation.kind === "lab" ? "/lab" : "/client", { kind: "success", message }, { headers: [["Set-Cookie", cookie]] });
  } catch (err) {
    if (err instanceof EmailTaken) {
      return data({ result: submission.reply({ fieldErrors: { email: [err.message] }, hideFields: ["password"] }) }, { status: 400 });
    }
    throw err;
  }
}

export default function CreateAccount({ actionData }: Route.ComponentProps) {
  const navigation = useNavigation();
  const [params] = useSearchParams();
  const [form, fields] = useForm({
    lastResult: actionData?.result,
    defaultValue: { kind: "client", email: params.get("email") ?? undefined },
    onValidate: ({ formData }) => parseWithZod(formData, { schema: CreateAccountSchema }),
    shouldValidate: "onSubmit",
    shouldRevalidate: "onInput",
  });
  const isLab = fields.kind.value === "lab";
  const busy = navigation.state !== "idle" && navigation.formAction === "/create-account";
  return (
    <div className="mx-auto max-w-xl px-4 py-12">
      <div className="card">
        <h1 className="text-2xl font-bold">Create an account</h1>
        <Form method="post" className="mt-6 space-y-2" {...getFormProps(form)}>
          <input type="hidden" name="redirectTo" value={params.get("redirectTo") ?? ""} />
          <fieldset>
            <legend className="label">I am joining as</legend>
            <div className="grid gap-3 sm:grid-cols-2">
              {[
                { value: "client", title: "A client organisation", body: "We need measurements of our materials." },
                { value: "lab", title: "A lab", body: "We run diffractometers and sell instrument time." },
              ].map((o) => (
                <label
                  key={o.value}
                  className="flex cursor-pointer gap-3 rounded-lg border border-ink-300 p-3 has-[:checked]:border-beam-500 has-[:checked]:bg-beam-50"
                >
                  <input type="radio" name={fields.kind.name} value={o.value} defaultChecked={fields.kind.initialValue === o.value} className="mt-1" />
                  <span>
                    <span className="block text-sm font-semibold">{o.title}</span>
                    <span className="block text-xs text-ink-600">{o.body}</span>
                  </span>
                </label>
              ))}
            </div>
            <div className="min-h-5 pt-1 text-xs text-danger-700">{fields.kind.errors?.join(" ")}</div>
          </fieldset>
          <Field label="Your name" id={fields.name.id} errors={fields.name.errors}>
            <input className="input" autoComplete="name" {...getInputProps(fields.name, { type: "text" })} />
          </Field>
          <Field label="E-mail" id={fields.email.id} errors={fields.email.errors}>
            <input className="input" autoComplete="email" {...getInputProps(fields.email, { type: "email" })} />
          </Field>
          <Field label="Password" id={fields.password.id} errors={fields.password.errors} hint="At least 12 characters.">
            <input className="input" autoComplete="new-password" {...getInputProps(fields.password, { type: "password" })} />
          </Field>
          <Field label={isLab ? "Lab name" : "Organisation name"} id={fields.organisationName.id} errors={fields.organisationName.errors}>
            <input className="input" autoComplete="organization" {...getInputProps(fields.organisationName, { type: "text" })} />
          </Field>
          <div className="grid gap-3 sm:grid-cols-2">
            <Field label={isLab ? "City" : "City (optional)"} id={fields.city.id} errors={fields.city.errors}>
              <input className="input" {...getInputProps(fields.city, { type: "text" })} />
            </Field>
            <Field label={isLab ? "Country" : "Country (optional)"} id={fields.country.id} errors={fields.country.errors}>
              <input className="input" autoComplete="country-name" {...getInputProps(fields.country, { type: "text" })} />
            </Field>
          </div>
          {isLab ? (
            <p className="text-xs text-ink-600">
              A lab is listed only after an admin has reviewed its accreditation evidence, radiation-licence attestation and a calibration scan.
            </p>
          ) : null}
          <FormError errors={form.errors} />
          <button type="submit" className="btn-primary w-full" disabled={busy}>
            {busy ? "Creating your account…" : "Create account"}
          </button>
        </Form>
        <p className="mt-6 text-center text-sm text-ink-600">
          Already have an account?{" "}
          <Link to="/sign-in" className="font-semibold text-beam-700 underline">
            Sign in
          </Link>
        </p>
      </div>
    </div>
  );
}

export function meta(_: Route.MetaArgs) {
  return [
    { title: "Create an account — Diffractory" },
    {
      name: "description",
      content: "Create a Diffractory account to buy powder-diffraction measurements for your organisation, or apply to sell them as a lab.",
    },
  ];
}
