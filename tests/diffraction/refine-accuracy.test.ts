// Accuracy of the refined cell on simulated noisy scans across every crystal system but triclinic and
// every anode: cubic |Δa| ≤ 2×10⁻⁴ Å, other systems |Δ| ≤ 2×10⁻³ Å and ≤ 0.05°, the truth within three
// standard uncertainties (targets of the issue). Seeds, widths, steps, ranges, backgrounds, offsets and the
// declared cell's error all vary from case to case so the engine is not tuned to one pattern.
import { describe, expect, it } from "vitest";
import type { Cell } from "~/diffraction/cell";
import { runLatticeCheck, type LatticeCheckResult } from "~/diffraction/check";
import { mulberry32, simulatePattern, type SimulationOptions } from "~/diffraction/simulate";
import { STRUCTURES, type CrystalStructure } from "~/diffraction/structures";
import { type Anode, ANODES, type Radiation } from "~/diffraction/wavelengths";

const KEYS = ["a", "b", "c", "alpha", "beta", "gamma"] as const;

// Scan ranges that a lab would use with each anode for lattice parameters (common practice: 10–140° 2θ
// for Cu; shorter wavelengths compress the pattern, longer ones stretch it).
const RANGE: Record<Anode, [number, number]> = {
  Cr: [15, 155],
  Fe: [12, 150],
  Co: [12, 145],
  Cu: [10, 140],
  Mo: [5, 70],
  Ag: [4, 55],
};

interface Case {
  structure: CrystalStructure;
  anode: Anode;
  seed: number;
  refine: "zero_shift" | "displacement";
}

function simulateCase({ structure, anode, seed, refine }: Case) {
  const rand = mulberry32(seed * 7919 + 13);
  const pick = <T>(xs: readonly T[]) => xs[Math.floor(rand() * xs.length)];
  const [lo, hi] = RANGE[anode];
  const short = anode === "Mo" || anode === "Ag";
  const widthScale = pick([0.7, 1, 1.4]);
  const monochromation = rand() < 0.8 ? "k_alpha_doublet" : "k_alpha1_only";
  const radiation: Radiation = { kind: "anode", anode, monochromation };
  const options: SimulationOptions = {
    structure,
    radiation,
    twoThetaMin: lo + rand() * 3,
    twoThetaMax: hi - rand() * 10,
    step: short ? pick([0.005, 0.008, 0.01]) : pick([0.01, 0.015, 0.02]),
    peakShape: { U: 0.004 * widthScale, V: -0.002 * widthScale, W: 0.002 * widthScale, eta: pick([0.3, 0.5, 0.7]) },
    scale: pick([5000, 10_000, 30_000]),
    background:
      rand() < 0.5
        ? { constant: 100 + 300 * rand(), slope: -1 - 2 * rand() }
        : { constant: 80 + 100 * rand(), slope: -0.5, hump: { center: lo + 10 + 15 * rand(), fwhm: 8 + 8 * rand(), height: 200 + 400 * rand() } },
    noise: { seed },
  };
  if (refine === "zero_shift") options.zeroShift = (rand() - 0.5) * 0.16;
  else options.specimenDisplacement = (rand() - 0.5) * 0.3;
  // The declared cell is off by up to ±0.2 % per length (and 0.1° in a free angle), as a declaration from
  // the literature would be.
  const declared: Cell = { ...structure.cell };
  const f = () => 1 + (rand() - 0.5) * 0.004;
  if (structure.system === "cubic") {
    const a = structure.cell.a * f();
    Object.assign(declared, { a, b: a, c: a });
  } else if (structure.system === "tetragonal" || structure.system === "hexagonal" || structure.system === "trigonal") {
    const a = structure.cell.a * f();
    Object.assign(declared, { a, b: a, c: structure.cell.c * f() });
  } else {
    Object.assign(declared, { a: structure.cell.a * f(), b: structure.cell.b * f(), c: structure.cell.c * f() });
    if (structure.system === "monoclinic") declared.beta = structure.cell.beta + (rand() - 0.5) * 0.2;
  }
  const sim = simulatePattern(options);
  const result = runLatticeCheck(
    { twoTheta: sim.twoTheta, intensity: sim.intensity, format: "xy", warnings: [] },
    { radiation, system: structure.system, centering: structure.centering, cell: declared, refine },
  );
  return { result, options };
}

function deviations(result: LatticeCheckResult, truth: Cell) {
  return KEYS.map((k) => {
    const delta = result.cell![k] - truth[k];
    const esd = result.esd![k];
    return { key: k, delta, z: esd > 0 ? delta / esd : delta === 0 ? 0 : Infinity };
  });
}

const STRUCTURE_LIST = Object.values(STRUCTURES);

