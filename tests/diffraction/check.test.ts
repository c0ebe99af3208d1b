// The whole check on simulated scans: verdicts for the right phase, a wrong phase, an off cell and an impurity.
// Sources: the true cells are those of app/diffraction/structures.ts — silicon is NIST SRM 640c's certified
// a = 5.4311946 Å (docs/reference-values.md#certified-lattice-parameters, certificate); rutile and ZnO cells are NIST SRM 674b values (same section); the NaCl
// cell (5.6402 Å) and all atom positions are from memory (common textbook values).
// The 2e-4 Å tolerance is the project's accuracy target for cubic cells; the 0.3 % / 3 % offsets are our own cases.
import { describe, expect, it } from "vitest";
import type { Cell } from "~/diffraction/cell";
import { checkScanFile, runLatticeCheck, type LatticeCheckOptions } from "~/diffraction/check";
import { formatScanAsXy, simulatePattern, type SimulationOptions } from "~/diffraction/simulate";
import { HALITE, RUTILE, SILICON, STRUCTURES, ZINCITE, type CrystalStructure } from "~/diffraction/structures";
import type { Radiation } from "~/diffraction/wavelengths";

const CU: Radiation = { kind: "anode", anode: "Cu", monochromation: "k_alpha_doublet" };

function scanOf(structure: CrystalStructure, extra: Partial<SimulationOptions> = {}) {
  const sim = simulatePattern({
    structure,
    radiation: CU,
    twoThetaMin: 10,
    twoThetaMax: 130,
    step: 0.02,
    background: { constant: 150, slope: -0.4 },
    noise: { seed: 11 },
    ...extra,
  });
  return { twoTheta: sim.twoTheta, intensity: sim.intensity, format: "xy" as const, warnings: [] };
}

const declare = (s: CrystalStructure, cell: Cell = s.cell): LatticeCheckOptions => ({
  radiation: CU,
  system: s.system,
  centering: s.centering,
  cell,
});

describe("verdicts", () => {
  it("a silicon scan checked against silicon is consistent", () => {
    const result = runLatticeCheck(scanOf(SILICON, { zeroShift: 0.04 }), declare(SILICON));
    expect(result.verdict).toBe("consistent");
    expect(result.reasons.length).toBeGreaterThan(0);
    expect(result.zeroShift).toBeCloseTo(0.04, 2);
    expect(result.peaks.every((p) => p.hkl !== null)).toBe(true);
    expect(result.figuresOfMerit.M20).toBeGreaterThan(10);
    expect(result.fittedProfile.length).toBe(result.background.length);
    expect(result.reflections.length).toBeGreaterThan(5);
  });

  it("a rutile scan checked against a declared NaCl cell is inconsistent", () => {
    const result = runLatticeCheck(scanOf(RUTILE), declare(HALITE));
    expect(result.verdict).toBe("inconsistent");
  });

  it("a NaCl scan checked against rutile is inconsistent", () => {
    const result = runLatticeCheck(scanOf(HALITE), declare(RUTILE));
    expect(result.verdict).toBe("inconsistent");
  });

  it("a declared cell 3 % off the sample's is inconsistent", () => {
    const a = SILICON.cell.a * 1.03;
    const result = runLatticeCheck(scanOf(SILICON), declare(SILICON, { ...SILICON.cell, a, b: a, c: a }));
    expect(result.verdict).toBe("inconsistent");
    const z = ZINCITE.cell;
    const off = runLatticeCheck(scanOf(ZINCITE), declare(ZINCITE, { ...z, a: z.a * 0.97, b: z.b * 0.97, c: z.c * 0.97 }));
    expect(off.verdict).toBe("inconsistent");
  });

  it("a declared cell 0.3 % off is refined onto the sample's cell", () => {
    const a = SILICON.cell.a * 1.003;
    const result = runLatticeCheck(scanOf(SILICON), declare(SILICON, { ...SILICON.cell, a, b: a, c: a }));
    expect(result.verdict).toBe("consistent");
    expect(Math.abs(result.cell!.a - SILICON.cell.a)).toBeLessThan(2e-4);
    expect(result.deviation!.relative.a).toBeCloseTo(-0.003, 3);
  });

  it("an impurity phase mixed in gives review with unindexed peaks", () => {
    const main = scanOf(ZINCITE);
    const impurity = scanOf(HALITE, { scale: 2500, background: { constant: 0 }, noise: { seed: 5 } });
    const mixed = { ...main, intensity: main.intensity.map((v, i) => v + impurity.intensity[i]) };
    const result = runLatticeCheck(mixed, declare(ZINCITE));
    expect(result.verdict).toBe("review");
    expect(result.unindexed.length).toBeGreaterThan(0);
    expect(result.reasons.join(" ")).toMatch(/another phase/);
  });

  it("a silicon scan with 15 % rutile is review, not forced and not rejected", () => {
    const main = scanOf(SILICON, { noise: { seed: 21 } });
    const impurity = scanOf(RUTILE, { scale: 1500, background: { constant: 0 }, noise: { seed: 22 } });
    const mixed = { ...main, intensity: main.intensity.map((v, i) => v + impurity.intensity[i]) };
    const result = runLatticeCheck(mixed, declare(SILICON));
    expect(result.verdict).toBe("review");
    expect(Math.abs(result.cell!.a - SILICON.cell.a)).toBeLessThan(2e-4);
    expect(result.unindexed.length).toBeGreaterThanOrEqual(3);
  });

  it("an olivine cathode with a few per cent of zincite keeps its own cell (the impurity does not pull the indexing away)", () => {
    // Noiseless, so nothing but the impurity's lines can disturb it; LiFePO4 cell from structures.ts (from memory).
    const main = scanOf(STRUCTURES.lithiumIronPhosphate, { noise: undefined, zeroShift: 0.03 });
    for (const scale of [300, 600]) {
      const impurity = scanOf(ZINCITE, { scale, background: { constant: 0 }, noise: undefined, zeroShift: 0.03 });
      const mixed = { ...main, intensity: main.intensity.map((v, i) => Math.round(v + impurity.intensity[i])) };
      const result = runLatticeCheck(mixed, declare(STRUCTURES.lithiumIronPhosphate));
      expect(result.verdict).not.toBe("inconsistent");
      expect(Math.abs(result.cell!.a - STRUCTURES.lithiumIronPhosphate.cell.a)).toBeLessThan(1e-3);
      expect(Math.abs(result.cell!.c - STRUCTURES.lithiumIronPhosphate.cell.c)).toBeLessThan(1e-3);
    }
  });
});

