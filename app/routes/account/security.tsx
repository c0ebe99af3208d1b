// /account/security — a person's password and second factor. Changing the password signs out every other
// device; the second factor is an authenticator app (TOTP), required for platform admins.
import { getFormProps, getInputProps, useForm, type SubmissionResult } from "@conform-to/react";
import { parseWithZod } from "@conform-to/zod/v4";
import { data, Form, useNavigation, useSearchParams } from "react-router";
import { z } from "zod";
import { NewPasswordFields } from "~/components/new-password-fields";
import { TotpCodeField } from "~/components/totp-code-field";
import { Badge, Field, FormError, PageHeader } from "~/components/ui";
import { changePassword, confirmTotpEnrolment, disableTotp, startTotpEnrolment } from "~/models/accounts/security.server";
import { currentPasswordField, newPasswordPair } from "~/domain/password-rules";
import { readForm } from "~/utils/form.server";
import { requireUser, workspacePath } from "~/utils/permissions.server";
import { startSession } from "~/utils/session.server";
import { redirectWithToast } from "~/utils/toast.server";
import { enrolmentPicture, groupedSecret } from "~/models/accounts/totp.server";
import type { Route } from "./+types/security";
import { useFormat } from "~/components/locale";

const codeField = () =>
  z.string({ error: "Enter the 6-digit code from your authenticator app." }).trim().max(20, "Enter the 6-digit code from your authenticator app.");

const ChangePasswordSchema = newPasswordPair({ intent: z.literal("change-password"), currentPassword: currentPasswordField() });
const StartSchema = z.object({ intent: z.literal("enrol-start") });
const ConfirmSchema = z.object({ intent: z.literal("enrol-confirm"), code: codeField() });
const DisableSchema = z.object({ intent: z.literal("disable"), password: currentPasswordField("your password"), code: codeField() });
const SCHEMAS = { "change-password": ChangePasswordSchema, "enrol-start": StartSchema, "enrol-confirm": ConfirmSchema, disable: DisableSchema } as const;
type Intent = keyof typeof SCHEMAS;
const isIntent = (v: unknown): v is Intent => typeof v === "string" && Object.hasOwn(SCHEMAS, v);

export async function loader({ request }: Route.LoaderArgs) {
  const actor = await requireUser(request);
  const { user } = actor;
  const pending = !user.totpEnabledAt && user.totpSecret ? user.totpSecret : null;
  const picture = pending ? await enrolmentPicture(pending, user.email) : null;
  return {
    email: user.email,
    isAdmin: user.isAdmin,
    back: workspacePath(actor),
    passwordChangedAt: user.passwordChangedAt.toISOString(),
    totp: user.totpEnabledAt
      ? ({ state: "on", since: user.totpEnabledAt.toISOString() } as const)
      : pending && picture
        ? ({ state: "enrolling", qr: picture.dataUrl, secret: groupedSecret(pending), uri: picture.uri } as const)
        : ({ state: "off" } as const),
  };
}

