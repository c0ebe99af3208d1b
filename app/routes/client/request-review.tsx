// New request, step 5 (review): everything at a glance, what still blocks publishing, and "Publish request".
import { Formula } from "~/components/symbols";
import { data, Form, Link, redirect, useNavigation } from "react-router";
import { HazardDeclaration, SampleFacts, WizardSteps } from "~/components/request-parts";
import { FormError, PageHeader, SafetyNotice } from "~/components/ui";
import { anyHazardDeclared } from "~/components/order-samples";
import { labelOf } from "~/domain/matching";
import { invitedLabIds, noLabCanMeasure, notEditable, publishProblems, publishRequest, samplesOf } from "~/models/requests/requests.server";
import { requireOwnDraft } from "~/utils/permissions.server";
import { redirectIfPublished } from "~/routes/client/request-wizard.server";
import { redirectWithToast } from "~/utils/toast.server";
import type { Route } from "./+types/request-review";
import { useFormat } from "~/components/locale";

export async function loader({ request, params }: Route.LoaderArgs) {
  const { row } = await requireOwnDraft(request, params.id);
  redirectIfPublished(row);
  // An open request's changes are saved step by step; there is nothing to publish again.
  if (row.state !== "draft") throw redirect(`/client/requests/${row.id}`);
  const [samples, invited] = await Promise.all([samplesOf(row.id), invitedLabIds(row.id)]);
  const problems = publishProblems(row, samples);
  // The clear stop when no lab can measure the request is shown before the client presses "Publish".
  const noMatch = problems.length ? null : await noLabCanMeasure(row);
  return { request: row, samples, invitedCount: invited.length, problems: noMatch ? [noMatch] : problems };
}

export async function action({ request, params }: Route.ActionArgs) {
  const { row, actor } = await requireOwnDraft(request, params.id);
  const locked = notEditable(row) ?? (row.state === "draft" ? null : "This request has already been published.");
  if (locked) return data({ errors: [locked] }, { status: 400 });
  const { problems } = await publishRequest(row, actor.user.id);
  if (problems.length) return data({ errors: problems }, { status: 400 });
  return redirectWithToast(`/client/requests/${row.id}`, {
    kind: "success",
    message: `“${row.title}” is open; ${row.visibility === "invited" ? "the invited labs" : "the labs that can measure it"} can now quote.`,
  });
}

export default function RequestReview({ loaderData, actionData }: Route.ComponentProps) {
  const fmt = useFormat();
  const { request: r, samples, invitedCount, problems } = loaderData;
  const navigation = useNavigation();
  const edit = (step: string) => `/client/requests/${r.id}/edit/${step}`;
  const range = r.rangeMin === null ? "—" : `${r.rangeMin}–${r.rangeMax} ${r.rangeKind === "d_spacing" ? "Å (d-spacing)" : "° 2θ"}`;
  return (
    <div>
      <PageHeader title="Review and publish" subtitle={<Formula>{r.title}</Formula>} />
      <WizardSteps requestId={r.id} current="review" reached={r.draftStep} />
      {anyHazardDeclared(samples) ? <SafetyNotice className="mb-6" /> : null}
      <div className="grid gap-4 lg:grid-cols-2">
        {samples.map((s) => (
          <section key={s.id} className="card space-y-3" aria-label={`Sample ${s.label}`}>
            <div className="flex items-center justify-between">
              <h2 className="text-lg font-semibold">{s.label}</h2>
              <span className="flex gap-3 text-sm">
                <Link to={edit("samples")} className="text-beam-700 underline">
                  Edit samples
                </Link>
                <Link to={edit("hazards")} className="text-beam-700 underline">
                  Edit hazards
                </Link>
              </span>
            </div>
            <SampleFacts sample={s} />
            <h3 className="text-sm font-semibold text-ink-700">Hazard declaration</h3>
            <HazardDeclaration hazards={s} />
          </section>
        ))}
      </div>
      <section className="card mt-4 text-sm" aria-label="Measurement">
        <div className="flex items-center justify-between">
          <h2 className="text-lg font-semibold">Measurement</h2>
          <Link to={edit("measurement")} className="text-beam-700 underline">
            Edit measurement
          </Link>
        </div>
        <dl className="mt-2 grid grid-cols-[auto_1fr] gap-x-4 gap-y-1">
          <dt className="text-ink-500">Technique</dt>
          <dd>{labelOf(r.technique)}</dd>
          <dt className="text-ink-500">Range</dt>
          <dd>{range}</dd>
          <dt className="text-ink-500">Source</dt>
          <dd>{r.preferredSource === "any" ? "any" : `${r.preferredSource} Kα`}</dd>
          <dt className="text-ink-500">Temperatures</dt>
          <dd>{r.temperaturePointsK.length ? `${r.temperaturePointsK.join(", ")} K` : "room temperature"}</dd>
          <dt className="text-ink-500">Atmosphere, quality</dt>
          <dd>
            {r.atmosphere}, {r.quality.replace(/_/g, " ")}
          </dd>
          <dt className="text-ink-500">Deadline</dt>
          <dd>{r.deadline ?? "—"}</dd>
          <dt className="text-ink-500">Budget</dt>
          <dd>{r.budgetMinor === null ? "not stated" : fmt.money(r.budgetMinor, r.currency)}</dd>
          <dt className="text-ink-500">Who may quote</dt>
          <dd>{r.visibility === "open" ? "every matching lab" : `${invitedCount} invited lab${invitedCount === 1 ? "" : "s"}`}</dd>
        </dl>
      </section>
      {problems.length ? (
        <ul className="mt-4 list-disc space-y-1 pl-6 text-sm text-caution-700" aria-label="Before publishing">
          {problems.map((p) => (
            <li key={p}>{p}</li>
          ))}
        </ul>
      ) : null}
      <Form method="post" className="mt-4 flex items-center justify-end gap-4">
        <FormError errors={actionData?.errors} />
        <button type="submit" className="btn-primary" disabled={navigation.state !== "idle"}>
          Publish request
        </button>
      </Form>
    </div>
  );
}

export function meta(_: Route.MetaArgs) {
  return [
    { title: "Review request — Diffractory" },
    { name: "description", content: "New request, step 5: everything at a glance, what still blocks publishing, and publishing the request." },
  ];
}
