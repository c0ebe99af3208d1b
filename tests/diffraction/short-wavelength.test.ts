// Short-wavelength (synchrotron) scans: narrow lines in a pattern compressed to low angles, where a dense
// low-symmetry pattern puts many reflections within a few line widths of each other. The check must index
// them and give the simulated cell back within its standard uncertainties, whatever the wavelength, step
// and line width (the indexing windows and the coarse search scale with the observed line width).
import { describe, expect, it } from "vitest";
import type { Cell } from "~/diffraction/cell";
import { runLatticeCheck } from "~/diffraction/check";
import { refineCell } from "~/diffraction/refine";
import { type PeakShape, simulatePattern } from "~/diffraction/simulate";
import { type CrystalStructure, STRUCTURES } from "~/diffraction/structures";
import type { Radiation } from "~/diffraction/wavelengths";

const KEYS = ["a", "b", "c", "alpha", "beta", "gamma"] as const;

// A high-resolution powder diffractometer with analyser crystals: lines about 0.005° 2θ wide over 2–54°
// (from memory); a wider, coarser-stepped variant stands for an area-detector instrument (from memory).
const ANALYSER: PeakShape = { U: 0.0001, V: -0.00005, W: 0.00003, eta: 0.3 };
const AREA_DETECTOR: PeakShape = { U: 0.0006, V: -0.0003, W: 0.00015, eta: 0.5 };
const CAPILLARY_BACKGROUND = { constant: 200, slope: -2, hump: { center: 8, fwhm: 4, height: 150 } };

interface Case {
  name: string;
  structure: CrystalStructure;
  wavelength: number;
  step: number;
  shape: PeakShape;
  zeroShift: number;
  /** Relative change of the simulated cell's lengths from the declared one, and of its free angle, degrees. */
  offset?: { lengths: [number, number, number]; angle: number };
  seed: number;
}

const CASES: Case[] = [
  { name: "monoclinic ZrO2, 0.30 Å", structure: STRUCTURES.baddeleyite, wavelength: 0.3, step: 0.0004, shape: ANALYSER, zeroShift: 0.02, seed: 1 },
  { name: "monoclinic ZrO2, 0.40 Å", structure: STRUCTURES.baddeleyite, wavelength: 0.4, step: 0.0004, shape: ANALYSER, zeroShift: 0.02, seed: 2 },
  { name: "monoclinic ZrO2, 0.70 Å", structure: STRUCTURES.baddeleyite, wavelength: 0.7, step: 0.0004, shape: ANALYSER, zeroShift: -0.01, seed: 3 },
  {
    name: "monoclinic ZrO2, 0.40 Å, cell 0.1 % off the declared",
    structure: STRUCTURES.baddeleyite,
    wavelength: 0.4,
    step: 0.0004,
    shape: ANALYSER,
    zeroShift: 0.015,
    offset: { lengths: [0.001, -0.0008, 0.0005], angle: 0.05 },
    seed: 4,
  },
  {
    name: "monoclinic ZrO2, 0.35 Å, wider lines, 0.002° steps",
    structure: STRUCTURES.baddeleyite,
    wavelength: 0.35,
    step: 0.002,
    shape: AREA_DETECTOR,
    zeroShift: -0.03,
    seed: 5,
  },
  {
    name: "orthorhombic LiFePO4, 0.30 Å",
    structure: STRUCTURES.lithiumIronPhosphate,
    wavelength: 0.3,
    step: 0.0004,
    shape: ANALYSER,
    zeroShift: 0.02,
    seed: 6,
  },
  { name: "hexagonal ZnO, 0.30 Å", structure: STRUCTURES.zincite, wavelength: 0.3, step: 0.0004, shape: ANALYSER, zeroShift: 0.01, seed: 7 },
];

function trueCell(c: Case): Cell {
  const cell = { ...c.structure.cell };
  if (!c.offset) return cell;
  const [fa, fb, fc] = c.offset.lengths;
  const system = c.structure.system;
  cell.a *= 1 + fa;
  cell.b = system === "cubic" || system === "tetragonal" || system === "hexagonal" ? cell.a : cell.b * (1 + fb);
  cell.c = system === "cubic" ? cell.a : cell.c * (1 + fc);
  if (system === "monoclinic") cell.beta += c.offset.angle;
  return cell;
}

describe("short-wavelength scans with narrow lines", () => {
  for (const c of CASES) {
    it(`${c.name}: consistent, the simulated cell within three esds`, () => {
      const radiation: Radiation = { kind: "custom", wavelength: c.wavelength };
      const cell = trueCell(c);
      const sim = simulatePattern({
        structure: c.structure,
        cell,
        radiation,
        twoThetaMin: 2,
        twoThetaMax: 54,
        step: c.step,
        peakShape: c.shape,
        zeroShift: c.zeroShift,
        background: CAPILLARY_BACKGROUND,
        noise: { seed: c.seed },
      });
      const result = runLatticeCheck(
        { twoTheta: sim.twoTheta, intensity: sim.intensity, esd: sim.esd, warnings: [] },
        { radiation, system: c.structure.system, centering: c.structure.centering, cell: c.structure.cell },
      );
      expect(result.verdict).toBe("consistent");
      expect(result.cell).not.toBeNull();
      expect(result.esd).not.toBeNull();
      // Most of the sample's peaks indexed and used, not a handful.
      expect(result.peaksUsed).toBeGreaterThan(0.6 * result.peaks.length);
      // The truth within three standard uncertainties (common practice for an unbiased fit).
      for (const key of KEYS) {
        const esd = result.esd![key];
        if (esd === 0) expect(result.cell![key]).toBeCloseTo(cell[key], 8);
        else expect(Math.abs(result.cell![key] - cell[key])).toBeLessThanOrEqual(3 * esd);
      }
      expect(Math.abs(result.zeroShift - c.zeroShift)).toBeLessThanOrEqual(3 * result.zeroShiftEsd!);
    });
  }

  // Exact positions of every reflection (Bragg's law on the declared cell): the refinement must index
  // them all and return the cell unchanged, at any wavelength.
  for (const wavelength of [0.3, 0.4, 0.42, 0.7]) {
    it(`refineCell indexes exact monoclinic ZrO2 positions at ${wavelength} Å`, () => {
      const structure = STRUCTURES.baddeleyite;
      const sim = simulatePattern({ structure, radiation: { kind: "custom", wavelength }, twoThetaMin: 2, twoThetaMax: 54, step: 0.0004, peakShape: ANALYSER });
      const peaks = sim.reflections
        .filter((r) => r.intensity >= 0.1)
        .map((r) => ({ twoTheta: r.twoTheta, twoThetaEsd: 0.0002, fwhm: r.fwhm, intensity: r.intensity }));
      const refinement = refineCell(peaks, { wavelength, system: "monoclinic", centering: "P", start: structure.cell, twoThetaMax: 54 });
      expect(refinement.assignments.length).toBe(peaks.length);
      expect(refinement.used).toBeGreaterThan(0.6 * peaks.length);
      for (const key of ["a", "b", "c"] as const) expect(refinement.cell[key]).toBeCloseTo(structure.cell[key], 5);
      expect(refinement.cell.beta).toBeCloseTo(structure.cell.beta, 4);
    });
  }
});