export async function action({ request, context }: Route.ActionArgs) {
  const actor = await requireUser(request);
  const { user } = actor;
  const form = await readForm(request);
  const intent = form.get("intent");
  if (!isIntent(intent)) return data({ intent: null, result: null, error: "Unknown request." }, { status: 400 });
  const submission = parseWithZod(form, { schema: SCHEMAS[intent] });
  const hide = ["currentPassword", "password", "confirm", "code"];
  const reply = (fieldErrors?: Record<string, string[]>) => ({ intent, result: submission.reply({ fieldErrors, hideFields: hide }), error: null });
  if (submission.status !== "success") return data(reply(), { status: 400 });
  const clientAddress = context.clientAddress;
  const v = submission.value;

  if (v.intent === "change-password") {
    const outcome = await changePassword({ user, currentPassword: v.currentPassword, newPassword: v.password, clientAddress });
    if (!outcome.ok) return data(reply({ [outcome.field]: [outcome.message] }), { status: 400 });
    // This device keeps working with a new token; every other session was ended.
    const cookie = await startSession(request, user.id, actor.active?.organisation.id ?? null);
    const others = outcome.sessionsEnded ? ` ${outcome.sessionsEnded} other ${outcome.sessionsEnded === 1 ? "device was" : "devices were"} signed out.` : "";
    return redirectWithToast("/account/security", { kind: "success", message: `Your password is changed.${others}` }, { headers: [["Set-Cookie", cookie]] });
  }
  if (v.intent === "enrol-start") {
    const started = await startTotpEnrolment(user);
    if (!started.ok) return data({ intent, result: null, error: started.message }, { status: 409 });
    return redirectWithToast("/account/security", { kind: "info", message: "Scan the code with your authenticator app, then enter the code it shows." });
  }
  if (v.intent === "enrol-confirm") {
    const outcome = await confirmTotpEnrolment({ user, code: v.code, clientAddress });
    if (!outcome.ok) return data(reply({ code: [outcome.message] }), { status: 400 });
    return redirectWithToast("/account/security", { kind: "success", message: "The second factor is on. Sign-in now asks for a code from your app." });
  }
  const outcome = await disableTotp({ user, password: v.password, code: v.code, clientAddress });
  if (!outcome.ok) return data(reply({ [outcome.field]: [outcome.message] }), { status: 400 });
  return redirectWithToast("/account/security", { kind: "success", message: "The second factor is off." });
}

type ActionData = { intent: Intent | null; result: SubmissionResult<string[]> | null; error: string | null } | undefined;
const resultFor = (actionData: ActionData, intent: Intent) => (actionData?.intent === intent ? (actionData.result ?? undefined) : undefined);

function ChangePasswordForm({ actionData, busy }: { actionData: ActionData; busy: boolean }) {
  const [form, fields] = useForm({
    id: "change-password",
    lastResult: resultFor(actionData, "change-password"),
    onValidate: ({ formData }) => parseWithZod(formData, { schema: ChangePasswordSchema }),
    shouldValidate: "onSubmit",
    shouldRevalidate: "onInput",
  });
  return (
    <Form method="post" className="space-y-2" {...getFormProps(form)}>
      <input type="hidden" name="intent" value="change-password" />
      <Field label="Current password" id={fields.currentPassword.id} errors={fields.currentPassword.errors}>
        <input className="input" autoComplete="current-password" {...getInputProps(fields.currentPassword, { type: "password" })} />
      </Field>
      <NewPasswordFields password={fields.password} confirm={fields.confirm} />
      <FormError errors={form.errors} />
      <button type="submit" className="btn-primary" disabled={busy}>
        Change password
      </button>
    </Form>
  );
}

function ConfirmForm({ actionData, busy }: { actionData: ActionData; busy: boolean }) {
  const [form, fields] = useForm({
    id: "enrol-confirm",
    lastResult: resultFor(actionData, "enrol-confirm"),
    onValidate: ({ formData }) => parseWithZod(formData, { schema: ConfirmSchema }),
    shouldValidate: "onSubmit",
  });
  return (
    <Form method="post" className="space-y-2" {...getFormProps(form)}>
      <input type="hidden" name="intent" value="enrol-confirm" />
      <TotpCodeField field={fields.code} />
      <FormError errors={form.errors} />
      <button type="submit" className="btn-primary" disabled={busy}>
        Turn on the second factor
      </button>
    </Form>
  );
}

function DisableForm({ actionData, busy }: { actionData: ActionData; busy: boolean }) {
  const [form, fields] = useForm({
    id: "disable",
    lastResult: resultFor(actionData, "disable"),
    onValidate: ({ formData }) => parseWithZod(formData, { schema: DisableSchema }),
    shouldValidate: "onSubmit",
  });
  return (
    <Form method="post" className="space-y-2" {...getFormProps(form)}>
      <input type="hidden" name="intent" value="disable" />
      <Field label="Password" id={fields.password.id} errors={fields.password.errors}>
        <input className="input" autoComplete="current-password" {...getInputProps(fields.password, { type: "password" })} />
      </Field>
      <TotpCodeField field={fields.code} />
      <FormError errors={form.errors} />
      <button type="submit" className="btn-danger" disabled={busy}>
        Turn off the second factor
      </button>
    </Form>
  );
}

