// /checks/:id — one scan's lattice check for the order's client and its lab. The first screen (1366 × 900) holds the
// summary: the verdict, the acceptance window's answer and the refined cell side by side, the key figures in one
// row, and the plot with its key; below it the phases and candidate forms, the figures in full, the peaks (folded
// and paged), warnings and the measurement conditions (docs/design-system.md, "The check page and plots").
import { type ReactNode, useEffect, useMemo } from "react";
import { Link, useRevalidator } from "react-router";
import { Brand } from "~/components/brand";
import { CheckPlot } from "~/components/check-plot";
import { CandidatesTable, PhasesTable, ROW_HEADER, WindowPanel } from "~/components/check-phases";
import { checkPlotData, phaseName, phasesOf, wholePatternDetails, wholePatternWords } from "~/components/check-words";
import { CheckStateBadge, CheckStatusBadge, useCheckStatus } from "~/components/check-status";
import { CellSymbol, Formula } from "~/components/symbols";
import { checkStatusJson } from "~/domain/lattice-check";
import { sampleOfFile } from "~/models/checks/queries.server";
import { requireCheckAccess } from "~/utils/permissions.server";
import { requestTitleOf } from "~/models/requests/requests.server";
import { cellRows, radiationWords, readStoredResult, type StoredCheckResult, VERDICT_WORDS } from "~/domain/check-result";
import { CheckCorrections, CheckPeaksTable, PEAKS_PER_PAGE } from "~/components/check-peaks-table";
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
  return [
    { title: data ? `Lattice check · ${data.file.name} — Diffractory` : "Lattice check — Diffractory" },
    {
      name: "description",
      content: "A scan's lattice check: the verdict against the acceptance window, the plot, phases, refined cells, figures of merit and peaks.",
    },
  ];
}

