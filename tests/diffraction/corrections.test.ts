// Zero shift, specimen displacement and transparency refined with the cell, on simulated scans that carry
// both instrument errors and on a real laboratory scan of the NIST SRM 660c LaB6 line-position standard.
// Sources: LaB6 a = 4.156826 Å (NIST SRM 660c certificate, docs/reference-values.md#certified-lattice-parameters);
// Δ2θ = −2 s cos θ / R and −sin 2θ / (2 μ R) (common practice / Klug & Alexander,
// docs/reference-values.md#peak-positions-and-widths). The 5×10⁻⁴ Å tolerance is the vetting approval's own
// choice (docs/reference-values.md#certified-lattice-parameters); the real file is described in tests/data/real/SOURCES.md.
import { readFileSync } from "node:fs";
import { describe, expect, it } from "vitest";
import { runLatticeCheck } from "~/diffraction/check";
import { transparencyShift } from "~/diffraction/line-shifts";
import { parseScan } from "~/diffraction/parse-scan";
import { CORRELATION_LIMIT } from "~/diffraction/refine";
import { simulatePattern } from "~/diffraction/simulate";
import { STRUCTURES } from "~/diffraction/structures";
import type { Radiation } from "~/diffraction/wavelengths";

const LAB6_A = 4.156826; // NIST SRM 660c certificate
const CU: Radiation = { kind: "anode", anode: "Cu", monochromation: "k_alpha_doublet" };
const cubic = (a: number) => ({ a, b: a, c: a, alpha: 90, beta: 90, gamma: 90 });
const scanOf = (s: { twoTheta: Float64Array; intensity: Float64Array }) =>
  ({ twoTheta: s.twoTheta, intensity: s.intensity, format: "xy", warnings: [] }) as never;
const lab6 = { system: "cubic", centering: "P", cell: cubic(4.1569) } as const;

function bothErrors(seed: number, zero: number, displacement: number, min = 15, max = 145) {
  return simulatePattern({
    structure: STRUCTURES.lanthanumHexaboride,
    radiation: CU,
    twoThetaMin: min,
    twoThetaMax: max,
    step: 0.01,
    scale: 50_000,
    zeroShift: zero,
    specimenDisplacement: displacement,
    background: { constant: 250, slope: -0.8, hump: { center: 25, fwhm: 10, height: 150 } },
    noise: { seed },
  });
}