export default function AccountSecurity({ loaderData: page, actionData: answer }: Route.ComponentProps) {
  const fmt = useFormat();
  const actionData = answer as ActionData;
  const busy = useNavigation().state !== "idle";
  const [params] = useSearchParams();
  const required = page.isAdmin && page.totp.state !== "on";
  return (
    <main id="main" className="mx-auto w-full max-w-3xl px-4 py-8 sm:px-6">
      <p className="mb-4 text-sm">
        <a href={page.back} className="text-beam-700 hover:underline">
          ← Back to your workspace
        </a>
      </p>
      <PageHeader title="Account security" subtitle={`Password and second factor for ${page.email}.`} />
      {required ? (
        <p
          role={params.get("enrol") === "required" ? "alert" : undefined}
          className="mb-6 rounded-lg border border-caution-600 bg-caution-50 px-4 py-3 text-sm text-caution-700"
        >
          Platform admins need a second factor. Set it up below; admin screens open once it is on.
        </p>
      ) : null}
      {actionData?.error ? (
        <div className="mb-4">
          <FormError errors={[actionData.error]} />
        </div>
      ) : null}

      <section className="card mb-8" aria-labelledby="password-heading">
        <h2 id="password-heading" className="text-lg font-semibold">
          Password
        </h2>
        <p className="mt-1 mb-4 text-sm text-ink-600">
          Last changed {fmt.date(page.passwordChangedAt)}. Changing it signs out every other device; this one stays signed in.
        </p>
        <ChangePasswordForm actionData={actionData} busy={busy} />
      </section>

      <section className="card" aria-labelledby="totp-heading">
        <h2 id="totp-heading" className="flex items-center gap-2 text-lg font-semibold">
          Second factor {page.totp.state === "on" ? <Badge tone="ok">on</Badge> : <Badge tone="neutral">off</Badge>}
        </h2>
        {page.totp.state === "on" ? (
          <div className="mt-2 space-y-4">
            <p className="text-sm text-ink-600">
              Since {fmt.date(page.totp.since)}, sign-in asks for the 6-digit code of your authenticator app after the password.
            </p>
            {page.isAdmin ? (
              <p className="text-sm text-ink-600">Platform admins keep their second factor; it cannot be turned off.</p>
            ) : (
              <DisableForm actionData={actionData} busy={busy} />
            )}
          </div>
        ) : page.totp.state === "enrolling" ? (
          <div className="mt-2 space-y-4">
            <p className="text-sm text-ink-600">
              Scan this code with an authenticator app (any app for time-based codes), or type the key into it. Then enter the code the app shows.
            </p>
            <div className="flex flex-col gap-4 sm:flex-row sm:items-start">
              <img src={page.totp.qr} alt="QR code of the authenticator set-up key" width={192} height={192} className="rounded-lg border border-ink-200" />
              <div className="space-y-3">
                <div>
                  <p className="text-xs font-semibold text-ink-500">Key</p>
                  <code className="block font-mono text-sm break-all text-ink-900" data-testid="totp-secret">
                    {page.totp.secret}
                  </code>
                  <p className="mt-1 text-xs text-ink-500">Time-based, 6 digits, every 30 seconds.</p>
                </div>
                <ConfirmForm actionData={actionData} busy={busy} />
              </div>
            </div>
            <Form method="post">
              <input type="hidden" name="intent" value="enrol-start" />
              <button type="submit" className="btn-quiet text-sm" disabled={busy}>
                Make a new key
              </button>
            </Form>
          </div>
        ) : (
          <div className="mt-2 space-y-4">
            <p className="text-sm text-ink-600">
              With a second factor, a stolen password is not enough: sign-in also asks for a code from an app on your phone.
            </p>
            <Form method="post">
              <input type="hidden" name="intent" value="enrol-start" />
              <button type="submit" className="btn-primary" disabled={busy}>
                Set up a second factor
              </button>
            </Form>
          </div>
        )}
      </section>
    </main>
  );
}

export function meta(_: Route.MetaArgs) {
  return [
    { title: "Account security — Diffractory" },
    { name: "description", content: "Change your password and set up the authenticator-app code that protects your Diffractory account." },
  ];
}
