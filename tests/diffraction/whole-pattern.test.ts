// The whole-pattern (Le Bail) fit against outside sources: a certified standard (NIST SRM 660c), a published
// GSAS refinement of a measured two-phase scan and the instrument file of a measured fluorapatite scan
// (tests/data/real/SOURCES.md), and simulated scans of published structures. Model and conventions:
// docs/whole-pattern.md.
import { readFileSync } from "node:fs";
import { describe, expect, it } from "vitest";
import type { Cell, Centering, CrystalSystem } from "~/diffraction/cell";
import { runLatticeCheck } from "~/diffraction/check";
import { parseScan } from "~/diffraction/parse-scan";
import { analysePeaks } from "~/diffraction/peaks";
import { cagliotiFwhm, DEFAULT_PEAK_SHAPE, mulberry32, poissonSampler, simulatePattern } from "~/diffraction/simulate";
import { type CrystalStructure, STRUCTURES } from "~/diffraction/structures";
import { type Radiation, radiationLines } from "~/diffraction/wavelengths";
import { fitWholePattern, type WholePatternFit, type WholePatternInput } from "~/diffraction/whole-pattern";

const CU: Radiation = { kind: "anode", anode: "Cu", monochromation: "k_alpha_doublet" };
const LINES = radiationLines(CU);
const RAD = Math.PI / 180;
const hexagonal = (a: number, c: number): Cell => ({ a, b: a, c, alpha: 90, beta: 90, gamma: 120 });
const cubic = (a: number): Cell => ({ a, b: a, c: a, alpha: 90, beta: 90, gamma: 90 });

type Correction = WholePatternInput["correction"];
const NO_CORRECTION: Correction = { kind: "zero_shift", zeroShift: 0, displacement: 0, penetrationMm: 0, radiusMm: 240 };

/** The fit's input from a scan and its peak analysis, as the check hands it over. */
function inputOf(
  x: Float64Array,
  y: Float64Array,
  phases: { system: CrystalSystem; centering: Centering; cell: Cell }[],
  correction: Correction,
  esd?: Float64Array,
): WholePatternInput {
  const analysis = analysePeaks(x, y, { lines: LINES, esd });
  return {
    twoTheta: x,
    intensity: y,
    variance: analysis.variance,
    background: analysis.background,
    lines: LINES,
    phases,
    correction,
    typicalFwhm: analysis.typicalFwhm,
  };
}

function readReal(file: string) {
  const parsed = parseScan(new Uint8Array(readFileSync(`tests/data/real/${file}`)), { fileName: file });
  if (!parsed.ok) throw new Error(parsed.error);
  return parsed.scan;
}

/** The refined profile's FWHM (degrees 2θ) at 2θ. */
function fittedFwhm(fit: WholePatternFit, twoTheta: number): number {
  return cagliotiFwhm({ ...fit.profile, eta: 0.5 }, twoTheta);
}

/**
 * FWHM (degrees) of a GSAS constant-wavelength profile of type 2 at 2θ: Gaussian variance σ² = GU tan²θ + GV tanθ
 * + GW and Lorentzian width γ = LX/cosθ + LY tanθ, both in centidegrees, combined as a pseudo-Voigt by Thompson,
 * Cox & Hastings (1987, J. Appl. Cryst. 20, 79): H⁵ = Γg⁵ + 2.69269Γg⁴γ + 2.42843Γg³γ² + 4.47163Γg²γ³ +
 * 0.07842Γgγ⁴ + γ⁵ with Γg = √(8 ln2 σ²) (GSAS manual's profile function 2 — from memory).
 */
function gsasFwhm(p: { GU: number; GV: number; GW: number; LX: number; LY: number }, twoTheta: number): number {
  const theta = (twoTheta / 2) * RAD;
  const t = Math.tan(theta);
  const g = Math.sqrt(8 * Math.LN2 * (p.GU * t * t + p.GV * t + p.GW));
  const l = p.LX / Math.cos(theta) + p.LY * t;
  const h5 = g ** 5 + 2.69269 * g ** 4 * l + 2.42843 * g ** 3 * l ** 2 + 4.47163 * g ** 2 * l ** 3 + 0.07842 * g * l ** 4 + l ** 5;
  return h5 ** 0.2 / 100;
}

