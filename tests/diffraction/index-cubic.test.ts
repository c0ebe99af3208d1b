// Indexing from scratch for cubic lattices (no cell declared): P, I, F, and the call for lower symmetry.
import { describe, expect, it } from "vitest";
import { runLatticeCheck } from "~/diffraction/check";
import { allowedSquareSums, indexCubic } from "~/diffraction/index-cubic";
import { simulatePattern } from "~/diffraction/simulate";
import { CERIA, LANTHANUM_HEXABORIDE, RUTILE, SILICON, ZINCITE, type CrystalStructure } from "~/diffraction/structures";
import type { Radiation } from "~/diffraction/wavelengths";

const CU: Radiation = { kind: "anode", anode: "Cu", monochromation: "k_alpha_doublet" };

function check(structure: CrystalStructure, seed: number, cell = structure.cell) {
  const sim = simulatePattern({
    structure,
    cell,
    radiation: CU,
    twoThetaMin: 12 + seed,
    twoThetaMax: 120 + 5 * seed,
    step: 0.01 + 0.005 * seed,
    zeroShift: 0.02 * (seed - 1),
    background: { constant: 100, slope: -0.3 },
    noise: { seed },
  });
  return runLatticeCheck({ twoTheta: sim.twoTheta, intensity: sim.intensity, format: "xy", warnings: [] }, { radiation: CU, system: "cubic" });
}

describe("allowed N = h² + k² + l² (hand calculation from the centering conditions)", () => {
  it("P skips 7, 15, 23, 28 (not sums of three squares); I takes even N; F takes 3, 4, 8, 11, 12, 16, 19, 20", () => {
    expect(allowedSquareSums("P").slice(0, 10)).toEqual([1, 2, 3, 4, 5, 6, 8, 9, 10, 11]);
    expect(allowedSquareSums("P")).not.toContain(7);
    expect(allowedSquareSums("I").slice(0, 8)).toEqual([2, 4, 6, 8, 10, 12, 14, 16]);
    expect(allowedSquareSums("F").slice(0, 8)).toEqual([3, 4, 8, 11, 12, 16, 19, 20]);
  });
});

describe("indexing cubic patterns without a declared cell", () => {
  it.each([
    ["silicon (F)", SILICON, "F", 1],
    ["ceria (F)", CERIA, "F", 2],
    ["LaB6 (P)", LANTHANUM_HEXABORIDE, "P", 1],
  ] as const)("finds %s", (_name, structure, centering, seed) => {
    const result = check(structure, seed);
    expect(result.cubicIndexing).not.toBeNull();
    expect(result.cubicIndexing!.lowerSymmetryNeeded).toBe(false);
    expect(result.centering).toBe(centering);
    expect(Math.abs(result.cell!.a - structure.cell.a)).toBeLessThan(2e-4);
    expect(result.figuresOfMerit.M20).toBeGreaterThan(10);
    // Without a declaration to compare with, the verdict is at most review.
    expect(result.verdict).toBe("review");
  });

  it("finds a body-centred cubic cell (I), told apart from P with a/√2 by the 7th line", () => {
    // A bare I lattice, a = 3.3 Å, equal |F|² (simulator's cell-only mode).
    const sim = simulatePattern({
      cell: { a: 3.3, b: 3.3, c: 3.3, alpha: 90, beta: 90, gamma: 90 },
      system: "cubic",
      centering: "I",
      radiation: CU,
      twoThetaMin: 20,
      twoThetaMax: 145,
      step: 0.02,
      background: { constant: 50 },
      noise: { seed: 8 },
    });
    const found = indexCubic(
      runLatticeCheck({ twoTheta: sim.twoTheta, intensity: sim.intensity, format: "xy", warnings: [] }, { radiation: CU, system: "cubic" }).peaks.map((p) => ({
        twoTheta: p.twoTheta,
        twoThetaEsd: p.twoThetaEsd,
        fwhm: p.fwhm,
        intensity: p.intensity,
      })),
      { wavelength: 1.540593, twoThetaMax: 145 },
    );
    expect(found.candidates[0].centering).toBe("I");
    expect(found.candidates[0].a).toBeCloseTo(3.3, 3);
  });

  it("says clearly when a tetragonal or hexagonal sample needs lower symmetry", () => {
    for (const structure of [RUTILE, ZINCITE]) {
      const result = check(structure, 1);
      expect(result.cubicIndexing!.lowerSymmetryNeeded).toBe(true);
      expect(result.reasons.join(" ")).toMatch(/lower-symmetry/);
      expect(result.verdict).not.toBe("consistent");
    }
  });
});
