// /checks/:id — one scan's lattice check for the order's client and its lab: the verdict and the acceptance window
// side by side, the plot, the phases and candidate forms, cells, figures, peaks, downloads.
import { useEffect, useMemo } from "react";
import { Link, useRevalidator } from "react-router";
import { Brand } from "~/components/brand";
import { CheckPlot } from "~/components/check-plot";
import { CandidatesTable, PhasesTable, ROW_HEADER, WindowPanel } from "~/components/check-phases";
import { checkPlotData, phaseName, phasesOf, wholePatternDetails, wholePatternWords } from "~/components/check-words";
import { CheckStateBadge, CheckStatusBadge, useCheckStatus } from "~/components/check-status";
import { PageHeader, TableCard } from "~/components/ui";
import { checkStatusJson } from "~/domain/lattice-check";
import { sampleOfFile } from "~/models/checks/queries.server";
import { requireCheckAccess } from "~/utils/permissions.server";
import { requestTitleOf } from "~/models/requests/requests.server";
import { cellRows, radiationWords, readStoredResult, type StoredCheckResult, VERDICT_WORDS } from "~/domain/check-result";
import { CheckCorrections, CheckPeaksTable } from "~/components/check-peaks-table";
import type { Verdict } from "~/diffraction/verdict";
import type { Route } from "./+types/check";
import { useFormat } from "~/components/locale";
import { MeasurementPanel, type MeasurementInfo } from "~/components/measurement-conditions";
import type { ScanInfo } from "~/domain/measurement";

export async function loader({ request, params, context }: Route.LoaderArgs) {
  const { check, file, order, side, organisation } = await requireCheckAccess(request, params.id, { what: "check page", clientAddress: context.clientAddress });
  const [sample, title] = await Promise.all([sampleOfFile(file.sampleId), requestTitleOf(order.requestId).then((t) => t ?? "Order")]);
  // Results of every stored version read in the current shape (older rows lack the newer, optional fields).
  const result = check.status === "done" && check.result ? readStoredResult(check.result) : null;
  return {
    status: checkStatusJson(check),
    side,
    organisationName: organisation.name,
    orderId: order.id,
    orderTitle: title,
    file: { name: file.name, version: file.version, sha256: file.sha256, storedAt: file.storedAt },
    sample: sample ? { label: sample.label, formula: sample.formula, expectedPhase: sample.expectedPhase } : null,
    // What the file states, kept with the file (so also for a check that failed after reading it); results of
    // older checks have none, and files read before the file kept it fall back to the result's copy.
    measurement: measurementOf(file.scanInfo, result),
    radiationMismatch: result?.radiationMismatch ?? null,
    result,
  };
}

function measurementOf(info: ScanInfo | null, result: StoredCheckResult | null): MeasurementInfo | null {
  if (info) return info;
  if (!result?.metadata && !result?.scanFormatLabel) return null;
  const angles = result.profile.twoTheta;
  return {
    formatLabel: result.scanFormatLabel ?? null,
    metadata: result.metadata ?? {},
    points: result.profile.points,
    twoThetaMin: angles[0] ?? null,
    twoThetaMax: angles[angles.length - 1] ?? null,
  };
}

export function meta({ data }: Route.MetaArgs) {
  return [{ title: data ? `Lattice check · ${data.file.name} — Diffractory` : "Lattice check — Diffractory" }];
}