/** A mixture's scan: each phase simulated without noise, summed with a background, then Poisson-counted. */
function mixture(
  structures: CrystalStructure[],
  weights: number[],
  options: { min: number; max: number; step: number; zeroShift: number; displacement?: number; seed: number; cells?: Cell[] },
) {
  const sims = structures.map((structure, k) =>
    simulatePattern({
      structure,
      cell: options.cells?.[k],
      radiation: CU,
      twoThetaMin: options.min,
      twoThetaMax: options.max,
      step: options.step,
      zeroShift: options.zeroShift,
      specimenDisplacement: options.displacement,
      scale: 10_000 * weights[k],
    }),
  );
  const x = sims[0].twoTheta;
  const poisson = poissonSampler(mulberry32(options.seed));
  // A sloping background with an amorphous hump, as a lab scan of a powder on a glass slide shows.
  const y = Float64Array.from(x, (t, i) => poisson(sims.reduce((s, sim) => s + sim.intensity[i], 0) + 180 - 0.4 * t + 70 * Math.exp(-(((t - 24) / 7) ** 2))));
  return { x, y };
}

function expectFinite(fit: WholePatternFit): void {
  for (const v of [fit.Rwp, fit.Rexp, fit.GoF, fit.Rp, fit.zeroShift, fit.displacement, fit.profile.U, fit.profile.V, fit.profile.W]) {
    expect(Number.isFinite(v)).toBe(true);
  }
  expect(fit.calculated.every(Number.isFinite)).toBe(true);
  for (const p of fit.phaseProfiles) expect(p.every(Number.isFinite)).toBe(true);
}

