// The calibration check of a vetting application: the lattice check against a standard's certified cell, kept for the admin's review.
import { checkScanText } from "~/diffraction/check";
import { ANODE_LINES } from "~/diffraction/wavelengths";
import type { ANODE_CHOICES, MONOCHROMATION_CHOICES } from "~/domain/capabilities";
import { CALIBRATION_STANDARDS, type CalibrationCheck, type CalibrationStandard } from "~/domain/vetting";

const MAX_PLOT_POINTS = 3000;

/** Thins a scan for the plot: in each bin keep the point of highest count, so no peak top is lost. */
function thinForPlot(twoTheta: ArrayLike<number>, observed: ArrayLike<number>, ...others: ArrayLike<number>[]) {
  const n = twoTheta.length;
  const bin = Math.max(1, Math.ceil(n / MAX_PLOT_POINTS));
  const keep: number[] = [];
  for (let start = 0; start < n; start += bin) {
    let best = start;
    for (let i = start + 1; i < Math.min(n, start + bin); i++) if (observed[i] > observed[best]) best = i;
    keep.push(best);
  }
  const round = (v: number, digits: number) => Number(v.toFixed(digits));
  return {
    twoTheta: keep.map((i) => round(twoTheta[i], 4)),
    observed: keep.map((i) => round(observed[i], 1)),
    others: others.map((arr) => keep.map((i) => round(arr[i], 1))),
  };
}

export type CalibrationOutcome = { ok: true; check: CalibrationCheck } | { ok: false; error: string };

/** Runs the lattice check on a calibration scan against the standard's certified cubic cell. */
export function checkCalibrationScan(
  text: string,
  input: {
    standard: CalibrationStandard;
    instrumentName: string;
    anode: (typeof ANODE_CHOICES)[number];
    monochromation: (typeof MONOCHROMATION_CHOICES)[number];
    fileName: string;
  },
): CalibrationOutcome {
  const standard = CALIBRATION_STANDARDS[input.standard];
  const a = standard.a;
  const outcome = checkScanText(text, {
    radiation: { kind: "anode", anode: input.anode, monochromation: input.monochromation },
    system: "cubic",
    centering: standard.centering,
    cell: { a, b: a, c: a, alpha: 90, beta: 90, gamma: 90 },
    fileName: input.fileName,
  });
  if (!outcome.ok) return outcome;
  const r = outcome.result;
  const refinedA = r.cell?.a ?? null;
  const deviationA = refinedA === null ? null : refinedA - a;
  const thin = thinForPlot(r.twoTheta, r.observed, r.fittedProfile, r.background);
  return {
    ok: true,
    check: {
      standard: input.standard,
      certifiedA: a,
      certifiedUncertainty: standard.uncertainty,
      refinedA,
      esdA: r.esd?.a ?? null,
      deviationA,
      deviationPpm: deviationA === null ? null : (deviationA / a) * 1e6,
      zeroShift: r.zeroShift,
      zeroShiftEsd: r.zeroShiftEsd,
      verdict: r.verdict,
      reasons: r.reasons,
      warnings: r.warnings,
      peaksFound: r.peaks.length,
      peaksIndexed: r.peaks.filter((p) => p.hkl !== null).length,
      m20: r.figuresOfMerit.M20,
      fn: r.figuresOfMerit.FN,
      instrument: {
        name: input.instrumentName,
        anode: input.anode,
        monochromation: input.monochromation,
        wavelength: ANODE_LINES[input.anode].kAlpha1,
      },
      scanFileName: input.fileName,
      checkedAt: new Date().toISOString(),
      plot: {
        twoTheta: thin.twoTheta,
        observed: thin.observed,
        fitted: thin.others[0],
        background: thin.others[1],
        ticks: r.reflections.map((t) => ({ twoTheta: Number(t.twoTheta.toFixed(4)), label: `${t.h}${t.k}${t.l}` })),
      },
    },
  };
}