describe("every phase checked against every other phase's declaration", () => {
  const all = Object.values(STRUCTURES);
  // Same lattice type and cells within 1 % (silicon and ceria, both F-cubic near 5.42 Å) are the same
  // lattice to a lattice check; those pairs are left out.
  const sameLattice = (x: CrystalStructure, y: CrystalStructure) =>
    x.system === y.system && x.centering === y.centering && (["a", "b", "c"] as const).every((k) => Math.abs(x.cell[k] - y.cell[k]) / y.cell[k] < 0.01);
  for (const sample of all) {
    it(`a ${sample.formula} scan is inconsistent with every other declared phase`, () => {
      const scan = scanOf(sample, { noise: { seed: sample.formula.length } });
      for (const declared of all) {
        if (declared === sample || sameLattice(sample, declared)) continue;
        const result = runLatticeCheck(scan, declare(declared));
        expect(result.verdict, `${sample.formula} declared as ${declared.formula}: ${result.reasons.join(" ")}`).toBe("inconsistent");
      }
    });
  }
});

describe("checkScanFile", () => {
  it("parses and checks, or returns one sentence", () => {
    const sim = simulatePattern({ structure: SILICON, radiation: CU, twoThetaMin: 20, twoThetaMax: 100, step: 0.02, noise: { seed: 3 } });
    const good = checkScanFile(formatScanAsXy(sim), declare(SILICON));
    expect(good.ok && good.result.verdict).toBe("consistent");
    const bad = checkScanFile("", declare(SILICON));
    expect(bad).toEqual({ ok: false, error: "The file is empty." });
    const flat = checkScanFile(Array.from({ length: 500 }, (_, i) => `${10 + i * 0.02} ${100 + ((i * 7919) % 13) - 6}`).join("\n"), declare(SILICON));
    expect(flat.ok).toBe(false);
    if (!flat.ok) expect(flat.error).toMatch(/flat line/);
    const badCell = checkScanFile(formatScanAsXy(sim), { ...declare(SILICON), cell: { ...SILICON.cell, b: 6 } });
    expect(badCell.ok).toBe(false);
  });
});