describe("zero shift and specimen displacement together", () => {
  const cases: [number, number, number][] = [
    [1, 0.03, 0.15],
    [2, -0.04, 0.12],
    [3, 0.05, -0.2],
  ];
  for (const [seed, zero, displacement] of cases) {
    it(`LaB6 with a zero error of ${zero}° and a displacement of ${displacement} mm: "auto" refines both and meets the certificate`, () => {
      const scan = scanOf(bothErrors(seed, zero, displacement));
      const auto = runLatticeCheck(scan, { radiation: CU, ...lab6 });
      expect(auto.correctionRequested).toBe("auto");
      expect(auto.correction).toBe("zero_and_displacement");
      expect(auto.verdict).toBe("consistent");
      expect(Math.abs(auto.cell!.a - LAB6_A)).toBeLessThanOrEqual(5e-4);
      expect(Math.abs(auto.cell!.a - LAB6_A)).toBeLessThanOrEqual(3 * auto.esd!.a);
      expect(Math.abs(auto.zeroShift - zero)).toBeLessThanOrEqual(3 * auto.zeroShiftEsd!);
      expect(Math.abs(auto.displacement - displacement)).toBeLessThanOrEqual(3 * auto.displacementEsd!);
      // The correlation comes from the covariance matrix: strongly positive or negative, within the limit.
      expect(Math.abs(auto.zeroDisplacementCorrelation!)).toBeGreaterThan(0.99);
      expect(Math.abs(auto.zeroDisplacementCorrelation!)).toBeLessThanOrEqual(CORRELATION_LIMIT);
      // A zero shift alone absorbs the displacement into the cell: off the certificate by many of its esds.
      const zeroOnly = runLatticeCheck(scan, { radiation: CU, ...lab6, refine: "zero_shift" });
      expect(Math.abs(zeroOnly.cell!.a - LAB6_A)).toBeGreaterThan(5 * zeroOnly.esd!.a);
      expect(Math.abs(zeroOnly.cell!.a - LAB6_A)).toBeGreaterThan(Math.abs(auto.cell!.a - LAB6_A));
    });
  }

  it("a zero error alone is refined alone, saying that the displacement was indistinguishable from none", () => {
    const result = runLatticeCheck(scanOf(bothErrors(4, 0.06, 0)), { radiation: CU, ...lab6 });
    expect(result.correction).toBe("zero_shift");
    expect(result.zeroShift).toBeCloseTo(0.06, 2);
    expect(result.warnings.join(" ")).toMatch(/indistinguishable from none/);
    expect(Math.abs(result.cell!.a - LAB6_A)).toBeLessThanOrEqual(2e-4);
  });

  it("the explicit choices are kept: zero_and_displacement and displacement", () => {
    const scan = scanOf(bothErrors(5, 0.0, 0.2));
    const both = runLatticeCheck(scan, { radiation: CU, ...lab6, refine: "zero_and_displacement" });
    expect(both.correction).toBe("zero_and_displacement");
    expect(both.zeroDisplacementCorrelation).not.toBeNull();
    const displacement = runLatticeCheck(scan, { radiation: CU, ...lab6, refine: "displacement" });
    expect(displacement.correction).toBe("displacement");
    expect(displacement.displacement).toBeCloseTo(0.2, 1);
    expect(Math.abs(displacement.cell!.a - LAB6_A)).toBeLessThanOrEqual(2e-4);
  });

  it("a single wavelength keeps the zero shift as its default", () => {
    const sim = simulatePattern({
      structure: STRUCTURES.silicon,
      radiation: { kind: "custom", wavelength: 0.7 },
      twoThetaMin: 5,
      twoThetaMax: 50,
      step: 0.005,
      zeroShift: 0.01,
      noise: { seed: 2 },
    });
    const result = runLatticeCheck(scanOf(sim), {
      radiation: { kind: "custom", wavelength: 0.7 },
      system: "cubic",
      centering: "F",
      cell: STRUCTURES.silicon.cell,
    });
    expect(result.correction).toBe("zero_shift");
  });

  it("too few peaks for both: one correction, with a warning", () => {
    const scan = scanOf(bothErrors(6, 0.03, 0.1, 28, 45));
    const result = runLatticeCheck(scan, { radiation: CU, ...lab6 });
    expect(result.correction).not.toBe("zero_and_displacement");
    expect(result.warnings.some((w) => /zero shift/.test(w) && /displacement/.test(w))).toBe(true);
  });
});

describe("transparency of a weakly absorbing sample", () => {
  // μ = 50 cm⁻¹ (an organic or light-element powder) → 1/μ = 0.2 mm: at 2θ = 90° on R = 240 mm the lines move by
  // −0.2/(2 · 240) rad = −0.0239° (hand calculation).
  it("the shift formula", () => {
    expect(transparencyShift(90, 0.2, 240)).toBeCloseTo(-0.02387, 5);
    expect(transparencyShift(180, 0.2, 240)).toBeCloseTo(0, 10);
  });

  it("with μ given the cell is recovered; refined, the penetration comes back within its esds", () => {
    const sim = simulatePattern({
      structure: STRUCTURES.silicon,
      radiation: CU,
      twoThetaMin: 20,
      twoThetaMax: 140,
      step: 0.01,
      scale: 50_000,
      zeroShift: 0.02,
      penetrationMm: 0.2,
      background: { constant: 200 },
      noise: { seed: 9 },
    });
    const si = STRUCTURES.silicon;
    const options = { radiation: CU, system: si.system, centering: si.centering, cell: si.cell, refine: "zero_shift" } as const;
    const fixed = runLatticeCheck(scanOf(sim), { ...options, transparency: { linearAttenuationPerCm: 50 } });
    expect(fixed.transparency).toBe("fixed");
    expect(fixed.penetrationMm).toBeCloseTo(0.2, 6);
    expect(Math.abs(fixed.cell!.a - si.cell.a)).toBeLessThanOrEqual(2e-4);
    const ignored = runLatticeCheck(scanOf(sim), options);
    expect(Math.abs(ignored.cell!.a - si.cell.a)).toBeGreaterThan(Math.abs(fixed.cell!.a - si.cell.a));
    const refined = runLatticeCheck(scanOf(sim), { ...options, transparency: { refine: true } });
    expect(refined.transparency).toBe("refined");
    expect(Math.abs(refined.penetrationMm - 0.2)).toBeLessThanOrEqual(3 * refined.penetrationMmEsd!);
    expect(Math.abs(refined.cell!.a - si.cell.a)).toBeLessThanOrEqual(3 * refined.esd!.a);
  });

  it("a non-positive μ is refused with a sentence", () => {
    expect(() => runLatticeCheck(scanOf(bothErrors(1, 0, 0)), { radiation: CU, ...lab6, transparency: { linearAttenuationPerCm: 0 } })).toThrow(
      /linear attenuation coefficient must be a positive number/,
    );
  });
});

