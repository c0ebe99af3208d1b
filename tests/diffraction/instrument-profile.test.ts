// The instrument profile: Caglioti U, V, W fitted to a calibration scan's peak widths.
// Sources: FWHM² = U tan²θ + V tan θ + W (Caglioti, Paoletti & Ricci 1958 — memory,
// docs/reference-values.md#peak-positions-and-widths); the typical laboratory widths "about 0.04° at 30° and 0.1°
// at 120° 2θ" for U = 0.004, V = −0.002, W = 0.002 deg² (common practice, same section); LaB6 NIST SRM 660c
// (certificate, docs/reference-values.md#certified-lattice-parameters), the standard labs calibrate widths with.
import { describe, expect, it } from "vitest";
import { runLatticeCheck } from "~/diffraction/check";
import { fitCaglioti, instrumentFwhm } from "~/diffraction/scherrer";
import { simulatePattern } from "~/diffraction/simulate";
import { STRUCTURES } from "~/diffraction/structures";
import type { Radiation } from "~/diffraction/wavelengths";

const CU: Radiation = { kind: "anode", anode: "Cu", monochromation: "k_alpha_doublet" };

describe("fitCaglioti", () => {
  it("reproduces the common-practice laboratory example: 0.04° at 30° and 0.1° at 120° 2θ", () => {
    const profile = { U: 0.004, V: -0.002, W: 0.002 };
    // Hand calculation: tan 15° = 0.26795 → FWHM² = 0.004·0.07180 − 0.002·0.26795 + 0.002 = 0.0017512, FWHM = 0.0418°;
    // tan 60° = 1.73205 → 0.012 − 0.0034641 + 0.002 = 0.0105359, FWHM = 0.1026°.
    expect(instrumentFwhm(profile, 30)).toBeCloseTo(0.0418, 4);
    expect(instrumentFwhm(profile, 120)).toBeCloseTo(0.1026, 4);
    const widths = [20, 30, 45, 60, 80, 100, 120, 140].map((t) => ({ twoTheta: t, fwhm: instrumentFwhm(profile, t) }));
    const fit = fitCaglioti(widths);
    expect(fit.ok).toBe(true);
    if (!fit.ok) return;
    expect(fit.profile.U).toBeCloseTo(0.004, 8);
    expect(fit.profile.V).toBeCloseTo(-0.002, 8);
    expect(fit.profile.W).toBeCloseTo(0.002, 8);
    expect(fit.peaksUsed).toBe(8);
  });

  it("recovers U, V, W from a simulated LaB6 calibration scan made with them, within three esds", () => {
    const truth = { U: 0.006, V: -0.004, W: 0.003 };
    for (const seed of [1, 2]) {
      const sim = simulatePattern({
        structure: STRUCTURES.lanthanumHexaboride,
        radiation: CU,
        twoThetaMin: 15,
        twoThetaMax: 145,
        step: 0.01,
        scale: 50_000,
        peakShape: { ...truth, eta: 0.5 },
        background: { constant: 200 },
        noise: { seed },
      });
      const a = 4.156826;
      const check = runLatticeCheck({ twoTheta: sim.twoTheta, intensity: sim.intensity, format: "xy", warnings: [] } as never, {
        radiation: CU,
        system: "cubic",
        centering: "P",
        cell: { a, b: a, c: a, alpha: 90, beta: 90, gamma: 90 },
      });
      const widths = check.peaks.filter((p) => p.hkl && p.usedInRefinement).map((p) => ({ twoTheta: p.twoTheta, fwhm: p.fwhm, fwhmEsd: p.fwhmEsd }));
      const fit = fitCaglioti(widths);
      expect(fit.ok).toBe(true);
      if (!fit.ok) return;
      for (const k of ["U", "V", "W"] as const) {
        expect(Math.abs(fit.profile[k] - truth[k]), `${k} = ${fit.profile[k]} ± ${fit.esd![k]}`).toBeLessThanOrEqual(3 * fit.esd![k]);
      }
      // The fitted curve gives the instrument's widths to a few percent across the range.
      for (const t of [30, 60, 90, 120]) expect(instrumentFwhm(fit.profile, t) / instrumentFwhm(truth, t)).toBeCloseTo(1, 1);
    }
  });

  it("refuses fewer than three usable peaks with a sentence", () => {
    const fit = fitCaglioti([
      { twoTheta: 30, fwhm: 0.05 },
      { twoTheta: 60, fwhm: Number.NaN },
      { twoTheta: 90, fwhm: 0.08 },
    ]);
    expect(fit).toEqual({ ok: false, error: expect.stringMatching(/at least three peaks/) });
  });

  it("refuses an unphysical curve: widths falling ever faster towards high angles (U < 0)", () => {
    // FWHM² = 0.02 − 0.002 tan²θ: U = −0.002 deg², far below zero for these esds.
    const widths = [20, 40, 60, 80, 100, 120, 140].map((t) => {
      const tan = Math.tan((t * Math.PI) / 360);
      return { twoTheta: t, fwhm: Math.sqrt(0.02 - 0.002 * tan * tan), fwhmEsd: 0.0005 };
    });
    const fit = fitCaglioti(widths);
    expect(fit.ok).toBe(false);
    if (!fit.ok) expect(fit.error).toMatch(/no instrument does/);
  });
});
