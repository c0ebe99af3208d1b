// The calibration check of a lab's vetting application: refined cell against the certified one, the verdict and the
// plot (the same interactive plot as a delivered scan's check).
import { formulaUnicode } from "~/domain/formula";
import { CellSymbol, Formula } from "~/components/symbols";
import { useMemo } from "react";
import { CheckPlot, type CheckPlotData } from "./check-plot";
import { plotCurves, rFactor } from "./check-words";
import { Badge } from "./ui";
import { APPROVAL_TOLERANCE_A, APPROVAL_TOLERANCE_REASON, CALIBRATION_STANDARDS, withinTolerance, type CalibrationCheck } from "~/domain/vetting";
import { MONOCHROMATION_LABELS } from "~/domain/capabilities";
import { VERDICT_WORDS } from "~/domain/check-result";

const signed = (v: number, digits: number) => `${v >= 0 ? "+" : "−"}${Math.abs(v).toFixed(digits)}`;

export function VerdictBadge({ verdict }: { verdict: CalibrationCheck["verdict"] }) {
  const b = VERDICT_WORDS[verdict];
  return <Badge tone={b.tone}>{b.label}</Badge>;
}

/** The fitted instrument profile, or why there is none (checks made before the fit have neither). */
function profileRow(check: CalibrationCheck): [string, string][] {
  const p = check.instrumentProfile;
  if (p)
    return [["Instrument profile", `U ${p.U.toExponential(3)}, V ${p.V.toExponential(3)}, W ${p.W.toExponential(3)} degrees² (Caglioti, ${p.peaks} peaks)`]];
  if (check.instrumentProfileNote) return [["Instrument profile", check.instrumentProfileNote]];
  return [];
}

/** The summary of a calibration check, with its plot: a calculated curve and whole-pattern figures where the stored check has them. */
export function CalibrationSummary({ check }: { check: CalibrationCheck }) {
  const standard = CALIBRATION_STANDARDS[check.standard];
  const ok = withinTolerance(check);
  const plot: CheckPlotData = useMemo(() => {
    const p = check.plot;
    const ticks = p.ticks.map((t) => ({ twoTheta: t.twoTheta, label: `(${t.label})` }));
    return {
      ...plotCurves(p),
      wavelength: check.instrument.wavelength,
      ticks,
      rows: [{ name: formulaUnicode(standard.label), role: "main", present: true, ticks }],
    };
  }, [check, standard.label]);
  const wp = check.wholePattern;
  const rows: [string, string][] = [
    ["Standard", standard.label],
    [
      "Measured on",
      `${check.instrument.name} · ${check.instrument.anode} Kα1 ${check.instrument.wavelength} Å · ${MONOCHROMATION_LABELS[check.instrument.monochromation as keyof typeof MONOCHROMATION_LABELS] ?? check.instrument.monochromation}`,
    ],
    ["Refined a", check.refinedA === null ? "not refined" : `${check.refinedA.toFixed(6)} ± ${(check.esdA ?? 0).toFixed(6)} Å`],
    ["Certified a", `${check.certifiedA.toFixed(7)} ± ${check.certifiedUncertainty} Å`],
    ["Deviation", check.deviationA === null ? "—" : `${signed(check.deviationA, 6)} Å (${signed(check.deviationPpm ?? 0, 1)} ppm)`],
    ["Zero shift", `${signed(check.zeroShift, 4)}°${check.zeroShiftEsd !== null ? ` ± ${check.zeroShiftEsd.toFixed(4)}°` : ""} 2θ`],
    [
      "Peaks",
      `${check.peaksIndexed} of ${check.peaksFound} indexed · M20 ${check.m20?.toFixed(0) ?? "—"} · F_N ${check.fn?.toFixed(0) ?? "—"}${wp ? ` · Rwp ${rFactor(wp.Rwp)} · Rexp ${rFactor(wp.Rexp)} · GoF ${wp.GoF.toFixed(2)}` : ""}`,
    ],
    ...profileRow(check),
  ];
  return (
    <section className="card space-y-4" aria-labelledby="calibration-check-heading">
      <div className="flex flex-wrap items-center justify-between gap-3">
        <h2 id="calibration-check-heading" className="text-lg font-semibold">
          Calibration check
        </h2>
        <div className="flex gap-2">
          <VerdictBadge verdict={check.verdict} />
          {ok ? <Badge tone="ok">Within tolerance</Badge> : <Badge tone="danger">Outside tolerance</Badge>}
        </div>
      </div>
      <dl className="grid gap-x-6 gap-y-2 text-sm sm:grid-cols-[10rem_1fr]">
        {rows.map(([k, v]) => (
          <div key={k} className="contents">
            <dt className="text-ink-500">{rowLabel(k)}</dt>
            <dd className="text-ink-900 tabular-nums">
              <Formula>{v}</Formula>
            </dd>
          </div>
        ))}
      </dl>
      <p className="text-xs text-ink-600">
        Tolerance for approval: |deviation| ≤ {APPROVAL_TOLERANCE_A} Å. {APPROVAL_TOLERANCE_REASON}
      </p>
      {check.reasons.length ? (
        <ul className="list-disc pl-5 text-sm text-ink-700">
          {check.reasons.map((r) => (
            <li key={r}>{r}</li>
          ))}
        </ul>
      ) : null}
      {check.warnings.length ? (
        <ul className="list-disc pl-5 text-sm text-caution-700" aria-label="Warnings">
          {check.warnings.map((w) => (
            <li key={w}>{w}</li>
          ))}
        </ul>
      ) : null}
      <CheckPlot
        data={plot}
        height={320}
        label={`Calibration scan of ${standard.label}: observed on top of the ${plot.calculated ? "whole-pattern fit" : "sum of freely fitted peaks"}, reflections and difference`}
      />
      <p className="text-xs text-ink-500">
        {check.scanFileName}
        {check.scanFormatLabel ? ` (${check.scanFormatLabel})` : ""} · checked {check.checkedAt.slice(0, 16).replace("T", " ")} UTC
      </p>
    </section>
  );
}

/** A row's label with the cell parameter's symbol in italics: "Refined a" → "Refined <i>a</i>". */
function rowLabel(k: string) {
  const m = /^(Refined|Certified) a$/.exec(k);
  return m ? (
    <>
      {m[1]} <CellSymbol name="a" />
    </>
  ) : (
    k
  );
}
