// The calibration check of a vetting application: the lattice check against a standard's certified cell, kept for the admin's review.
import { ANODE_LINES } from "~/diffraction/wavelengths";
import type { ANODE_CHOICES, MONOCHROMATION_CHOICES } from "~/domain/capabilities";
import { checkScanForStorage } from "./lattice-check";
import { CALIBRATION_STANDARDS, type CalibrationCheck, type CalibrationStandard } from "~/domain/vetting";

/** The calibration plot keeps at most this many points (the extremes of each stretch, so no peak top is lost). */
const MAX_PLOT_POINTS = 3000;

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
  const outcome = checkScanForStorage(
    text,
    {
      radiation: { kind: "anode", anode: input.anode, monochromation: input.monochromation },
      declared: { system: "cubic", centering: standard.centering, cell: { a, b: a, c: a, alpha: 90, beta: 90, gamma: 90 } },
      warnings: [],
      declaredFrom: { sampleLabel: null, expectedPhase: standard.label, instrumentName: input.instrumentName },
      fileName: input.fileName,
    },
    { maxPoints: MAX_PLOT_POINTS },
  );
  if (!outcome.ok) return outcome;
  const r = outcome.result;
  const refinedA = r.cell?.a ?? null;
  const deviationA = refinedA === null ? null : refinedA - a;
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
        twoTheta: r.profile.twoTheta,
        observed: r.profile.observed,
        fitted: r.profile.fitted,
        background: r.profile.background,
        ticks: r.reflections.map((t) => ({ twoTheta: Number(t.twoTheta.toFixed(4)), label: `${t.h}${t.k}${t.l}` })),
      },
    },
  };
}
