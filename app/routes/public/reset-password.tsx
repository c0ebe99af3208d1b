// /reset-password/:token — the page a reset e-mail links to: choose a new password. The link works once,
// for an hour; using it signs the account out everywhere. A used, expired or unknown link changes nothing.
import { getFormProps, useForm } from "@conform-to/react";
import { parseWithZod } from "@conform-to/zod/v4";
import { data, Form, Link, useNavigation } from "react-router";
import { AuthCard } from "~/components/auth-card";
import { NewPasswordFields } from "~/components/new-password-fields";
import { FormError } from "~/components/ui";
import { newPasswordPair } from "~/domain/password-rules";
import { resetPassword, resolveResetToken, RESET_PROBLEMS } from "~/models/accounts/password-reset.server";
import { readForm } from "~/utils/form.server";
import { sessionCookie } from "~/utils/session.server";
import { redirectWithToast } from "~/utils/toast.server";
import type { Route } from "./+types/reset-password";

const ResetSchema = newPasswordPair({});

const problemStatus = (status: keyof typeof RESET_PROBLEMS) => (status === "unknown" ? 404 : 410);

// Token-authorised: the link itself is the permission; nothing here depends on being signed in.
export async function loader({ params }: Route.LoaderArgs) {
  const found = await resolveResetToken(params.token);
  if (found.status !== "valid")
    return data({ problem: RESET_PROBLEMS[found.status], email: null }, { status: problemStatus(found.status), headers: { "Referrer-Policy": "no-referrer" } });
  return data({ problem: null, email: found.email }, { headers: { "Referrer-Policy": "no-referrer" } });
}

export async function action({ request, params, context }: Route.ActionArgs) {
  const found = await resolveResetToken(params.token);
  if (found.status !== "valid") return data({ result: null, problem: RESET_PROBLEMS[found.status] }, { status: problemStatus(found.status) });
  const submission = parseWithZod(await readForm(request), { schema: ResetSchema });
  if (submission.status !== "success") return data({ result: submission.reply({ hideFields: ["password", "confirm"] }), problem: null }, { status: 400 });
  const result = await resetPassword({ token: params.token, password: submission.value.password, clientAddress: context.clientAddress });
  if (!result.ok)
    return data(
      { result: submission.reply({ hideFields: ["password", "confirm"] }), problem: RESET_PROBLEMS[result.status] },
      { status: problemStatus(result.status) },
    );
  return redirectWithToast(
    "/sign-in",
    { kind: "success", message: "Your password is changed and every device was signed out. Sign in with the new password." },
    { headers: [["Set-Cookie", await sessionCookie.serialize("", { maxAge: 0 })]] },
  );
}

export default function ResetPassword({ loaderData: page, actionData }: Route.ComponentProps) {
  const busy = useNavigation().state !== "idle";
  const [form, fields] = useForm({
    lastResult: actionData?.result,
    onValidate: ({ formData }) => parseWithZod(formData, { schema: ResetSchema }),
    shouldValidate: "onSubmit",
    shouldRevalidate: "onInput",
  });
  const problem = actionData?.problem ?? page.problem;
  return (
    <AuthCard title="Choose a new password">
      {problem ? (
        <div className="mt-4 space-y-4">
          <p role="alert" className="text-sm font-medium text-danger-700">
            {problem}
          </p>
          <Link to="/forgot-password" className="btn-primary">
            Ask for a new link
          </Link>
        </div>
      ) : (
        <>
          <p className="mt-1 text-sm text-ink-600">
            For <strong>{page.email}</strong>. Every device signed in to the account is signed out.
          </p>
          <Form method="post" className="mt-6 space-y-2" {...getFormProps(form)}>
            <NewPasswordFields password={fields.password} confirm={fields.confirm} />
            <FormError errors={form.errors} />
            <button type="submit" className="btn-primary w-full" disabled={busy}>
              {busy ? "Saving…" : "Set the new password"}
            </button>
          </Form>
        </>
      )}
    </AuthCard>
  );
}

export function meta(_: Route.MetaArgs) {
  return [{ title: "Choose a new password — Diffractory" }, { name: "description", content: "Choose a new password for your Diffractory account." }];
}