describe("whole-pattern fit on real measured scans (tests/data/real/SOURCES.md)", () => {
  it("NIST SRM 660c LaB6: the cell within 5×10⁻⁴ Å of the certificate, started from the peak refinement", () => {
    const scan = readReal("lab6-srm660c-cu.gsas");
    const check = runLatticeCheck(scan, { radiation: CU, system: "cubic", centering: "P", cell: cubic(4.1569) });
    const fit = fitWholePattern(
      inputOf(
        scan.twoTheta,
        scan.intensity,
        [{ system: "cubic", centering: "P", cell: check.cell! }],
        {
          kind: check.correction,
          zeroShift: check.zeroShift,
          displacement: check.displacement,
          penetrationMm: check.penetrationMm,
          radiusMm: check.goniometerRadiusMm,
        },
        scan.esd,
      ),
    );
    expectFinite(fit);
    // NIST SRM 660c certificate: a = 4.156826(8) Å at 22.5 °C. The bound is the one real-scans.test.ts holds the
    // peak check to: a pseudo-Voigt with a two-term asymmetry is not the certificate's fundamental-parameters
    // model, and the zero shift and specimen displacement trade with the cell along one valley, so the cell moves
    // by about 10⁻⁴ Å with the correction chosen (we reach about 2×10⁻⁴ Å).
    expect(Math.abs(fit.phases[0].cell.a - 4.156826)).toBeLessThanOrEqual(5e-4);
    // Every one of the 23 LaB6 reflections up to 125° 2θ (P m -3 m, a = 4.157 Å) is listed, with its multiplicity.
    expect(fit.phases[0].reflections.length).toBe(23);
    expect(fit.phases[0].reflections[0]).toMatchObject({ h: 1, k: 0, l: 0, multiplicity: 6 });
    expect(fit.converged).toBe(true);
    // GoF = (Rwp/Rexp)² = χ²/(N − P) (International Tables Vol. H, the Rietveld-method chapters — from memory).
    expect(fit.GoF).toBeCloseTo((fit.Rwp / fit.Rexp) ** 2, 6);
    // A measured standard with counting statistics: Rwp a few percent and above Rexp (no model is perfect).
    expect(fit.Rwp).toBeGreaterThan(fit.Rexp);
    expect(fit.Rwp).toBeLessThan(0.08);
  });

  it("α-Si3N4 with β-Si3N4: cells within 1.5×10⁻³ Å of GSAS's refinement, Rwp at or below its Rietveld Rwp", () => {
    const scan = readReal("alpha-si3n4-cu-1990.gsas");
    const check = runLatticeCheck(scan, { radiation: CU, system: "hexagonal", centering: "P", cell: hexagonal(7.75, 5.62) });
    const fit = fitWholePattern(
      inputOf(
        scan.twoTheta,
        scan.intensity,
        [
          { system: "hexagonal", centering: "P", cell: check.cell! },
          // The minor β phase, declared at GSAS's cell (A_SI3N4X.EXP, CRS2).
          { system: "hexagonal", centering: "P", cell: hexagonal(7.60173, 2.906304) },
        ],
        {
          kind: check.correction,
          zeroShift: check.zeroShift,
          displacement: check.displacement,
          penetrationMm: check.penetrationMm,
          radiusMm: check.goniometerRadiusMm,
        },
        scan.esd,
      ),
    );
    expectFinite(fit);
    // GSAS's two-phase Rietveld refinement of this scan (GSAS-II repository, Exercises/two phase/A_SI3N4X.EXP,
    // SOURCES.md): α a = 7.753888(154) Å, c = 5.620424(129) Å with λ = 1.540500 Å, scaled to this check's Cu Kα1
    // of 1.540593 Å (the cell scales with λ). Another program's model (profile, asymmetry, displacement) on the
    // same data: the bound of real-scans.test.ts, 1.5×10⁻³ Å (we reach about 1.2×10⁻³ Å on a, 8×10⁻⁴ Å on c).
    const scale = 1.540593 / 1.5405;
    expect(Math.abs(fit.phases[0].cell.a - 7.753888 * scale)).toBeLessThanOrEqual(1.5e-3);
    expect(Math.abs(fit.phases[0].cell.c - 5.620424 * scale)).toBeLessThanOrEqual(1.5e-3);
    // The same file's figures: HST 1 RPOWD gives Rwp = 0.1420 and Rp = 0.0940 of the Rietveld fit; WREXP gives
    // the expected Rwp, 0.0775. A Le Bail fit frees every intensity, so its Rwp comes out at or below the
    // Rietveld one (common practice); not far below, since both fit one measured profile (we reach about 0.118).
    expect(fit.Rwp).toBeLessThanOrEqual(0.142);
    expect(fit.Rwp).toBeGreaterThan(0.5 * 0.142);
    expect(fit.Rp).toBeLessThanOrEqual(0.094);
    // Rexp depends on the counts and on N − P only: within 3 % of GSAS's (P differs: it counts the intensities
    // here, the structure there; we reach about 0.076).
    expect(Math.abs(fit.Rexp - 0.0775) / 0.0775).toBeLessThanOrEqual(0.03);
    // The profile GSAS refined (HAP1 PRCF: GU, GV, GW = 2, −2, 5 held; LX = 6.99474, LY = 14.5676 refined; widths
    // in centidegrees): our FWHM within 20 % of it across the scan (a different profile function, with the
    // β phase's share and the asymmetry modelled otherwise).
    const gsas = { GU: 2, GV: -2, GW: 5, LX: 6.99474, LY: 14.5676 };
    for (const twoTheta of [30, 60, 90]) {
      expect(Math.abs(fittedFwhm(fit, twoTheta) / gsasFwhm(gsas, twoTheta) - 1)).toBeLessThanOrEqual(0.2);
    }
    // Both phases have reflections; the minor one's cell is refined too (no bound: 1 % of the mass).
    expect(fit.phases[1].reflections.length).toBeGreaterThan(20);
    expect(fit.phases[1].esd).not.toBeNull();
  });

  it("fluorapatite: the cell near the exercise's literature cell, Rexp as GSAS's POWPREF computed it", () => {
    const scan = readReal("fluorapatite-cu.gsas");
    const check = runLatticeCheck(scan, { radiation: CU, system: "hexagonal", centering: "P", cell: hexagonal(9.37, 6.88) });
    const input = inputOf(
      scan.twoTheta,
      scan.intensity,
      [{ system: "hexagonal", centering: "P", cell: check.cell! }],
      {
        kind: check.correction,
        zeroShift: check.zeroShift,
        displacement: check.displacement,
        penetrationMm: check.penetrationMm,
        radiusMm: check.goniometerRadiusMm,
      },
      scan.esd,
    );
    const fit = fitWholePattern(input);
    expectFinite(fit);
    // FAP.EXP's starting cell (SOURCES.md), a = 9.372 Å, c = 6.886 Å: a literature cell, not refined on this scan;
    // held to the bound of real-scans.test.ts, 8×10⁻³ Å.
    expect(Math.abs(fit.phases[0].cell.a - 9.372)).toBeLessThanOrEqual(8e-3);
    expect(Math.abs(fit.phases[0].cell.c - 6.886)).toBeLessThanOrEqual(8e-3);
    // The file's last two counts are zeros where the background is about 80 counts (SOURCES.md: padding, not
    // measured; GSAS's TRNGE stops at 129.98°): left out of the fit.
    expect(fit.points).toBe(scan.twoTheta.length - 2);
    // FAP.EXP's WREXP, 0.0561: the expected Rwp GSAS's POWPREF computed for these counts over 15–129.98°.
    expect(Math.abs(fit.Rexp - 0.0561) / 0.0561).toBeLessThanOrEqual(0.03);
    // fluorapatite-cu-inst.prm gives the instrument's profile as GSAS type 2 in centidegrees (PRCF11 2.0 −2.0 5.0
    // 1.0, PRCF12 1.0 0.0: GU, GV, GW, LX, LY) — a default start, not refined on this scan; our Caglioti FWHM is in
    // degrees and includes the sample's own broadening, so it is held only to lie within a factor of two.
    const prm = readFileSync("tests/data/real/fluorapatite-cu-inst.prm", "latin1");
    const field = (key: string) =>
      prm
        .split(/\r?\n/)
        .find((line) => line.includes(key))!
        .trim()
        .split(/\s+/)
        .slice(2)
        .map(Number);
    const [GU, GV, GW, LX] = field("PRCF11");
    const [LY] = field("PRCF12");
    for (const twoTheta of [30, 60, 90]) {
      const ratio = fittedFwhm(fit, twoTheta) / gsasFwhm({ GU, GV, GW, LX, LY }, twoTheta);
      expect(ratio).toBeGreaterThan(0.5);
      expect(ratio).toBeLessThan(2);
    }
  });
});

