// The check screen's peaks table and the corrections refined with the cell: each fitted peak with its Miller
// indices and the declared phase that indexes it, or the line it is when it is not the sample's (Kβ, tungsten L,
// holder), and the zero shift, displacement, their correlation and the transparency.
import { useState } from "react";
import type { CheckedPeak } from "~/diffraction";
import { correctionRows, peakOriginWords, signed, type StoredCheckResult } from "~/domain/check-result";
import { phaseColour } from "./check-plot";
import { peakPhase } from "./check-words";
import { Formula, Hkl, HklHeading, TwoTheta } from "./symbols";
import { Badge } from "./ui";

/** Rows on one page of the peaks table; the CSV download always has every peak. */
export const PEAKS_PER_PAGE = 25;

/**
 * With the declared phases' names (main first), a column names the phase that indexes each peak. The table shows
 * PEAKS_PER_PAGE rows at a time with buttons to the previous and next page, or every peak when asked.
 */
export function CheckPeaksTable({ peaks, phases }: { peaks: readonly CheckedPeak[]; phases?: string[] }) {
  const [page, setPage] = useState(0);
  const [all, setAll] = useState(false);
  const pages = Math.max(1, Math.ceil(peaks.length / PEAKS_PER_PAGE));
  const first = all ? 0 : Math.min(page, pages - 1) * PEAKS_PER_PAGE;
  const shown = all ? peaks : peaks.slice(first, first + PEAKS_PER_PAGE);
  const th = "whitespace-nowrap";
  return (
    <div className="space-y-2">
      <div className="card overflow-x-auto p-0">
        <table className="table">
          <caption className="sr-only">Fitted peaks with their Miller indices, or the line that is not the sample&apos;s</caption>
          <thead>
            <tr>
              <th scope="col">#</th>
              <th scope="col">
                <HklHeading />
              </th>
              {phases ? <th scope="col">Phase</th> : null}
              <th scope="col" className={th}>
                <i className="symbol">d</i> (Å)
              </th>
              <th scope="col">
                <TwoTheta /> observed (°)
              </th>
              <th scope="col">
                <TwoTheta /> calculated (°)
              </th>
              <th scope="col" className={th}>
                Δ<TwoTheta /> (°)
              </th>
              <th scope="col">Intensity (%)</th>
              <th scope="col">FWHM (°)</th>
              <th scope="col">Size (nm)</th>
            </tr>
          </thead>
          <tbody>
            {shown.map((p, k) => {
              const i = first + k;
              const origin = peakOriginWords(p);
              const phase = phases ? peakPhase(p) : null;
              return (
                <tr key={i} className={p.hkl || origin ? "" : "bg-caution-50"} data-origin={p.origin ?? "sample"} data-phase={phase ?? undefined}>
                  <td className="tabular-nums">{i + 1}</td>
                  <td className="tabular-nums whitespace-nowrap">
                    {p.hkl ? <Hkl indices={p.hkl} /> : origin ? <Badge tone="neutral">{origin}</Badge> : <Badge tone="caution">Unindexed</Badge>}
                    {p.hkl && !p.usedInRefinement ? <span className="ml-1 text-xs text-ink-600">(not refined)</span> : null}
                  </td>
                  {phases ? (
                    <td className="whitespace-nowrap">
                      {origin ? (
                        <span className="text-ink-600">not the sample&apos;s</span>
                      ) : phase !== null && phases[phase] !== undefined ? (
                        <span className="inline-flex items-center gap-1.5">
                          <svg viewBox="0 0 8 12" className="h-3 w-2 shrink-0" aria-hidden="true" focusable="false">
                            <path d="M4 1v10" stroke={phaseColour(phase)} strokeWidth="2" />
                          </svg>
                          <Formula>{phases[phase]}</Formula>
                        </span>
                      ) : (
                        <span className="text-ink-600">none</span>
                      )}
                    </td>
                  ) : null}
                  <td className="tabular-nums">{p.d.toFixed(5)}</td>
                  <td className="tabular-nums">
                    {p.twoTheta.toFixed(4)}
                    {p.twoThetaEsd ? <span className="text-xs text-ink-500"> ± {p.twoThetaEsd.toFixed(4)}</span> : null}
                  </td>
                  <td className="tabular-nums">
                    {p.twoThetaCalc != null ? p.twoThetaCalc.toFixed(4) : p.foreign ? p.foreign.expectedTwoTheta.toFixed(4) : "—"}
                  </td>
                  <td className="tabular-nums">
                    {p.delta != null ? signed(p.delta, 4) : p.foreign ? signed(p.twoTheta - p.foreign.expectedTwoTheta, 4) : "—"}
                  </td>
                  <td className="tabular-nums">{p.relativeIntensity.toFixed(p.relativeIntensity < 1 ? 2 : 1)}</td>
                  <td className="tabular-nums">{p.fwhm.toFixed(4)}</td>
                  <td className="tabular-nums">{p.crystalliteSizeNm != null && !origin ? p.crystalliteSizeNm.toFixed(0) : "—"}</td>
                </tr>
              );
            })}
          </tbody>
        </table>
      </div>
      {peaks.length > PEAKS_PER_PAGE ? (
        <nav className="flex flex-wrap items-center gap-2 text-sm print:hidden" aria-label="Pages of the peaks table" data-testid="peaks-pager">
          <button type="button" className="btn-secondary px-3 py-1" onClick={() => setPage(Math.max(0, page - 1))} disabled={all || page === 0}>
            ← Previous
          </button>
          <p className="tabular-nums text-ink-700" role="status" data-testid="peaks-shown">
            {all ? `All ${peaks.length} peaks` : `Peaks ${first + 1}–${first + shown.length} of ${peaks.length} · page ${page + 1} of ${pages}`}
          </p>
          <button type="button" className="btn-secondary px-3 py-1" onClick={() => setPage(Math.min(pages - 1, page + 1))} disabled={all || page >= pages - 1}>
            Next →
          </button>
          <button type="button" className="btn-quiet py-1" aria-pressed={all} onClick={() => setAll(!all)}>
            {all ? `Show ${PEAKS_PER_PAGE} at a time` : `Show all ${peaks.length}`}
          </button>
        </nav>
      ) : null}
    </div>
  );
}

/** The corrections refined with the cell and the least-squares summary, below the cell table. */
export function CheckCorrections({ result }: { result: StoredCheckResult }) {
  const rows = correctionRows(result);
  return (
    <div className="space-y-1 text-sm text-ink-700" data-testid="corrections">
      <dl className="grid grid-cols-[auto_1fr] gap-x-4 gap-y-1">
        {rows.map((r) => (
          <div key={r.name} className="contents">
            <dt className="font-medium">{r.name}</dt>
            <dd className="tabular-nums">{r.value}</dd>
          </div>
        ))}
      </dl>
      <p>
        {result.reducedChi2 != null ? `Reduced χ² ${result.reducedChi2.toFixed(2)} · ` : ""}
        {result.peaksUsed} peaks in the least squares
      </p>
    </div>
  );
}
