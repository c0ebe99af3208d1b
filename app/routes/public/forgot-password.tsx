// /forgot-password — asks for an e-mail address and sends a reset link; the answer is the same whether or not
// an account uses the address. Requests are limited per address and per e-mail.
import { getFormProps, getInputProps, useForm } from "@conform-to/react";
import { parseWithZod } from "@conform-to/zod/v4";
import { data, Form, useNavigation } from "react-router";
import { z } from "zod";
import { AuthCard } from "~/components/auth-card";
import { Field, FormError } from "~/components/ui";
import { requestPasswordReset, RESET_REQUESTED, RESET_TOO_MANY } from "~/models/accounts/password-reset.server";
import { readForm } from "~/utils/form.server";
import { requireAnonymous } from "~/utils/permissions.server";
import type { Route } from "./+types/forgot-password";

const ForgotSchema = z.object({
  email: z
    .email({ error: (i) => (i.input === undefined ? "Enter your e-mail address." : "Enter a valid e-mail address.") })
    .max(254, "An e-mail address has at most 254 characters."),
});

export async function loader({ request }: Route.LoaderArgs) {
  await requireAnonymous(request);
  return null;
}

export async function action({ request, context }: Route.ActionArgs) {
  await requireAnonymous(request);
  const submission = parseWithZod(await readForm(request), { schema: ForgotSchema });
  if (submission.status !== "success") return data({ result: submission.reply(), sent: false }, { status: 400 });
  const result = await requestPasswordReset({ email: submission.value.email, clientAddress: context.clientAddress });
  if (!result.ok) {
    return data(
      { result: submission.reply({ formErrors: [RESET_TOO_MANY] }), sent: false },
      { status: 429, headers: { "Retry-After": String(result.retryAfterSeconds) } },
    );
  }
  return { result: submission.reply({ resetForm: true }), sent: true, message: RESET_REQUESTED };
}

export default function ForgotPassword({ actionData }: Route.ComponentProps) {
  const busy = useNavigation().state !== "idle";
  const [form, fields] = useForm({
    lastResult: actionData?.result,
    onValidate: ({ formData }) => parseWithZod(formData, { schema: ForgotSchema }),
    shouldValidate: "onSubmit",
    shouldRevalidate: "onInput",
  });
  return (
    <AuthCard
      title="Forgot your password?"
      intro="Enter the e-mail address of your account. We send it a link to choose a new password."
      footer={{ question: "Remembered it?", to: "/sign-in", label: "Sign in" }}
    >
      {actionData && "message" in actionData ? (
        <p role="status" className="mt-4 rounded-md bg-beam-50 px-3 py-2 text-sm text-beam-700">
          {actionData.message}
        </p>
      ) : null}
      <Form method="post" className="mt-6 space-y-2" {...getFormProps(form)}>
        <Field label="E-mail" id={fields.email.id} errors={fields.email.errors}>
          <input className="input" autoComplete="email" {...getInputProps(fields.email, { type: "email" })} />
        </Field>
        <FormError errors={form.errors} />
        <button type="submit" className="btn-primary w-full" disabled={busy}>
          {busy ? "Sending…" : "Send the reset link"}
        </button>
      </Form>
    </AuthCard>
  );
}

export function meta(_: Route.MetaArgs) {
  return [
    { title: "Forgot password — Diffractory" },
    { name: "description", content: "Forgot your Diffractory password? Give your e-mail address and we send a link to choose a new one." },
  ];
}