describe("refined cells on simulated noisy scans, every system but triclinic × every anode", () => {
  let seed = 100;
  for (const structure of STRUCTURE_LIST) {
    for (const anode of ANODES) {
      const thisSeed = seed++;
      const refine = thisSeed % 3 === 0 ? "displacement" : "zero_shift";
      it(`${structure.name} (${structure.system}), ${anode}, ${refine}`, () => {
        const { result, options } = simulateCase({ structure, anode, seed: thisSeed, refine });
        expect(result.verdict).toBe("consistent");
        const lengthLimit = structure.system === "cubic" ? 2e-4 : 2e-3;
        for (const d of deviations(result, structure.cell)) {
          const limit = d.key.length === 1 ? lengthLimit : 0.05;
          expect(Math.abs(d.delta), `${d.key}: Δ = ${d.delta}`).toBeLessThanOrEqual(limit);
          expect(Math.abs(d.z), `${d.key}: Δ/esd = ${d.z}`).toBeLessThanOrEqual(3);
        }
        if (refine === "zero_shift") {
          expect(Math.abs(result.zeroShift - options.zeroShift!)).toBeLessThan(Math.max(3 * result.zeroShiftEsd!, 0.003));
        } else {
          // Displacement and cell are correlated (both shift lines as cos θ / tan θ); 0.02 mm is a few esds.
          expect(Math.abs(result.displacement - options.specimenDisplacement!)).toBeLessThan(Math.max(3 * result.displacementEsd!, 0.02));
        }
      });
    }
  }
});

describe("certified cells of line-position standards recovered from simulated noisy scans", () => {
  // docs/reference-values.md#certified-lattice-parameters: Si NIST SRM 640c 5.4311946 Å (certificate), LaB6 NIST SRM 660c 4.156826 Å (certificate),
  // CeO2 NIST SRM 674b 5.411651 Å (derived from tabulated d-spacings, pyFAI calibrant files).
  const standards: [string, CrystalStructure, number][] = [
    ["Si SRM 640c", STRUCTURES.silicon, 5.4311946],
    ["LaB6 SRM 660c", STRUCTURES.lanthanumHexaboride, 4.156826],
    ["CeO2 SRM 674b", STRUCTURES.ceria, 5.411651],
  ];
  for (const [name, structure, a] of standards) {
    for (const seed of [1, 2]) {
      it(`${name}, seed ${seed}`, () => {
        const cell = { a, b: a, c: a, alpha: 90, beta: 90, gamma: 90 };
        const radiation: Radiation = { kind: "anode", anode: "Cu", monochromation: "k_alpha_doublet" };
        const sim = simulatePattern({
          structure,
          cell,
          radiation,
          twoThetaMin: 15 + seed,
          twoThetaMax: 135 + seed,
          step: 0.01 * (seed + 1),
          zeroShift: -0.03 * seed,
          background: { constant: 150, slope: -0.6, hump: { center: 22, fwhm: 10, height: 250 } },
          noise: { seed: 40 + seed },
        });
        const declared = { ...cell, a: a * 1.001, b: a * 1.001, c: a * 1.001 };
        const result = runLatticeCheck(
          { twoTheta: sim.twoTheta, intensity: sim.intensity, format: "xy", warnings: [] },
          { radiation, system: "cubic", centering: structure.centering, cell: declared },
        );
        expect(result.verdict).toBe("consistent");
        expect(Math.abs(result.cell!.a - a)).toBeLessThanOrEqual(2e-4);
        expect(Math.abs(result.cell!.a - a)).toBeLessThanOrEqual(3 * result.esd!.a);
      });
    }
  }
});

describe("a triclinic cell (beyond the issue's targets, same tolerances)", () => {
  it("refines all six parameters of a bare triclinic lattice from a declaration 0.2 % and 0.1° off", () => {
    const cell = { a: 5.1, b: 6.3, c: 7.2, alpha: 95.5, beta: 102.3, gamma: 88.7 };
    const radiation: Radiation = { kind: "anode", anode: "Cu", monochromation: "k_alpha_doublet" };
    const sim = simulatePattern({
      cell,
      system: "triclinic",
      centering: "P",
      radiation,
      twoThetaMin: 10,
      twoThetaMax: 80,
      step: 0.01,
      background: { constant: 100 },
      noise: { seed: 2 },
    });
    const declared = { a: 5.11, b: 6.29, c: 7.21, alpha: 95.4, beta: 102.4, gamma: 88.8 };
    const result = runLatticeCheck(
      { twoTheta: sim.twoTheta, intensity: sim.intensity, format: "xy", warnings: [] },
      { radiation, system: "triclinic", centering: "P", cell: declared },
    );
    expect(result.verdict).toBe("consistent");
    for (const d of deviations(result, cell)) {
      expect(Math.abs(d.delta)).toBeLessThanOrEqual(d.key.length === 1 ? 2e-3 : 0.05);
      expect(Math.abs(d.z)).toBeLessThanOrEqual(3);
    }
  });
});