describe("whole-pattern fit on simulated scans", () => {
  it("monoclinic ZrO2 from a cell 0.3 % off: a, b, c within 2×10⁻³ Å, β within 0.02° (the issue's bounds)", () => {
    const s = STRUCTURES.baddeleyite;
    const sim = simulatePattern({
      structure: s,
      radiation: CU,
      twoThetaMin: 10,
      twoThetaMax: 120,
      step: 0.02,
      zeroShift: 0.03,
      specimenDisplacement: 0.05,
      background: { constant: 200, slope: -0.5 },
      noise: { seed: 7 },
    });
    // Started 0.3 % off on a and c, −0.2 % on b, 0.15° on β, without the offsets.
    const start: Cell = { ...s.cell, a: s.cell.a * 1.003, b: s.cell.b * 0.998, c: s.cell.c * 1.0025, beta: s.cell.beta + 0.15 };
    const fit = fitWholePattern(
      inputOf(
        sim.twoTheta,
        sim.intensity,
        [{ system: "monoclinic", centering: "P", cell: start }],
        { ...NO_CORRECTION, kind: "zero_and_displacement" },
        sim.esd,
      ),
    );
    expectFinite(fit);
    const { cell, esd } = fit.phases[0];
    // The published cell of structures.ts (baddeleyite, a = 5.1505, b = 5.2116, c = 5.3173 Å, β = 99.23°) is the
    // truth the scan was simulated from.
    for (const key of ["a", "b", "c"] as const) {
      expect(Math.abs(cell[key] - s.cell[key])).toBeLessThanOrEqual(2e-3);
      // The esds are honest: the truth within three of them.
      expect(Math.abs(cell[key] - s.cell[key])).toBeLessThanOrEqual(3 * esd![key]);
    }
    expect(Math.abs(cell.beta - s.cell.beta)).toBeLessThanOrEqual(0.02);
    // Counting noise only: GoF near 1 (the model is the simulator's).
    expect(fit.GoF).toBeGreaterThan(0.9);
    expect(fit.GoF).toBeLessThan(1.2);
    // The simulator's Caglioti widths (DEFAULT_PEAK_SHAPE) come back within 5 % across the scan.
    for (const twoTheta of [20, 60, 100]) {
      expect(Math.abs(fittedFwhm(fit, twoTheta) / cagliotiFwhm(DEFAULT_PEAK_SHAPE, twoTheta) - 1)).toBeLessThanOrEqual(0.05);
    }
  });

  it("three phases, 7k points: every cell recovered, Rwp close to Rexp", () => {
    const structures = [STRUCTURES.corundum, STRUCTURES.zincite, STRUCTURES.rutile];
    const { x, y } = mixture(structures, [1, 0.6, 0.4], { min: 10, max: 150, step: 0.02, zeroShift: 0.02, seed: 3 });
    expect(x.length).toBe(7001);
    // Declared 0.1 % off (a) and −0.08 % (c), as a peak refinement of a mixture may hand them over.
    const phases = structures.map((s) => ({
      system: s.system,
      centering: s.centering,
      cell: { ...s.cell, a: s.cell.a * 1.001, b: s.cell.a * 1.001, c: s.cell.c * 0.9992 },
    }));
    const fit = fitWholePattern(inputOf(x, y, phases, NO_CORRECTION));
    expectFinite(fit);
    // The cells of structures.ts (NIST SRM 676a corundum, SRM 674b zincite and rutile) are the truth.
    fit.phases.forEach((phase, k) => {
      for (const key of ["a", "c"] as const) {
        expect(Math.abs(phase.cell[key] - structures[k].cell[key])).toBeLessThanOrEqual(3e-4);
        expect(Math.abs(phase.cell[key] - structures[k].cell[key])).toBeLessThanOrEqual(4 * phase.esd![key]);
      }
    });
    expect(Math.abs(fit.zeroShift - 0.02)).toBeLessThanOrEqual(0.005);
    // Counting noise only: Rwp within 10 % of Rexp, GoF = (Rwp/Rexp)² near 1.
    expect(fit.Rwp / fit.Rexp).toBeLessThan(1.1);
    expect(fit.GoF).toBeGreaterThan(0.9);
    expect(fit.GoF).toBeLessThan(1.2);
    // The parameters count every extracted intensity: more than the reflections' distinct positions' share of
    // the non-intensity ones (cells 6, zero 1, profile 7, background 4).
    expect(fit.parameters).toBeGreaterThan(18 + 100);
    expect(fit.points).toBe(7001);
    // The calculated curve is the background plus the phases: the phases' share is non-negative everywhere.
    expect(fit.phaseProfiles.every((p) => p.every((v) => v >= -1e-6))).toBe(true);
  });

  it("a wrong cell held in place shows as a misfit: Rwp several times that of the right cell", () => {
    const s = STRUCTURES.corundum;
    const { x, y } = mixture([s], [1], { min: 15, max: 120, step: 0.02, zeroShift: 0, seed: 11 });
    const held = (cell: Cell) => fitWholePattern({ ...inputOf(x, y, [{ system: s.system, centering: s.centering, cell }], NO_CORRECTION), refineCells: false });
    const right = held(s.cell);
    const wrong = held({ ...s.cell, a: s.cell.a * 1.01, b: s.cell.b * 1.01, c: s.cell.c * 1.01 });
    expectFinite(right);
    expectFinite(wrong);
    // Held at the truth, the fit leaves only counting noise; held 1 % off, whole peaks stand unexplained.
    expect(right.GoF).toBeLessThan(1.2);
    expect(wrong.Rwp).toBeGreaterThan(3 * right.Rwp);
    // Held means held: the cell comes back as declared, without esds.
    expect(wrong.phases[0].cell.a).toBeCloseTo(s.cell.a * 1.01, 9);
    expect(wrong.phases[0].esd).toBeNull();
  });
});