export default function CheckScreen({ loaderData: d }: Route.ComponentProps) {
  const back = d.side === "client" ? `/client/data-room/${d.orderId}` : d.side === "admin" ? `/admin/disputes/${d.orderId}` : `/lab/orders/${d.orderId}/files`;
  return (
    <div className="min-h-screen">
      <header className="flex flex-wrap items-center justify-between gap-3 border-b border-ink-200 bg-white px-4 py-3 sm:px-6">
        <Brand />
        <p className="text-sm text-ink-600">
          {d.organisationName} ·{" "}
          <Link to={back} className="font-medium text-beam-700 hover:underline">
            ← Back to the order&apos;s files
          </Link>
        </p>
      </header>
      <main className="mx-auto max-w-6xl space-y-6 px-4 py-6 sm:px-6">
        <PageHeader
          title={`Lattice check of ${d.file.name}`}
          subtitle={
            <>
              Version {d.file.version} ·{" "}
              {d.sample
                ? `sample ${d.sample.label} (${d.sample.formula}${d.sample.expectedPhase ? `, declared ${d.sample.expectedPhase}` : ""})`
                : "no sample linked"}{" "}
              · {d.orderTitle}
            </>
          }
          actions={
            d.result ? (
              <div className="flex flex-wrap gap-2">
                <a className="btn-secondary" href={`/checks/${d.status.id}/peaks.csv`} download>
                  Download peaks (CSV)
                </a>
                <a className="btn-secondary" href={`/checks/${d.status.id}/result.json`} download>
                  Download result (JSON)
                </a>
              </div>
            ) : null
          }
        />
        {d.result ? <CheckResultView result={d.result} /> : <PendingCheck status={d.status} />}
        {d.measurement ? <MeasurementPanel info={d.measurement} mismatch={d.radiationMismatch} /> : null}
      </main>
    </div>
  );
}

/** A check still queued or running (the page loads its result when it is done), or one that failed. */
function PendingCheck({ status }: { status: Route.ComponentProps["loaderData"]["status"] }) {
  const { data } = useCheckStatus(status.id, status);
  const revalidator = useRevalidator();
  const finished = data?.status === "done";
  // biome-ignore lint/correctness/useExhaustiveDependencies: reload the page data once, when the check finishes
  useEffect(() => {
    if (finished && revalidator.state === "idle") revalidator.revalidate();
  }, [finished]);
  return (
    <section className="card space-y-3" aria-labelledby="pending-heading">
      <h2 id="pending-heading" className="text-lg font-semibold">
        Status
      </h2>
      <CheckStatusBadge checkId={status.id} initial={status} link={false} />
      {data?.status === "failed" ? (
        <p className="text-sm text-ink-700">The lab can upload a corrected file as a new version; it is checked again automatically.</p>
      ) : (
        <p className="text-sm text-ink-600">This page shows the result as soon as the check has finished.</p>
      )}
    </section>
  );
}

