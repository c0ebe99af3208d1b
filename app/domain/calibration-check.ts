// The calibration check of a vetting application: the lattice check against a standard's certified cell, kept for
// the admin's review, and the instrument profile (Caglioti U, V, W) fitted to the standard's peak widths, which
// the lab may then save on one of its instruments.
import { fitCaglioti } from "~/diffraction/scherrer";
import { ANODE_LINES } from "~/diffraction/wavelengths";
import type { ANODE_CHOICES, MONOCHROMATION_CHOICES } from "~/domain/capabilities";
import { checkScanForStorage } from "./lattice-check";
import { CALIBRATION_STANDARDS, type CalibrationCheck, type CalibrationStandard } from "~/domain/vetting";

/** The calibration plot keeps at most this many points (the extremes of each stretch, so no peak top is lost). */
const MAX_PLOT_POINTS = 3000;

export type CalibrationOutcome = { ok: true; check: CalibrationCheck } | { ok: false; error: string };

/** Runs the lattice check on a calibration scan (text or an instrument's own file) against the standard's certified cubic cell. */
export function checkCalibrationScan(
  input: string | Uint8Array,
  form: {
    standard: CalibrationStandard;
    instrumentName: string;
    anode: (typeof ANODE_CHOICES)[number];
    monochromation: (typeof MONOCHROMATION_CHOICES)[number];
    fileName: string;
  },
): CalibrationOutcome {
  const standard = CALIBRATION_STANDARDS[form.standard];
  const a = standard.a;
  const outcome = checkScanForStorage(
    input,
    {
      // The form's source; a file that states its own is checked with that, and the difference is a warning.
      radiation: { kind: "anode", anode: form.anode, monochromation: form.monochromation },
      declared: { system: "cubic", centering: standard.centering, cell: { a, b: a, c: a, alpha: 90, beta: 90, gamma: 90 } },
      warnings: [],
      declaredFrom: { sampleLabel: null, expectedPhase: standard.label, instrumentName: form.instrumentName },
      fileName: form.fileName,
    },
    { maxPoints: MAX_PLOT_POINTS },
  );
  if (!outcome.ok) return outcome;
  const r = outcome.result;
  const refinedA = r.cell?.a ?? null;
  const deviationA = refinedA === null ? null : refinedA - a;
  const used = r.radiation.kind === "anode" ? r.radiation : null;
  // The widths of the standard's own reflections (indexed and used in the refinement; no holder or stray lines).
  const widths = r.peaks.filter((p) => p.hkl !== null && p.usedInRefinement).map((p) => ({ twoTheta: p.twoTheta, fwhm: p.fwhm }));
  const fit = fitCaglioti(widths);
  return {
    ok: true,
    check: {
      standard: form.standard,
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
        name: form.instrumentName,
        anode: used?.anode ?? form.anode,
        monochromation: used?.monochromation ?? form.monochromation,
        wavelength: used ? ANODE_LINES[used.anode].kAlpha1 : r.wavelength,
      },
      instrumentProfile: fit.ok ? { U: fit.profile.U, V: fit.profile.V, W: fit.profile.W, peaks: fit.peaksUsed } : null,
      instrumentProfileNote: fit.ok ? null : fit.error,
      scanFormatLabel: outcome.read.info.formatLabel,
      scanFileName: form.fileName,
      checkedAt: new Date().toISOString(),
      wholePattern: r.wholePattern ?? null,
      plot: {
        twoTheta: r.profile.twoTheta,
        observed: r.profile.observed,
        fitted: r.profile.fitted,
        background: r.profile.background,
        calculated: r.profile.calculated ?? null,
        ticks: r.reflections.map((t) => ({ twoTheta: Number(t.twoTheta.toFixed(4)), label: `${t.h}${t.k}${t.l}` })),
      },
    },
  };
}
