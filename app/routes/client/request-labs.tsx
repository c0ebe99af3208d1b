// New request, step 4 (labs): which approved labs fit and why, and whether every matching lab or only invited ones may quote.
import { getFormProps, useForm } from "@conform-to/react";
import { parseWithZod } from "@conform-to/zod/v4";
import { data, Form, useNavigation } from "react-router";
import { MatchReasons } from "~/components/match-reasons";
import { WizardSteps } from "~/components/request-parts";
import { Badge, EmptyState, FieldErrors, FormError, PageHeader } from "~/components/ui";
import { matchLabsForRequest } from "~/models/labs/matching.server";
import { LabsStepSchema } from "~/domain/request-forms";
import { invitedLabIds, notEditable, saveVisibility } from "~/models/requests/requests.server";
import { requireOwnDraft } from "~/utils/permissions.server";
import { saveStep } from "~/models/requests/request-life.server";
import { redirectIfPublished, stepSaved } from "~/routes/client/request-wizard.server";
import { readForm } from "~/utils/form.server";
import type { Route } from "./+types/request-labs";
import { useFormat } from "~/components/locale";

export async function loader({ request, params }: Route.LoaderArgs) {
  const { row } = await requireOwnDraft(request, params.id);
  redirectIfPublished(row);
  const [matches, invited] = await Promise.all([matchLabsForRequest(row.id), invitedLabIds(row.id)]);
  return {
    requestId: row.id,
    reached: row.draftStep,
    published: row.state === "open",
    matches,
    defaults: { visibility: row.visibility, invitedLabIds: invited },
  };
}

export async function action({ request, params }: Route.ActionArgs) {
  const { row, actor } = await requireOwnDraft(request, params.id);
  const submission = parseWithZod(await readForm(request), { schema: LabsStepSchema });
  const locked = notEditable(row);
  if (locked) return data({ result: submission.reply({ formErrors: [locked] }) }, { status: 400 });
  if (submission.status !== "success") return data({ result: submission.reply() }, { status: 400 });
  const { result: saved, revision } = await saveStep(row, actor.user.id, () =>
    saveVisibility(row, submission.value.visibility, submission.value.invitedLabIds),
  );
  if (saved.fieldErrors) return data({ result: submission.reply({ fieldErrors: saved.fieldErrors }) }, { status: 400 });
  return stepSaved(row, revision, "review");
}

export default function RequestLabs({ loaderData, actionData }: Route.ComponentProps) {
  const fmt = useFormat();
  const { requestId, reached, published, matches, defaults } = loaderData;
  const navigation = useNavigation();
  const [form, fields] = useForm({
    lastResult: actionData?.result,
    defaultValue: defaults,
    onValidate: ({ formData }) => parseWithZod(formData, { schema: LabsStepSchema }),
    shouldValidate: "onSubmit",
    shouldRevalidate: "onInput",
  });
  const invitedOnly = (fields.visibility.value ?? defaults.visibility) === "invited";
  const invited = new Set(defaults.invitedLabIds);
  return (
    <div>
      <PageHeader title="Matching labs" subtitle="Every approved lab against your samples and needs, with the reasons." />
      <WizardSteps requestId={requestId} current="labs" reached={reached} />
      <Form method="post" {...getFormProps(form)} className="space-y-4">
        <fieldset className="card">
          <legend className="label">Who may quote</legend>
          <div className="grid gap-3 sm:grid-cols-2">
            {[
              { value: "open", title: "Every matching lab", body: "All approved labs that fit see the request in their inbox." },
              { value: "invited", title: "Invited labs only", body: "Only the labs you tick below see it." },
            ].map((o) => (
              <label
                key={o.value}
                className="flex cursor-pointer gap-3 rounded-lg border border-ink-300 p-3 has-[:checked]:border-beam-500 has-[:checked]:bg-beam-50"
              >
                <input type="radio" name={fields.visibility.name} value={o.value} defaultChecked={defaults.visibility === o.value} className="mt-1" />
                <span>
                  <span className="block text-sm font-semibold">{o.title}</span>
                  <span className="block text-xs text-ink-600">{o.body}</span>
                </span>
              </label>
            ))}
          </div>
          <FieldErrors id={`${fields.visibility.id}-error`} errors={fields.visibility.errors} />
        </fieldset>
        {matches.length === 0 ? (
          <EmptyState title="No approved labs yet">Labs appear here once they have been vetted and have published their instruments.</EmptyState>
        ) : (
          <ul className="space-y-3">
            {matches.map((m) => (
              <li key={m.labId} className="card">
                <div className="flex flex-wrap items-start justify-between gap-3">
                  <div>
                    <h2 className="text-lg font-semibold">{m.labName}</h2>
                    <p className="text-sm text-ink-600">
                      {m.instrumentName ?? "No instrument"}
                      {m.source ? ` · ${m.source}` : ""}
                      {m.estimatedPriceMinor !== null && m.currency ? ` · about ${fmt.money(m.estimatedPriceMinor, m.currency)}` : ""}
                      {m.turnaroundDays ? ` · ${m.turnaroundDays} days` : ""}
                    </p>
                  </div>
                  <div className="flex items-center gap-3">
                    {m.fits ? <Badge tone="ok">fits</Badge> : <Badge tone="danger">does not fit</Badge>}
                    {invitedOnly ? (
                      <label className="flex items-center gap-2 text-sm">
                        <input type="checkbox" name={fields.invitedLabIds.name} value={m.labId} defaultChecked={invited.has(m.labId)} />
                        Invite {m.labName}
                      </label>
                    ) : null}
                  </div>
                </div>
                <MatchReasons reasons={m.reasons} warnings={m.warnings} />
              </li>
            ))}
          </ul>
        )}
        <FieldErrors id={`${fields.invitedLabIds.id}-error`} errors={fields.invitedLabIds.errors} />
        <FormError errors={form.errors} />
        <div className="flex justify-end">
          <button type="submit" className="btn-primary" disabled={navigation.state !== "idle"}>
            {published ? "Save changes" : "Save and continue to review"}
          </button>
        </div>
      </Form>
    </div>
  );
}

export function meta(_: Route.MetaArgs) {
  return [
    { title: "Matching labs — Diffractory" },
    { name: "description", content: "New request, step 4: the approved labs whose instruments fit, and who may quote." },
  ];
}