const REAL_LAB6 = "tests/data/real/lab6-srm660c-cu.gsas";

describe("a real Cu scan of NIST SRM 660c LaB6 (tests/data/real/SOURCES.md)", () => {
  it("auto meets the certificate within 5×10⁻⁴ Å where a zero shift alone does not; the faint Kβ of (110) is labelled", () => {
    const parsed = parseScan(new Uint8Array(readFileSync(REAL_LAB6)), { fileName: REAL_LAB6 });
    if (!parsed.ok) throw new Error(parsed.error);
    expect(parsed.scan.format).toBe("gsas");
    const scan = parsed.scan;
    const radiation: Radiation = { kind: "anode", anode: "Cu", monochromation: "k_beta_filtered" };
    const auto = runLatticeCheck(scan, { radiation, ...lab6 });
    expect(auto.verdict).toBe("consistent");
    expect(Math.abs(auto.cell!.a - LAB6_A)).toBeLessThanOrEqual(5e-4);
    // Measured on this file (own run): the zero-shift-only refinement lands 1.2×10⁻³ Å below the certificate.
    const zeroOnly = runLatticeCheck(scan, { radiation, ...lab6, refine: "zero_shift" });
    expect(Math.abs(zeroOnly.cell!.a - LAB6_A)).toBeGreaterThan(5e-4);
    // SOURCES.md: a bump of about 0.2 % of (110) at the Kβ position of (110).
    const kb = auto.peaks.find((p) => p.foreign?.line === "Cu Kβ" && p.foreign.parentHkl?.join("") === "110");
    expect(kb).toBeDefined();
    expect(kb!.foreign!.ratioToParent!).toBeLessThan(0.005);
    expect(auto.unindexed.every((p) => p.relativeIntensity < 1)).toBe(true);
  });
});

describe('"auto" on a mixture', () => {
  // A second phase's strong lines once let the two correlated corrections trade the olivine's cell for a large
  // displacement (c 6 % off, half the peaks lost, "inconsistent"); the zero shift's indexing now comes first.
  // LiFePO4 and rutile structures: app/diffraction/structures.ts (their sources are named there).
  it("olivine with rutile mixed in: the same cell and indexing as a zero shift alone, under review for the extra lines", () => {
    const CO: Radiation = { kind: "anode", anode: "Co", monochromation: "k_alpha_doublet" };
    const scan = { twoThetaMin: 15, twoThetaMax: 110, step: 0.02, radiation: CO, scale: 8000, zeroShift: 0.03 };
    const main = simulatePattern({ ...scan, structure: STRUCTURES.lithiumIronPhosphate, background: { constant: 120, slope: -0.4 }, noise: { seed: 26453 } });
    const rutile = simulatePattern({ ...scan, structure: STRUCTURES.rutile, background: { constant: 0 }, scale: 1200, noise: { seed: 26454 } });
    const mixed = scanOf({ twoTheta: main.twoTheta, intensity: main.intensity.map((v, i) => v + rutile.intensity[i]) });
    const cell = STRUCTURES.lithiumIronPhosphate.cell;
    const declared = { system: "orthorhombic", centering: "P", cell } as const;
    const auto = runLatticeCheck(mixed, { radiation: CO, ...declared });
    const zeroOnly = runLatticeCheck(mixed, { radiation: CO, ...declared, refine: "zero_shift" });
    expect(auto.verdict).not.toBe("inconsistent");
    expect(auto.peaksUsed).toBeGreaterThanOrEqual(0.9 * zeroOnly.peaksUsed);
    for (const k of ["a", "b", "c"] as const) expect(Math.abs(auto.cell![k] - cell[k]) / cell[k]).toBeLessThan(1e-3);
  });
});