describe("whole-pattern fit: awkward input", () => {
  it("a phase without a reflection in the scan comes back empty, without esd, and spoils nothing", () => {
    const s = STRUCTURES.silicon;
    const { x, y } = mixture([s], [1], { min: 20, max: 100, step: 0.02, zeroShift: 0, seed: 5 });
    // A cubic cell of 0.7 Å: its largest d (0.7 Å) lies beyond the Bragg limit of Cu Kα (λ/2 = 0.77 Å).
    const fit = fitWholePattern(
      inputOf(
        x,
        y,
        [
          { system: "cubic", centering: "F", cell: s.cell },
          { system: "cubic", centering: "P", cell: cubic(0.7) },
        ],
        NO_CORRECTION,
      ),
    );
    expectFinite(fit);
    expect(fit.phases[1].reflections).toEqual([]);
    expect(fit.phases[1].esd).toBeNull();
    expect(fit.phaseProfiles[1].every((v) => v === 0)).toBe(true);
    // NIST SRM 640c silicon, a = 5.4311946 Å (structures.ts), still found.
    expect(Math.abs(fit.phases[0].cell.a - s.cell.a)).toBeLessThanOrEqual(2e-4);
  });

  it("a scan without counting statistics (scaled intensities) still gets figures", () => {
    const s = STRUCTURES.zincite;
    const { x, y } = mixture([s], [1], { min: 20, max: 110, step: 0.02, zeroShift: 0.01, seed: 9 });
    // Scaled by an arbitrary factor, as a converted file may hold: the variances come from the scatter (peaks.ts).
    const scaled = y.map((v) => v * 0.137);
    const fit = fitWholePattern(inputOf(x, scaled, [{ system: s.system, centering: s.centering, cell: s.cell }], NO_CORRECTION));
    expectFinite(fit);
    expect(fit.Rexp).toBeGreaterThan(0);
    expect(fit.GoF).toBeGreaterThan(0.5);
    expect(fit.GoF).toBeLessThan(2);
    // NIST SRM 674b zincite (structures.ts).
    expect(Math.abs(fit.phases[0].cell.a - s.cell.a)).toBeLessThanOrEqual(3e-4);
  });

  it("no phase at all: the background alone, figures finite", () => {
    const { x, y } = mixture([STRUCTURES.silicon], [0.001], { min: 20, max: 60, step: 0.05, zeroShift: 0, seed: 2 });
    const fit = fitWholePattern(inputOf(x, y, [], NO_CORRECTION));
    expectFinite(fit);
    expect(fit.phases).toEqual([]);
    expect(fit.reflections).toBe(0);
  });

  it("arrays that do not describe one scan are refused in a sentence", () => {
    const x = Float64Array.from({ length: 10 }, (_, i) => 20 + i);
    const bad: WholePatternInput = {
      twoTheta: x,
      intensity: new Float64Array(9),
      variance: new Float64Array(10),
      background: new Float64Array(10),
      lines: LINES,
      phases: [],
      correction: NO_CORRECTION,
      typicalFwhm: 0.1,
    };
    expect(() => fitWholePattern(bad)).toThrow(/one common length/);
  });
});
