// Lines that are not the sample's: Kβ leaking through a filter, tungsten L lines of an aged tube, and the
// sample holder's own lines — labelled, kept out of indexing, refinement and the verdict.
// Sources: tungsten L energies from the NIST X-ray Transition Energies Database (Deslattes et al. 2003),
// λ = 12398.41857 eV·Å / E (docs/reference-values.md#lines-that-are-not-the-samples); LaB6 a = 4.156826 Å
// (NIST SRM 660c certificate, docs/reference-values.md#certified-lattice-parameters); Al a = 4.0495 Å
// (memory, docs/reference-values.md#sample-holders); Kβ leak-through a few tenths of a percent of Kα
// (common practice). The 2×10⁻⁴ Å target is the project's own for cubic cells.
import { describe, expect, it } from "vitest";
import { runLatticeCheck } from "~/diffraction/check";
import { matchStrayLines } from "~/diffraction/foreign-lines";
import { ALUMINIUM, AUSTENITIC_STEEL, holderLines, QUARTZ, SAMPLE_HOLDERS } from "~/diffraction/holders";
import { simulatePattern, type SimulationOptions } from "~/diffraction/simulate";
import { STRUCTURES } from "~/diffraction/structures";
import { ANODE_LINES, type Radiation, STRAY_LINE_LIMITS, strayLines, TUNGSTEN_L_LINES } from "~/diffraction/wavelengths";
import { runReference } from "./python-reference";

const LAB6_A = 4.156826; // NIST SRM 660c certificate
const CU_FILTERED: Radiation = { kind: "anode", anode: "Cu", monochromation: "k_beta_filtered" };
const w = (id: string) => TUNGSTEN_L_LINES.find((l) => l.id === id)!.wavelength;
const scanOf = (sim: { twoTheta: Float64Array; intensity: Float64Array }) =>
  ({ twoTheta: sim.twoTheta, intensity: sim.intensity, format: "xy", warnings: [] }) as never;
const cubic = (a: number) => ({ a, b: a, c: a, alpha: 90, beta: 90, gamma: 90 });

// A Ni filter passes the tungsten Lβ and Lγ lines more than Lα (they lie further above the Ni K edge), so all
// four appear (lib: xraylib transmission of 20 µm Ni, docs/reference-values.md#lines-that-are-not-the-samples).
const STRAY = [
  { wavelength: ANODE_LINES.Cu.kBeta, weight: 0.003 },
  { wavelength: w("W_La1"), weight: 0.0015 },
  { wavelength: w("W_Lb1"), weight: 0.002 },
  { wavelength: w("W_Lg1"), weight: 0.001 },
];

function lab6Scan(seed: number, extra: Partial<SimulationOptions> = {}) {
  return simulatePattern({
    structure: STRUCTURES.lanthanumHexaboride,
    radiation: CU_FILTERED,
    twoThetaMin: 15,
    twoThetaMax: 140,
    step: 0.01,
    scale: 100_000,
    zeroShift: 0.02 * seed - 0.03,
    specimenDisplacement: 0.06 * seed,
    background: { constant: 300, slope: -1 },
    noise: { seed },
    strayLines: STRAY,
    ...extra,
  });
}

