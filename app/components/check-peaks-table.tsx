// The check screen's peaks table and the corrections refined with the cell: each fitted peak with its Miller
// indices and the declared phase that indexes it, or the line it is when it is not the sample's (Kβ, tungsten L,
// holder), and the zero shift, displacement, their correlation and the transparency.
import type { CheckedPeak } from "~/diffraction";
import { correctionRows, formatHkl, peakOriginWords, signed, type StoredCheckResult } from "~/domain/check-result";
import { phaseColour } from "./check-plot";
import { peakPhase } from "./check-words";
import { Badge, TableCard } from "./ui";

const COLUMNS = ["#", "h k l", "d (Å)", "2θ observed (°)", "2θ calculated (°)", "Δ2θ (°)", "Intensity (%)", "FWHM (°)", "Size (nm)"];

/** With the declared phases' names (main first), a column names the phase that indexes each peak. */
export function CheckPeaksTable({ peaks, phases }: { peaks: readonly CheckedPeak[]; phases?: string[] }) {
  const columns = phases ? [...COLUMNS.slice(0, 2), "Phase", ...COLUMNS.slice(2)] : COLUMNS;
  return (
    <TableCard columns={columns} caption="Fitted peaks with their Miller indices, or the line that is not the sample's">
      {peaks.map((p, i) => {
        const origin = peakOriginWords(p);
        const phase = phases ? peakPhase(p) : null;
        return (
          <tr key={i} className={p.hkl || origin ? "" : "bg-caution-50"} data-origin={p.origin ?? "sample"} data-phase={phase ?? undefined}>
            <td className="tabular-nums">{i + 1}</td>
            <td className="tabular-nums whitespace-nowrap">
              {p.hkl ? formatHkl(p.hkl) : origin ? <Badge tone="neutral">{origin}</Badge> : <Badge tone="caution">Unindexed</Badge>}
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
                    {phases[phase]}
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
            <td className="tabular-nums">{p.twoThetaCalc != null ? p.twoThetaCalc.toFixed(4) : p.foreign ? p.foreign.expectedTwoTheta.toFixed(4) : "—"}</td>
            <td className="tabular-nums">{p.delta != null ? signed(p.delta, 4) : p.foreign ? signed(p.twoTheta - p.foreign.expectedTwoTheta, 4) : "—"}</td>
            <td className="tabular-nums">{p.relativeIntensity.toFixed(p.relativeIntensity < 1 ? 2 : 1)}</td>
            <td className="tabular-nums">{p.fwhm.toFixed(4)}</td>
            <td className="tabular-nums">{p.crystalliteSizeNm != null && !origin ? p.crystalliteSizeNm.toFixed(0) : "—"}</td>
          </tr>
        );
      })}
    </TableCard>
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
