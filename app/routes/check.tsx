// /checks/:id — one scan's lattice check for the order's client and its lab: verdict, plot, cells, peaks, downloads.
import { useEffect, useMemo } from "react";
import { Link, useRevalidator } from "react-router";
import { Brand } from "~/components/brand";
import { CheckPlot, type CheckPlotData } from "~/components/check-plot";
import { CheckStateBadge, CheckStatusBadge, useCheckStatus } from "~/components/check-status";
import { Badge, PageHeader, TableCard } from "~/components/ui";
import { checkStatusJson } from "~/domain/lattice-check";
import { sampleOfFile } from "~/models/checks/queries.server";
import { requireCheckAccess } from "~/utils/permissions.server";
import { requestTitleOf } from "~/models/requests/requests.server";
import { cellRows, formatHkl, radiationWords, signed, type StoredCheckResult, VERDICT_WORDS } from "~/domain/check-result";
import type { Verdict } from "~/diffraction/verdict";
import type { Route } from "./+types/check";
import { useFormat } from "~/components/locale";

export async function loader({ request, params }: Route.LoaderArgs) {
  const { check, file, order, side, organisation } = await requireCheckAccess(request, params.id);
  const [sample, title] = await Promise.all([sampleOfFile(file.sampleId), requestTitleOf(order.requestId).then((t) => t ?? "Order")]);
  return {
    status: checkStatusJson(check),
    side,
    organisationName: organisation.name,
    orderId: order.id,
    orderTitle: title,
    file: { name: file.name, version: file.version, sha256: file.sha256, storedAt: file.storedAt },
    sample: sample ? { label: sample.label, formula: sample.formula, expectedPhase: sample.expectedPhase } : null,
    result: check.status === "done" ? (check.result as unknown as StoredCheckResult) : null,
  };
}

export function meta({ data }: Route.MetaArgs) {
  return [{ title: data ? `Lattice check · ${data.file.name} — Diffractory` : "Lattice check — Diffractory" }];
}

export default function CheckScreen({ loaderData: d }: Route.ComponentProps) {
  const back = d.side === "client" ? `/client/data-room/${d.orderId}` : `/lab/orders/${d.orderId}/files`;
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
  const plotData: CheckPlotData = useMemo(
    () => ({
      twoTheta: result.profile.twoTheta,
      observed: result.profile.observed,
      background: result.profile.background,
      fitted: result.profile.fitted,
      ticks: result.reflections.map((t) => ({ twoTheta: t.twoTheta, label: `${t.h} ${t.k} ${t.l}` })),
    }),
    [result],
  );
  const fom = result.figuresOfMerit;
  const indexed = result.peaks.filter((p) => p.hkl).length;
  const sizes = result.peaks.map((p) => p.crystalliteSizeNm).filter((s): s is number => typeof s === "number" && s > 0);
  const meanSize = sizes.length ? sizes.reduce((a, b) => a + b, 0) / sizes.length : null;
  return (
    <>
      <section className="card space-y-3" aria-labelledby="verdict-heading">
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
          {result.declaredFrom.instrumentName ? ` · measured on ${result.declaredFrom.instrumentName}` : ""} · checked in {(result.elapsedMs / 1000).toFixed(2)}{" "}
          s
        </p>
      </section>

      <section className="card space-y-3" aria-labelledby="plot-heading">
        <h2 id="plot-heading" className="text-lg font-semibold">
          Pattern
        </h2>
        <CheckPlot data={plotData} label="Observed, background, fitted profile, reflection marks and difference curve" />
        {result.profile.thinned ? (
          <p className="text-xs text-ink-600">
            The scan has {fmt.number(result.profile.points)} points; the plot shows {fmt.number(result.profile.twoTheta.length)} of them, keeping each
            stretch&apos;s lowest and highest count so no peak top is lost. The original file in the data room has every point.
          </p>
        ) : null}
      </section>

      <div className="grid gap-6 lg:grid-cols-2">
        <section className="space-y-2" aria-labelledby="cell-heading">
          <h2 id="cell-heading" className="text-lg font-semibold">
            Unit cell{result.system ? ` · ${result.system}${result.centering ? ` ${result.centering}` : ""}` : ""}
          </h2>
          <TableCard columns={["", "Declared", "Refined ± s.u.", "Deviation"]} caption="Declared and refined cell">
            {cellRows(result).map((row) => (
              <tr key={row.name}>
                <th scope="row" className="font-medium">
                  {row.name}
                </th>
                <td className="tabular-nums">{row.declared}</td>
                <td className="tabular-nums">{row.refined}</td>
                <td className="tabular-nums">{row.deviation}</td>
              </tr>
            ))}
          </TableCard>
          <p className="text-sm text-ink-700">
            {result.correction === "displacement"
              ? `Specimen displacement ${signed(result.displacement, 4)} mm${result.displacementEsd != null ? ` ± ${result.displacementEsd.toFixed(4)}` : ""}`
              : `Zero shift ${signed(result.zeroShift, 4)}°${result.zeroShiftEsd != null ? ` ± ${result.zeroShiftEsd.toFixed(4)}°` : ""} 2θ`}
            {result.reducedChi2 != null ? ` · reduced χ² ${result.reducedChi2.toFixed(2)}` : ""} · {result.peaksUsed} peaks in the least squares
          </p>
        </section>
        <section className="space-y-2" aria-labelledby="merit-heading">
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
            <dt className="font-medium">Peaks</dt>
            <dd>
              {result.peaks.length} found, {indexed} indexed, {result.peaks.length - indexed} unindexed
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
        <TableCard
          columns={["#", "h k l", "d (Å)", "2θ observed (°)", "2θ calculated (°)", "Δ2θ (°)", "Intensity (%)", "FWHM (°)", "Size (nm)"]}
          caption="Fitted peaks with their Miller indices"
        >
          {result.peaks.map((p, i) => (
            <tr key={i} className={p.hkl ? "" : "bg-caution-50"}>
              <td className="tabular-nums">{i + 1}</td>
              <td className="tabular-nums whitespace-nowrap">
                {p.hkl ? formatHkl(p.hkl) : <Badge tone="caution">Unindexed</Badge>}
                {p.hkl && !p.usedInRefinement ? <span className="ml-1 text-xs text-ink-600">(not refined)</span> : null}
              </td>
              <td className="tabular-nums">{p.d.toFixed(5)}</td>
              <td className="tabular-nums">
                {p.twoTheta.toFixed(4)}
                {p.twoThetaEsd ? <span className="text-xs text-ink-500"> ± {p.twoThetaEsd.toFixed(4)}</span> : null}
              </td>
              <td className="tabular-nums">{p.twoThetaCalc != null ? p.twoThetaCalc.toFixed(4) : "—"}</td>
              <td className="tabular-nums">{p.delta != null ? signed(p.delta, 4) : "—"}</td>
              <td className="tabular-nums">{p.relativeIntensity.toFixed(1)}</td>
              <td className="tabular-nums">{p.fwhm.toFixed(4)}</td>
              <td className="tabular-nums">{p.crystalliteSizeNm != null ? p.crystalliteSizeNm.toFixed(0) : "—"}</td>
            </tr>
          ))}
        </TableCard>
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