describe("tungsten L lines and Kβ", () => {
  it("wavelengths are 12398.41857 eV·Å over the NIST/Deslattes energies (docs/reference-values.md#lines-that-are-not-the-samples)", () => {
    // Deslattes et al. 2003 measured energies, eV: Lα1 8398.242, Lα2 8335.34, Lβ1 9672.575, Lβ2 9964.133, Lγ1 11286.00.
    const energies: Record<string, number> = { W_La1: 8398.242, W_La2: 8335.34, W_Lb1: 9672.575, W_Lb2: 9964.133, W_Lg1: 11286.0 };
    for (const line of TUNGSTEN_L_LINES) {
      expect(line.energyEv).toBe(energies[line.id]);
      expect(line.wavelength).toBeCloseTo(12398.41857 / energies[line.id], 6);
    }
    // Hand calculation: W Lα1 1.4763 Å, a line of the same d as Cu Kα1 (1.5406 Å) sits 4 % lower in sin θ.
    expect(w("W_La1")).toBeCloseTo(1.4763, 4);
  });

  it("against xraylib's line energies within 0.1 %, and a Ni filter passes W Lβ1 and Lγ1 more than Lα1 (lib: xraylib)", () => {
    const energies = ["W_La1", "W_Lb1", "W_Lg1"].map((id) => TUNGSTEN_L_LINES.find((l) => l.id === id)!.energyEv / 1000);
    const answer = runReference<{ tungsten: Record<string, number>; transmission: number[] }>("xraylib_stray_lines.py", {
      filter: { element: "Ni", density: 8.908, thicknessUm: 20 },
      energiesKeV: energies,
    });
    for (const line of TUNGSTEN_L_LINES) expect(Math.abs(answer.tungsten[line.transition] * 1000 - line.energyEv) / line.energyEv).toBeLessThan(1e-3);
    const [la1, lb1, lg1] = answer.transmission;
    expect(lb1).toBeGreaterThan(3 * la1);
    expect(lg1).toBeGreaterThan(10 * la1);
  });

  it("limits per monochromation: none reach the sample through a primary Kα1 monochromator (common practice)", () => {
    expect(strayLines({ kind: "anode", anode: "Cu", monochromation: "k_alpha1_only" })).toEqual([]);
    expect(strayLines({ kind: "custom", wavelength: 0.7 })).toEqual([]);
    const filtered = strayLines(CU_FILTERED);
    expect(filtered.map((l) => l.label)).toEqual(["Cu Kβ", "W Lα1", "W Lα2", "W Lβ1", "W Lβ2", "W Lγ1"]);
    expect(STRAY_LINE_LIMITS.k_beta_filtered.kBeta).toBeGreaterThanOrEqual(0.01); // up to 1–2 % of the parent
    expect(STRAY_LINE_LIMITS.k_beta_filtered.kBeta).toBeLessThanOrEqual(0.02);
  });

  it("a simulated LaB6 standard with faint Kβ and W L lines stays consistent; the lines are labelled with their parents", () => {
    for (const seed of [1, 2, 3]) {
      const sim = lab6Scan(seed);
      const result = runLatticeCheck(scanOf(sim), { radiation: CU_FILTERED, system: "cubic", centering: "P", cell: cubic(4.1569) });
      expect(result.verdict, result.reasons.join(" ")).toBe("consistent");
      expect(Math.abs(result.cell!.a - LAB6_A)).toBeLessThanOrEqual(2e-4);
      expect(result.foreignPeaks.kbeta).toBeGreaterThanOrEqual(5);
      expect(result.foreignPeaks.tungstenL).toBeGreaterThanOrEqual(5);
      const kb110 = result.peaks.find((p) => p.foreign?.line === "Cu Kβ" && p.foreign.parentHkl?.join("") === "110");
      expect(kb110, "Cu Kβ of (110)").toBeDefined();
      // Same d as (110) at Cu Kβ (hand calculation: 2 asin(1.392234 / (2 · 4.156826/√2)) = 27.43°, less the offsets).
      expect(kb110!.twoTheta).toBeCloseTo(27.4, 0);
      for (const p of result.peaks.filter((q) => q.foreign)) {
        expect(p.hkl).toBeNull();
        expect(p.usedInRefinement).toBe(false);
        expect(p.foreign!.ratioToParent!).toBeLessThanOrEqual(0.02);
        expect(result.unindexed).not.toContain(p);
      }
    }
  });

  it("declared as a Kα1-monochromator instrument, the same lines count as unindexed and the verdict is review", () => {
    const sim = lab6Scan(1);
    const result = runLatticeCheck(scanOf(sim), {
      radiation: { kind: "anode", anode: "Cu", monochromation: "k_alpha1_only" },
      system: "cubic",
      centering: "P",
      cell: cubic(4.1569),
    });
    expect(result.foreignPeaks).toEqual({ kbeta: 0, tungstenL: 0, holder: 0 });
    expect(result.verdict).toBe("review");
  });

  it("a strong sample reflection exactly where a Kβ line would be is the sample's, not stolen", () => {
    // Tetragonal P with c = a · λ(Kα1)/λ(Kβ): (001) lies exactly at the Kβ position of (100).
    const a = 4.2;
    const c = (a * ANODE_LINES.Cu.kAlpha1) / ANODE_LINES.Cu.kBeta;
    const cell = { a, b: a, c, alpha: 90, beta: 90, gamma: 90 };
    const sim = simulatePattern({
      cell,
      system: "tetragonal",
      centering: "P",
      radiation: CU_FILTERED,
      twoThetaMin: 15,
      twoThetaMax: 120,
      step: 0.01,
      scale: 50_000,
      background: { constant: 200 },
      noise: { seed: 4 },
      strayLines: [{ wavelength: ANODE_LINES.Cu.kBeta, weight: 0.003 }],
    });
    const result = runLatticeCheck(scanOf(sim), { radiation: CU_FILTERED, system: "tetragonal", centering: "P", cell });
    const p001 = result.peaks.find((p) => p.hkl?.join("") === "001");
    expect(p001, "(001) indexed").toBeDefined();
    expect(p001!.foreign ?? null).toBeNull();
    expect(result.verdict).toBe("consistent");
  });

  it("the matching: a faint peak at the predicted place is taken, a stronger one is not (limits of wavelengths.ts)", () => {
    const parent = { twoTheta: 30.0, twoThetaEsd: 0.0005, fwhm: 0.05, intensity: 1000 };
    const lines = strayLines(CU_FILTERED).filter((l) => l.id === "kbeta");
    // Hand calculation: sin θβ = (1.392234/1.540593) · sin 15° = 0.903701 · 0.258819 = 0.233895 → 2θβ = 27.0530°.
    const at = 2 * Math.asin((ANODE_LINES.Cu.kBeta / ANODE_LINES.Cu.kAlpha1) * Math.sin((15 * Math.PI) / 180)) * (180 / Math.PI);
    expect(at).toBeCloseTo(27.053, 3);
    const faint = { twoTheta: at, twoThetaEsd: 0.003, fwhm: 0.05, intensity: 3 };
    const strong = { ...faint, intensity: 50 };
    const off = { ...faint, twoTheta: at + 0.1 };
    expect(matchStrayLines([parent, faint], lines, { wavelength: ANODE_LINES.Cu.kAlpha1 }).get(1)?.label).toBe("Cu Kβ");
    expect(matchStrayLines([parent, strong], lines, { wavelength: ANODE_LINES.Cu.kAlpha1 }).has(1)).toBe(false);
    expect(matchStrayLines([parent, off], lines, { wavelength: ANODE_LINES.Cu.kAlpha1 }).has(1)).toBe(false);
  });
});