export default function CheckScreen({ loaderData: d }: Route.ComponentProps) {
  const back = d.side === "client" ? `/client/data-room/${d.orderId}` : d.side === "admin" ? `/admin/disputes/${d.orderId}` : `/lab/orders/${d.orderId}/files`;
  return (
    <div className="min-h-screen print:bg-white print:text-black">
      <header className="flex flex-wrap items-center justify-between gap-x-3 gap-y-1 border-b border-ink-200 bg-white px-4 py-2 sm:px-6 print:border-ink-400">
        <Brand />
        <p className="text-sm text-ink-600">
          {d.organisationName}
          <span className="print:hidden">
            {" "}
            ·{" "}
            <Link to={back} className="font-medium text-beam-700 hover:underline">
              ← Back to the order&apos;s files
            </Link>
          </span>
        </p>
      </header>
      <main className="mx-auto max-w-7xl space-y-3 px-4 py-3 sm:px-6 print:max-w-none print:px-0">
        <div className="flex flex-wrap items-end justify-between gap-x-4 gap-y-2">
          <div className="min-w-0">
            <h1 className="text-xl font-semibold break-words text-ink-900">Lattice check of {d.file.name}</h1>
            <p className="text-xs text-ink-600">
              Version {d.file.version} ·{" "}
              {d.sample ? (
                <>
                  sample {d.sample.label} (<Formula>{d.sample.formula}</Formula>
                  {d.sample.expectedPhase ? (
                    <>
                      , declared <Formula>{d.sample.expectedPhase}</Formula>
                    </>
                  ) : null}
                  )
                </>
              ) : (
                "no sample linked"
              )}{" "}
              · {d.orderTitle}
            </p>
          </div>
          {d.result ? (
            <div className="flex flex-wrap gap-2 print:hidden">
              <a className="btn-secondary px-3 py-1.5 text-xs" href={`/checks/${d.status.id}/peaks.csv`} download>
                Download peaks (CSV)
              </a>
              <a className="btn-secondary px-3 py-1.5 text-xs" href={`/checks/${d.status.id}/result.json`} download>
                Download result (JSON)
              </a>
            </div>
          ) : null}
        </div>
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
  const unindexed = result.peaks.length - indexed - notSample;
  const sizes = result.peaks.map((p) => p.crystalliteSizeNm).filter((s): s is number => typeof s === "number" && s > 0);
  const meanSize = sizes.length ? sizes.reduce((a, b) => a + b, 0) / sizes.length : null;
  const hasWindow = (result.window?.parameters?.length ?? 0) > 0;
  const system = result.system ? ` · ${result.system}${result.centering ? ` ${result.centering}` : ""}` : "";
  return (
    <>
      {/* The summary: verdict, window and cell in a row of panels, the key figures, the plot — one screen at a desk. */}
      <div className={`grid gap-3 ${hasWindow ? "lg:grid-cols-3" : "lg:grid-cols-[1.15fr_0.75fr_1.3fr]"}`}>
        <section className="card min-w-0 space-y-2 p-3 sm:p-4 print:shadow-none" aria-labelledby="verdict-heading">
          <div className="flex flex-wrap items-center gap-2">
            <h2 id="verdict-heading" className="text-base font-semibold">
              Verdict
            </h2>
            <span data-testid="verdict">
              <CheckStateBadge status="done" verdict={result.verdict} />
            </span>
          </div>
          <p className="text-sm text-ink-800">{verdict?.meaning}</p>
          {result.reasons.length ? (
            <ul className="list-disc space-y-0.5 pl-4 text-xs text-ink-700">
              {result.reasons.map((r) => (
                <li key={r}>{r}</li>
              ))}
            </ul>
          ) : null}
          <p className="text-2xs text-ink-600">
            {radiationWords(result.radiation)} · λ = {result.wavelength.toFixed(6)} Å
            {result.radiationSource === "file" ? " (as the file states)" : result.radiationSource === "assumed" ? " (assumed)" : ""}
            {result.declaredFrom.instrumentName ? ` · measured on ${result.declaredFrom.instrumentName}` : ""} · checked in{" "}
            {(result.elapsedMs / 1000).toFixed(2)} s
          </p>
          {result.warnings.length ? (
            <p className="text-xs font-medium text-caution-700">
              <a href="#warnings-heading" className="underline underline-offset-2">
                {result.warnings.length === 1 ? "1 warning" : `${result.warnings.length} warnings`} below
              </a>
            </p>
          ) : null}
        </section>
        <WindowPanel result={result} />
        <section className="card min-w-0 space-y-2 p-3 sm:p-4 print:shadow-none" aria-labelledby="cell-heading">
          <h2 id="cell-heading" className="text-base font-semibold">
            Refined cell{system}
          </h2>
          {/* Focusable when it scrolls sideways (a narrow panel), so a keyboard can scroll it too. */}
          <div className="overflow-x-auto" {...{ tabIndex: 0, role: "region", "aria-label": "Refined cell table" }}>
            <table className="table text-xs [&_td]:px-2 [&_td]:py-1 [&_th]:px-2 [&_th]:py-1">
              <caption className="sr-only">Declared and refined cell</caption>
              <thead>
                <tr>
                  <th scope="col">
                    <span className="sr-only">Parameter</span>
                  </th>
                  <th scope="col" className="hidden sm:table-cell">
                    Declared
                  </th>
                  <th scope="col">Refined ± s.u.</th>
                  <th scope="col">Deviation</th>
                </tr>
              </thead>
              <tbody>
                {cellRows(result).map((row) => (
                  <tr key={row.name} data-testid="cell-row">
                    <th scope="row" className={ROW_HEADER}>
                      <CellSymbol name={row.name} />
                    </th>
                    <td className="hidden tabular-nums whitespace-nowrap sm:table-cell">{row.declared}</td>
                    <td className={`tabular-nums whitespace-nowrap ${row.refined.startsWith("fixed") ? "text-ink-600" : "font-medium"}`}>
                      {row.refined}
                      {/* On a phone the declared value stands under the refined one instead of in a column of its own. */}
                      <span className="block font-normal text-ink-600 sm:hidden">declared {row.declared}</span>
                    </td>
                    <td className="tabular-nums sm:whitespace-nowrap">{row.deviation}</td>
                  </tr>
                ))}
              </tbody>
            </table>
          </div>
        </section>
      </div>

      <dl
        className="grid grid-cols-2 gap-x-3 gap-y-2 rounded-card border border-ink-200 bg-white px-4 py-2 text-xs sm:grid-cols-3 lg:grid-cols-5"
        aria-label="Key figures"
      >
        <Figure term="M20 (de Wolff)">
          <span data-testid="m20">
            {fom.M20 != null ? `${fom.M20.toFixed(1)}${fom.M20Lines !== 20 ? ` (over ${fom.M20Lines} lines)` : ""}` : "not available"}
          </span>
        </Figure>
        <Figure term="F_N (Smith–Snyder)">{fom.FN != null ? `F${fom.FNLines} = ${fom.FN.toFixed(1)}` : "not available"}</Figure>
        <Figure term="Whole-pattern fit">
          <span data-testid="whole-pattern">{wholePatternWords(result)}</span>
        </Figure>
        <Figure term="Peaks">
          <span data-testid="peaks-summary">
            {indexed} of {result.peaks.length} indexed
            {unindexed ? ` · ${unindexed} unindexed` : ""}
            {notSample ? ` · ${notSample} not the sample's` : ""}
          </span>
        </Figure>
        <Figure term="Crystallite size">{meanSize != null ? `≈ ${meanSize.toFixed(0)} nm (Scherrer)` : "not available"}</Figure>
      </dl>

      <section className="card space-y-2 p-3 sm:p-4 print:shadow-none" aria-labelledby="plot-heading">
        <h2 id="plot-heading" className="sr-only">
          Pattern
        </h2>
        <CheckPlot
          data={plotData}
          height={290}
          keyBeside
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

      <details className="card p-4 print:hidden" data-testid="figures-details">
        <summary className="cursor-pointer text-base font-semibold">
          <h2 id="merit-heading" className="inline">
            Figures and corrections in full
          </h2>
        </summary>
        <div className="mt-3 grid gap-6 lg:grid-cols-2">
          <dl className="grid grid-cols-[auto_1fr] gap-x-6 gap-y-2 text-sm">
            <dt className="font-medium">M20 (de Wolff)</dt>
            <dd className="tabular-nums">
              {fom.M20 != null ? `${fom.M20.toFixed(1)}${fom.M20Lines !== 20 ? ` (over ${fom.M20Lines} lines)` : ""}` : "not available"}
            </dd>
            <dt className="font-medium">F_N (Smith–Snyder)</dt>
            <dd className="tabular-nums">
              {fom.FN != null
                ? `F${fom.FNLines} = ${fom.FN.toFixed(1)}${fom.FNMeanDelta != null ? ` (⟨|Δ2θ|⟩ ${fom.FNMeanDelta.toFixed(4)}°, ${fom.FNPossible ?? "—"} possible lines)` : ""}`
                : "not available"}
            </dd>
            <dt className="font-medium">Whole-pattern fit</dt>
            <dd className="tabular-nums">
              {wholePatternWords(result)}
              {wholePattern ? <span className="block text-xs text-ink-600">{wholePatternDetails(wholePattern)}</span> : null}
            </dd>
            <dt className="font-medium">Peaks</dt>
            <dd>
              {result.peaks.length} found, {indexed} indexed, {unindexed} unindexed
              {notSample ? `, ${notSample} not the sample's (Kβ, tungsten L or holder lines)` : ""}
            </dd>
            <dt className="font-medium">Crystallite size</dt>
            <dd>{meanSize != null ? `≈ ${meanSize.toFixed(0)} nm (Scherrer, mean over ${sizes.length} peaks; see the warnings)` : "not available"}</dd>
          </dl>
          <div className="space-y-1">
            <h3 className="text-sm font-semibold">Corrections refined with the cell</h3>
            <CheckCorrections result={result} />
          </div>
        </div>
      </details>

      <details className="card p-4 print:hidden" data-testid="peaks-details">
        <summary className="cursor-pointer">
          <h2 id="peaks-heading" className="inline text-base font-semibold">
            Peaks
          </h2>{" "}
          <span className="text-sm text-ink-600">
            · {result.peaks.length} fitted, {indexed} indexed — shown {PEAKS_PER_PAGE} at a time; the CSV download has every peak
          </span>
        </summary>
        <div className="mt-3">
          <CheckPeaksTable peaks={result.peaks} phases={phases.map(phaseName)} />
        </div>
      </details>

      {result.warnings.length ? (
        <section className="rounded-card border border-caution-600/30 bg-caution-50 p-4 text-sm text-caution-700" aria-labelledby="warnings-heading">
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

/** One of the key figures: its name over its value. */
function Figure({ term, children }: { term: string; children: ReactNode }) {
  return (
    <div className="min-w-0">
      <dt className="text-ink-600">{term}</dt>
      <dd className="font-medium tabular-nums text-ink-900">{children}</dd>
    </div>
  );
}