function CheckResultView({ result }: { result: StoredCheckResult }) {
  const fmt = useFormat();
  const verdict = VERDICT_WORDS[result.verdict as Verdict];
  const plotData = useMemo(() => checkPlotData(result), [result]);
  const phases = phasesOf(result);
  const wholePattern = result.wholePattern;
  const fom = result.figuresOfMerit;
  const indexed = result.peaks.filter((p) => p.hkl).length;
  const notSample = result.peaks.filter((p) => p.foreign).length;
  const sizes = result.peaks.map((p) => p.crystalliteSizeNm).filter((s): s is number => typeof s === "number" && s > 0);
  const meanSize = sizes.length ? sizes.reduce((a, b) => a + b, 0) / sizes.length : null;
  return (
    <>
      <div className="grid gap-6 lg:grid-cols-2">
        <section className="card min-w-0 space-y-3" aria-labelledby="verdict-heading">
          <div className="flex flex-wrap items-center gap-3">
            <h2 id="verdict-heading" className="text-lg font-semibold">
              Verdict
            </h2>
            <span data-testid="verdict">
              <CheckStateBadge status="done" verdict={result.verdict} />
            </span>
          </div>
          <p className="text-ink-800">{verdict?.meaning}</p>
          {result.reasons.length ? (
            <ul className="list-disc space-y-1 pl-5 text-sm text-ink-700">
              {result.reasons.map((r) => (
                <li key={r}>{r}</li>
              ))}
            </ul>
          ) : null}
          <p className="text-xs text-ink-600">
            {radiationWords(result.radiation)} · λ = {result.wavelength.toFixed(6)} Å
            {result.radiationSource === "file" ? " (as the file states)" : result.radiationSource === "assumed" ? " (assumed)" : ""}
            {result.declaredFrom.instrumentName ? ` · measured on ${result.declaredFrom.instrumentName}` : ""} · checked in{" "}
            {(result.elapsedMs / 1000).toFixed(2)} s
          </p>
        </section>
        <WindowPanel result={result} />
      </div>

      <section className="card space-y-3" aria-labelledby="plot-heading">
        <h2 id="plot-heading" className="text-lg font-semibold">
          Pattern
        </h2>
        <CheckPlot
          data={plotData}
          label={`Observed scan on top of the ${plotData.calculated ? "whole-pattern fit" : "sum of freely fitted peaks"}, the background, a tick row per phase and the difference curve`}
        />
        {result.profile.thinned ? (
          <p className="text-xs text-ink-600">
            The scan has {fmt.number(result.profile.points)} points; the plot shows {fmt.number(result.profile.twoTheta.length)} of them, keeping each
            stretch&apos;s lowest and highest count so no peak top is lost. The original file in the data room has every point.
          </p>
        ) : null}
      </section>

      <PhasesTable result={result} />
      {result.candidates?.length ? <CandidatesTable candidates={result.candidates} /> : null}

      <div className="grid gap-6 lg:grid-cols-2">
        <section className="min-w-0 space-y-2" aria-labelledby="cell-heading">
          <h2 id="cell-heading" className="text-lg font-semibold">
            Unit cell{result.system ? ` · ${result.system}${result.centering ? ` ${result.centering}` : ""}` : ""}
          </h2>
          <TableCard columns={["", "Declared", "Refined ± s.u.", "Deviation"]} caption="Declared and refined cell">
            {cellRows(result).map((row) => (
              <tr key={row.name}>
                <th scope="row" className={ROW_HEADER}>
                  {row.name}
                </th>
                <td className="tabular-nums">{row.declared}</td>
                <td className="tabular-nums">{row.refined}</td>
                <td className="tabular-nums">{row.deviation}</td>
              </tr>
            ))}
          </TableCard>
          <CheckCorrections result={result} />
        </section>
        <section className="min-w-0 space-y-2" aria-labelledby="merit-heading">
          <h2 id="merit-heading" className="text-lg font-semibold">
            Figures of merit
          </h2>
          <dl className="card grid grid-cols-[auto_1fr] gap-x-6 gap-y-2 text-sm">
            <dt className="font-medium">M20 (de Wolff)</dt>
            <dd className="tabular-nums" data-testid="m20">
              {fom.M20 != null ? `${fom.M20.toFixed(1)}${fom.M20Lines !== 20 ? ` (over ${fom.M20Lines} lines)` : ""}` : "not available"}
            </dd>
            <dt className="font-medium">F_N (Smith–Snyder)</dt>
            <dd className="tabular-nums">
              {fom.FN != null
                ? `F${fom.FNLines} = ${fom.FN.toFixed(1)}${fom.FNMeanDelta != null ? ` (⟨|Δ2θ|⟩ ${fom.FNMeanDelta.toFixed(4)}°, ${fom.FNPossible ?? "—"} possible lines)` : ""}`
                : "not available"}
            </dd>
            <dt className="font-medium">Whole-pattern fit</dt>
            <dd className="tabular-nums" data-testid="whole-pattern">
              {wholePatternWords(result)}
              {wholePattern ? <span className="block text-xs text-ink-600">{wholePatternDetails(wholePattern)}</span> : null}
            </dd>
            <dt className="font-medium">Peaks</dt>
            <dd>
              {result.peaks.length} found, {indexed} indexed, {result.peaks.length - indexed - notSample} unindexed
              {notSample ? `, ${notSample} not the sample's (Kβ, tungsten L or holder lines)` : ""}
            </dd>
            <dt className="font-medium">Crystallite size</dt>
            <dd>{meanSize != null ? `≈ ${meanSize.toFixed(0)} nm (Scherrer, mean over ${sizes.length} peaks; see the caution below)` : "not available"}</dd>
          </dl>
        </section>
      </div>

      <section className="space-y-2" aria-labelledby="peaks-heading">
        <h2 id="peaks-heading" className="text-lg font-semibold">
          Peaks
        </h2>
        <CheckPeaksTable peaks={result.peaks} phases={phases.map(phaseName)} />
      </section>

      {result.warnings.length ? (
        <section className="rounded-lg border border-caution-600/30 bg-caution-50 p-4 text-sm text-caution-700" aria-labelledby="warnings-heading">
          <h2 id="warnings-heading" className="font-semibold">
            <span aria-hidden="true">! </span>Warnings
          </h2>
          <ul className="mt-1 list-disc space-y-1 pl-5">
            {result.warnings.map((w) => (
              <li key={w}>{w}</li>
            ))}
          </ul>
        </section>
      ) : null}
    </>
  );
}