describe("sample holder lines", () => {
  it("the holder list names every id with a plain label", () => {
    expect(SAMPLE_HOLDERS.map((h) => h.id)).toEqual(["none", "aluminium", "silicon_zero_background", "quartz_zero_background", "glass", "pmma", "steel"]);
    for (const h of SAMPLE_HOLDERS) expect(h.label).toMatch(/^[A-Z]/);
    expect(holderLines("glass", 1.540593, 140)).toEqual([]);
    expect(holderLines("pmma", 1.540593, 140)).toEqual([]);
  });

  it("the holder phases' unit-cell sites are gemmi's expansion of their asymmetric units (lib: gemmi)", () => {
    const phases = [ALUMINIUM, QUARTZ, AUSTENITIC_STEEL];
    const expanded = runReference<{ element: string; x: number; y: number; z: number }[][]>(
      "expand_sites.py",
      phases.map((s) => ({ spaceGroup: s.spaceGroup, cell: [s.cell.a, s.cell.b, s.cell.c, s.cell.alpha, s.cell.beta, s.cell.gamma], sites: s.sites })),
    );
    const near = (u: number, v: number) => Math.abs(((((u - v + 0.5) % 1) + 1) % 1) - 0.5) < 1e-5;
    phases.forEach((s, i) => {
      expect(s.atoms.length, s.name).toBe(expanded[i].length);
      for (const atom of s.atoms) {
        expect(expanded[i].some((t) => t.element === atom.element && near(t.x, atom.x) && near(t.y, atom.y) && near(t.z, atom.z))).toBe(true);
      }
    });
  });

  it("aluminium and quartz lines agree with pymatgen's pattern of the same structures (lib: pymatgen XRDCalculator)", () => {
    const spec = (s: typeof ALUMINIUM) => ({
      name: s.name,
      spaceGroup: s.spaceGroup,
      cell: [s.cell.a, s.cell.b, s.cell.c, s.cell.alpha, s.cell.beta, s.cell.gamma],
      atoms: s.atoms,
      wavelength: 1.540593,
      twoThetaMax: 90,
    });
    const answer = runReference<Record<string, { pymatgen: { twoTheta: number; intensity: number }[] }>>("powder_reference.py", [
      spec(ALUMINIUM),
      spec(QUARTZ),
    ]);
    for (const [holder, structure] of [
      ["aluminium", ALUMINIUM],
      ["quartz_zero_background", QUARTZ],
    ] as const) {
      const ours = holderLines(holder, 1.540593, 90);
      const theirs = answer[structure.name].pymatgen.filter((l) => l.intensity >= 5);
      for (const line of theirs)
        expect(
          ours.some((o) => Math.abs(o.twoTheta - line.twoTheta) < 0.01),
          `${structure.name} ${line.twoTheta}`,
        ).toBe(true);
    }
    // Aluminium 111 at 38.47° 2θ with Cu Kα1 (hand calculation: 2 asin(1.540593 · √3 / (2 · 4.0495))).
    expect(holderLines("aluminium", 1.540593, 90)[0].twoTheta).toBeCloseTo(38.47, 2);
  });

  it("aluminium holder lines beside a ZnO sample are labelled holder, not unindexed, and the verdict stays consistent", () => {
    const radiation: Radiation = { kind: "anode", anode: "Cu", monochromation: "k_alpha_doublet" };
    const common = { radiation, twoThetaMin: 20, twoThetaMax: 120, step: 0.01, zeroShift: 0.03 } as const;
    const sample = simulatePattern({ ...common, structure: STRUCTURES.zincite, scale: 20_000, background: { constant: 150 }, noise: { seed: 7 } });
    const holder = simulatePattern({ ...common, structure: ALUMINIUM, scale: 3000, background: { constant: 0 } });
    const scan = { twoTheta: sample.twoTheta, intensity: sample.intensity.map((v, i) => v + Math.round(holder.intensity[i])) };
    const zno = STRUCTURES.zincite;
    const options = { radiation, system: zno.system, centering: zno.centering, cell: zno.cell };
    const labelled = runLatticeCheck(scanOf(scan), { ...options, holder: "aluminium" });
    expect(labelled.foreignPeaks.holder).toBeGreaterThanOrEqual(3);
    const al111 = labelled.peaks.find((p) => p.foreign?.origin === "holder" && p.foreign.holderHkl?.join("") === "111");
    expect(al111?.foreign?.line).toBe("Al");
    expect(labelled.unindexed.filter((p) => p.relativeIntensity >= 10)).toEqual([]);
    expect(labelled.verdict).toBe("consistent");
    const unlabelled = runLatticeCheck(scanOf(scan), options);
    expect(unlabelled.foreignPeaks.holder).toBe(0);
    expect(unlabelled.verdict).toBe("review");
  });
});
