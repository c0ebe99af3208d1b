// Cell geometry, Bragg's law, wavelengths and reflection lists against hand calculations, docs/reference-values.md and gemmi.
import { describe, expect, it } from "vitest";
import {
  type Cell,
  type Centering,
  type CrystalSystem,
  cellFromMetricParams,
  cellJacobian,
  cellVolume,
  checkCellForSystem,
  rhombohedralToHexagonal,
  checkCentering,
  dFromTwoTheta,
  dSpacing,
  freeParameters,
  metricParamsFromCell,
  qDesignRow,
  qFromMetricParams,
  twoThetaFromD,
} from "~/diffraction/cell";
import { allowedReflections, twoThetaOf } from "~/diffraction/reflections";
import { ANODE_LINES, K_EDGE_KEV, KALPHA2_RATIO, photonEnergyKeV, primaryWavelength, radiationLines } from "~/diffraction/wavelengths";
import { runReference } from "./python-reference";

const RAD = Math.PI / 180;
const cubic = (a: number): Cell => ({ a, b: a, c: a, alpha: 90, beta: 90, gamma: 90 });
const hexagonal = (a: number, c: number): Cell => ({ a, b: a, c, alpha: 90, beta: 90, gamma: 120 });

// Reciprocal vectors through a* = (b × c)/V (textbook definition), an independent path to 1/d.
function textbookD(cell: Cell, h: number, k: number, l: number): number {
  const ca = Math.cos(cell.alpha * RAD);
  const cb = Math.cos(cell.beta * RAD);
  const cg = Math.cos(cell.gamma * RAD);
  const sg = Math.sin(cell.gamma * RAD);
  const va = [cell.a, 0, 0];
  const vb = [cell.b * cg, cell.b * sg, 0];
  const cx = cell.c * cb;
  const cy = (cell.c * (ca - cb * cg)) / sg;
  const vc = [cx, cy, Math.sqrt(cell.c * cell.c - cx * cx - cy * cy)];
  const cross = (u: number[], v: number[]) => [u[1] * v[2] - u[2] * v[1], u[2] * v[0] - u[0] * v[2], u[0] * v[1] - u[1] * v[0]];
  const dot = (u: number[], v: number[]) => u[0] * v[0] + u[1] * v[1] + u[2] * v[2];
  const volume = dot(va, cross(vb, vc));
  const [as, bs, cs] = [cross(vb, vc), cross(vc, va), cross(va, vb)].map((v) => v.map((x) => x / volume));
  const g = [0, 1, 2].map((i) => h * as[i] + k * bs[i] + l * cs[i]);
  return 1 / Math.sqrt(dot(g, g));
}

describe("Bragg's law", () => {
  it("gives Si 111 at 28.442° for a = 5.431 Å with Cu Kα1 (docs/reference-values.md#silicon-reflections)", () => {
    const d = dSpacing(cubic(5.431), { h: 1, k: 1, l: 1 });
    expect(d).toBeCloseTo(3.1356, 4); // docs/reference-values.md#silicon-reflections
    expect(twoThetaFromD(d, 1.5405929)).toBeCloseTo(28.442, 3); // docs/reference-values.md#silicon-reflections
  });

  it("inverts: d = λ / (2 sin θ) (hand calculation)", () => {
    // Hand calculation: λ = 1.540593 Å, 2θ = 60° → d = λ / (2 · 0.5) = λ.
    expect(dFromTwoTheta(60, 1.540593)).toBeCloseTo(1.540593, 12);
    // Hand calculation: 2θ = 90° → d = λ / √2.
    expect(dFromTwoTheta(90, 1)).toBeCloseTo(1 / Math.SQRT2, 12);
    expect(twoThetaFromD(1 / Math.SQRT2, 1)).toBeCloseTo(90, 10);
  });

  it("returns NaN beyond the Bragg limit λ/2d > 1 (hand calculation)", () => {
    expect(twoThetaFromD(0.7, 1.5406)).toBeNaN();
    expect(twoThetaFromD(0.5, 1)).toBeCloseTo(180, 10);
  });
});

describe("d-spacing formulas (hand calculation)", () => {
  it("cubic 1/d² = (h² + k² + l²)/a² (docs/reference-values.md#cell-geometry)", () => {
    expect(dSpacing(cubic(4.156826), { h: 2, k: 1, l: 0 })).toBeCloseTo(4.156826 / Math.sqrt(5), 12);
  });

  it("tetragonal 1/d² = (h² + k²)/a² + l²/c² (hand calculation, rutile cell of docs/reference-values.md#certified-lattice-parameters)", () => {
    const rutile: Cell = { a: 4.593927, b: 4.593927, c: 2.958875, alpha: 90, beta: 90, gamma: 90 };
    expect(dSpacing(rutile, { h: 1, k: 1, l: 0 })).toBeCloseTo(4.593927 / Math.SQRT2, 12);
    expect(dSpacing(rutile, { h: 1, k: 0, l: 1 })).toBeCloseTo(1 / Math.sqrt(1 / 4.593927 ** 2 + 1 / 2.958875 ** 2), 12);
  });

  it("hexagonal 1/d² = 4(h² + hk + k²)/(3a²) + l²/c² (hand calculation, ZnO cell of docs/reference-values.md#certified-lattice-parameters)", () => {
    const zno = hexagonal(3.249897, 5.20653);
    expect(dSpacing(zno, { h: 1, k: 0, l: 0 })).toBeCloseTo((3.249897 * Math.sqrt(3)) / 2, 12);
    expect(dSpacing(zno, { h: 0, k: 0, l: 2 })).toBeCloseTo(5.20653 / 2, 12);
    const q101 = 4 / (3 * 3.249897 ** 2) + 1 / 5.20653 ** 2;
    expect(dSpacing(zno, { h: 1, k: 0, l: 1 })).toBeCloseTo(1 / Math.sqrt(q101), 12);
  });

  it("monoclinic 1/d² = (h²/a² + k² sin²β/b² + l²/c² − 2hl cosβ/(ac))/sin²β (hand calculation)", () => {
    const cell: Cell = { a: 10, b: 12, c: 15, alpha: 90, beta: 105, gamma: 90 };
    const [s, c] = [Math.sin(105 * RAD), Math.cos(105 * RAD)];
    for (const [h, k, l] of [
      [1, 0, 1],
      [1, 2, -3],
      [-2, 1, 4],
    ]) {
      const q = ((h * h) / 100 + (k * k * s * s) / 144 + (l * l) / 225 - (2 * h * l * c) / 150) / (s * s);
      expect(dSpacing(cell, { h, k, l })).toBeCloseTo(1 / Math.sqrt(q), 12);
    }
  });

  it("triclinic d agrees with reciprocal vectors a* = (b × c)/V (hand calculation)", () => {
    const cell: Cell = { a: 5.1, b: 6.3, c: 7.7, alpha: 81, beta: 97, gamma: 103 };
    for (const [h, k, l] of [
      [1, 0, 0],
      [0, 1, 1],
      [1, -2, 3],
      [-3, 2, 1],
    ]) {
      expect(dSpacing(cell, { h, k, l })).toBeCloseTo(textbookD(cell, h, k, l), 12);
    }
  });

  it("cell volume: cubic a³, hexagonal a²c·√3/2 (hand calculation)", () => {
    expect(cellVolume(cubic(5.431))).toBeCloseTo(5.431 ** 3, 9);
    expect(cellVolume(hexagonal(3, 5))).toBeCloseTo(9 * 5 * (Math.sqrt(3) / 2), 9);
  });
});

describe("cell constraints of the crystal systems (common practice)", () => {
  it("names the broken constraint in one sentence", () => {
    expect(checkCellForSystem("cubic", cubic(5.431))).toBeNull();
    expect(checkCellForSystem("cubic", { ...cubic(5.431), b: 5.44 })).toMatch(/a = b = c/);
    expect(checkCellForSystem("cubic", { ...cubic(5.431), beta: 91 })).toMatch(/all angles 90°/);
    expect(checkCellForSystem("hexagonal", hexagonal(3.25, 5.2))).toBeNull();
    expect(checkCellForSystem("trigonal", { ...hexagonal(4.76, 12.99), gamma: 90 })).toMatch(/gamma = 120°/);
    expect(checkCellForSystem("trigonal", { a: 5.128, b: 5.128, c: 5.128, alpha: 55.28, beta: 55.28, gamma: 55.28 })).toMatch(
      /hexagonal axes with centering R/,
    );
    expect(checkCellForSystem("monoclinic", { a: 10, b: 12, c: 15, alpha: 90, beta: 105, gamma: 90 })).toBeNull();
    expect(checkCellForSystem("monoclinic", { a: 10, b: 12, c: 15, alpha: 95, beta: 105, gamma: 90 })).toMatch(/alpha = gamma = 90°/);
    expect(checkCellForSystem("triclinic", { a: 5, b: 6, c: 7, alpha: 10, beta: 100, gamma: 170 })).toMatch(/do not form a cell/);
    expect(checkCellForSystem("orthorhombic", { a: -1, b: 6, c: 7, alpha: 90, beta: 90, gamma: 90 })).toMatch(/positive/);
  });

  it("converts rhombohedral axes to hexagonal axes with the same lattice (hand calculation)", () => {
    // Hand calculation, corundum: a_r = 5.128 Å, α = 55.28° → a_h = 2 · 5.128 · sin 27.64° = 4.758 Å,
    // c_h = 5.128 · √(3 (1 + 2 cos 55.28°)) = 12.99 Å; the hexagonal cell is three times the volume.
    const hex = rhombohedralToHexagonal(5.128, 55.28);
    expect(hex.a).toBeCloseTo(4.758, 3);
    expect(hex.c).toBeCloseTo(12.99, 2);
    const ca = Math.cos(55.28 * RAD);
    const rhombohedralVolume = 5.128 ** 3 * Math.sqrt(1 - 3 * ca * ca + 2 * ca ** 3);
    expect(cellVolume(hex) / rhombohedralVolume).toBeCloseTo(3, 9);
    expect(checkCellForSystem("trigonal", hex)).toBeNull();
  });

  it("allows only the lattices of each system", () => {
    expect(checkCentering("cubic", "F")).toBeNull();
    expect(checkCentering("cubic", "C")).toMatch(/cannot have centering C/);
    expect(checkCentering("trigonal", "R")).toBeNull();
    expect(checkCentering("hexagonal", "R")).not.toBeNull();
    expect(checkCentering("monoclinic", "C")).toBeNull();
    expect(checkCentering("tetragonal", "F")).not.toBeNull();
  });
});

describe("free reciprocal-metric parameters", () => {
  const cells: Record<CrystalSystem, Cell> = {
    cubic: cubic(5.431),
    tetragonal: { a: 4.59, b: 4.59, c: 2.96, alpha: 90, beta: 90, gamma: 90 },
    hexagonal: hexagonal(3.25, 5.21),
    trigonal: hexagonal(4.759, 12.99),
    orthorhombic: { a: 10.33, b: 6.01, c: 4.69, alpha: 90, beta: 90, gamma: 90 },
    monoclinic: { a: 10, b: 12, c: 15, alpha: 90, beta: 105, gamma: 90 },
    triclinic: { a: 5.1, b: 6.3, c: 7.7, alpha: 81, beta: 97, gamma: 103 },
  };

  for (const system of Object.keys(cells) as CrystalSystem[]) {
    it(`${system}: Q is linear in the free parameters and the cell round-trips`, () => {
      const cell = cells[system];
      const p = metricParamsFromCell(system, cell);
      expect(p).toHaveLength(freeParameters(system).length);
      for (const [h, k, l] of [
        [1, 0, 0],
        [1, 1, 1],
        [2, -1, 3],
        [0, 3, -2],
      ]) {
        expect(qFromMetricParams(system, p, { h, k, l })).toBeCloseTo(1 / dSpacing(cell, { h, k, l }) ** 2, 12);
        expect(qDesignRow(system, { h, k, l })).toHaveLength(p.length);
      }
      const back = cellFromMetricParams(system, p).cell;
      for (const key of ["a", "b", "c", "alpha", "beta", "gamma"] as const) expect(back[key]).toBeCloseTo(cell[key], 9);
    });

    it(`${system}: the cell Jacobian matches central differences`, () => {
      const p = metricParamsFromCell(system, cells[system]);
      const jac = cellJacobian(system, p);
      p.forEach((pj, j) => {
        const step = 1e-6 * Math.abs(pj) + 1e-9;
        const plus = cellFromMetricParams(
          system,
          p.map((x, i) => (i === j ? x + step : x)),
        ).cell;
        const minus = cellFromMetricParams(
          system,
          p.map((x, i) => (i === j ? x - step : x)),
        ).cell;
        (["a", "b", "c", "alpha", "beta", "gamma"] as const).forEach((key, r) => {
          const numeric = (plus[key] - minus[key]) / (2 * step);
          expect(jac[r][j]).toBeCloseTo(numeric, Math.max(0, 4 - Math.round(Math.log10(Math.abs(numeric) + 1))));
        });
      });
    });
  }

  it("cubic esd: a = A^(−1/2), so σa = σA / (2 A^(3/2)) (hand calculation)", () => {
    const A = 1 / 5.431 ** 2;
    const sigmaA = 1e-7;
    const { cell, esd } = cellFromMetricParams("cubic", [A], [[sigmaA ** 2]]);
    expect(cell.a).toBeCloseTo(5.431, 12);
    expect(esd?.a).toBeCloseTo(sigmaA / (2 * A ** 1.5), 12);
    expect(esd?.c).toBeCloseTo(esd?.a ?? 0, 15);
    expect(esd?.alpha).toBe(0);
  });
});

describe("wavelengths (docs/reference-values.md#x-ray-wavelengths)", () => {
  it("holds the reference table's values and the International Tables Kα1 lines", () => {
    expect(ANODE_LINES.Cu.kAlpha1).toBeCloseTo(1.54059292, 6); // International Tables Vol. C Table 4.2.2.6
    expect(ANODE_LINES.Mo.kAlpha1).toBeCloseTo(0.70931713, 6); // International Tables Vol. C Table 4.2.2.6
    expect(ANODE_LINES.Co.kBeta).toBe(1.620826); // docs/reference-values.md#x-ray-wavelengths (not pymatgen's mistyped 1.63079)
    expect(ANODE_LINES.Ag.kAlpha2).toBe(0.563813); // docs/reference-values.md#x-ray-wavelengths
  });

  it("lists Kα1 then Kα2 at the conventional 0.5 ratio (common practice)", () => {
    expect(KALPHA2_RATIO).toBe(0.5);
    expect(radiationLines({ kind: "anode", anode: "Cu", monochromation: "k_alpha_doublet" })).toEqual([
      { wavelength: 1.540593, weight: 1 },
      { wavelength: 1.544427, weight: 0.5 },
    ]);
    expect(radiationLines({ kind: "anode", anode: "Co", monochromation: "k_beta_filtered" })).toHaveLength(2);
    expect(radiationLines({ kind: "anode", anode: "Mo", monochromation: "k_alpha1_only" })).toEqual([{ wavelength: 0.709317, weight: 1 }]);
    expect(radiationLines({ kind: "custom", wavelength: 0.4959 })).toEqual([{ wavelength: 0.4959, weight: 1 }]);
    expect(primaryWavelength({ kind: "anode", anode: "Fe", monochromation: "k_alpha_doublet" })).toBe(1.936041);
  });

  it("Cu Kα1 is 8.048 keV and iron's K edge lies below it (docs/reference-values.md#k-absorption-edges)", () => {
    expect(photonEnergyKeV(ANODE_LINES.Cu.kAlpha1)).toBeCloseTo(8.048, 3); // docs/reference-values.md#x-ray-wavelengths
    for (const el of ["Cr", "Mn", "Fe", "Co"]) expect(K_EDGE_KEV[el]).toBeLessThan(8.048); // docs/reference-values.md#k-absorption-edges
    for (const el of ["Ni", "Cu", "Zn"]) expect(K_EDGE_KEV[el]).toBeGreaterThan(8.048); // docs/reference-values.md#k-absorption-edges
    // docs/reference-values.md#k-absorption-edges (lib: xraylib EdgeEnergy)
    const reference = { V: 5.465, Cr: 5.989, Mn: 6.539, Fe: 7.112, Co: 7.709, Ni: 8.333, Zr: 17.998, Rh: 23.22, Pd: 24.35 };
    for (const [el, e] of Object.entries(reference)) expect(K_EDGE_KEV[el]).toBeCloseTo(e, 3);
  });
});

describe("allowed reflections", () => {
  it("silicon (F-centred cubic): the reference list with powder multiplicities", () => {
    const list = allowedReflections(cubic(5.431), "cubic", "F", { dMin: 0.95 });
    // Lattice absences only: 222 stays (its zero comes from the structure factor), 200 goes.
    const names = list.map((r) => `${r.h}${r.k}${r.l}`);
    expect(names).toEqual(["111", "200", "220", "311", "222", "400", "331", "420", "422", "511", "333", "440"]);
    // Multiplicities of m-3m (International Tables Vol. A; common practice).
    expect(list.map((r) => r.multiplicity)).toEqual([8, 6, 12, 24, 8, 6, 24, 24, 24, 24, 8, 12]);
    // 511 and 333 coincide by accident and stay separate with the same d (docs/reference-values.md#silicon-reflections: 511+333 at 1.0452 Å).
    expect(list[9].d).toBeCloseTo(list[10].d, 12);
    expect(list[9].d).toBeCloseTo(1.0452, 4);
    expect(twoThetaOf(list[2], 1.5405929)).toBeCloseTo(47.302, 3); // docs/reference-values.md#silicon-reflections
  });

  it("applies I, A, B, C and R conditions (International Tables Vol. A)", () => {
    const bcc = allowedReflections(cubic(3), "cubic", "I", { dMin: 1 });
    expect(bcc.every((r) => (r.h + r.k + r.l) % 2 === 0)).toBe(true);
    const corundum = allowedReflections(hexagonal(4.759, 12.99), "trigonal", "R", { dMin: 1.5, equivalents: true });
    for (const r of corundum) for (const e of r.equivalents ?? []) expect((((-e.h + e.k + e.l) % 3) + 3) % 3).toBe(0);
    const c = allowedReflections({ a: 10, b: 12, c: 15, alpha: 90, beta: 105, gamma: 90 }, "monoclinic", "C", { dMin: 2 });
    expect(c.every((r) => (r.h + r.k) % 2 === 0)).toBe(true);
  });

  it("hexagonal: 100 has multiplicity 6, 110 6, 210 12, 002 2, 102 12 (6/mmm, common practice)", () => {
    const list = allowedReflections(hexagonal(3.25, 5.21), "hexagonal", "P", { dMin: 1 });
    const m = Object.fromEntries(list.map((r) => [`${r.h}${r.k}${r.l}`, r.multiplicity]));
    expect(m).toMatchObject({ "100": 6, "110": 6, "210": 12, "002": 2, "102": 12 });
  });

  it("multiplicities sum to the number of lattice points in the shell (hand count)", () => {
    const cell: Cell = { a: 10, b: 12, c: 15, alpha: 90, beta: 105, gamma: 90 };
    const list = allowedReflections(cell, "monoclinic", "P", { dMin: 2, dMax: 4 });
    let count = 0;
    for (let h = -10; h <= 10; h++)
      for (let k = -10; k <= 10; k++)
        for (let l = -10; l <= 10; l++) {
          if (!h && !k && !l) continue;
          const d = dSpacing(cell, { h, k, l });
          if (d >= 2 && d <= 4) count++;
        }
    expect(list.reduce((s, r) => s + r.multiplicity, 0)).toBe(count);
    expect(list.every((r, i) => i === 0 || list[i - 1].d >= r.d)).toBe(true);
  });
});

describe("allowed reflections against gemmi for every lattice (lib: gemmi 0.5.7 space-group machinery)", () => {
  const cases: { system: CrystalSystem; centering: Centering; spaceGroup: string; cell: Cell }[] = [
    { system: "cubic", centering: "P", spaceGroup: "P m -3 m", cell: cubic(4.1568) },
    { system: "cubic", centering: "I", spaceGroup: "I m -3 m", cell: cubic(3.1652) },
    { system: "cubic", centering: "F", spaceGroup: "F m -3 m", cell: cubic(5.6402) },
    { system: "tetragonal", centering: "P", spaceGroup: "P 4/m m m", cell: { a: 4.5939, b: 4.5939, c: 2.9589, alpha: 90, beta: 90, gamma: 90 } },
    { system: "tetragonal", centering: "I", spaceGroup: "I 4/m m m", cell: { a: 3.7845, b: 3.7845, c: 9.5143, alpha: 90, beta: 90, gamma: 90 } },
    { system: "hexagonal", centering: "P", spaceGroup: "P 6/m m m", cell: hexagonal(3.2499, 5.2065) },
    { system: "trigonal", centering: "P", spaceGroup: "P -3 m 1", cell: hexagonal(4.9134, 5.4052) },
    { system: "trigonal", centering: "R", spaceGroup: "R -3 m:H", cell: hexagonal(4.7591, 12.9918) },
    { system: "orthorhombic", centering: "P", spaceGroup: "P m m m", cell: { a: 10.332, b: 6.01, c: 4.692, alpha: 90, beta: 90, gamma: 90 } },
    { system: "orthorhombic", centering: "I", spaceGroup: "I m m m", cell: { a: 5.1, b: 7.3, c: 9.2, alpha: 90, beta: 90, gamma: 90 } },
    { system: "orthorhombic", centering: "F", spaceGroup: "F m m m", cell: { a: 5.1, b: 7.3, c: 9.2, alpha: 90, beta: 90, gamma: 90 } },
    { system: "orthorhombic", centering: "A", spaceGroup: "A m m m", cell: { a: 5.1, b: 7.3, c: 9.2, alpha: 90, beta: 90, gamma: 90 } },
    { system: "orthorhombic", centering: "B", spaceGroup: "B m m m", cell: { a: 5.1, b: 7.3, c: 9.2, alpha: 90, beta: 90, gamma: 90 } },
    { system: "orthorhombic", centering: "C", spaceGroup: "C m m m", cell: { a: 5.1, b: 7.3, c: 9.2, alpha: 90, beta: 90, gamma: 90 } },
    { system: "monoclinic", centering: "P", spaceGroup: "P 1 2/m 1", cell: { a: 5.1505, b: 5.2116, c: 5.3173, alpha: 90, beta: 99.23, gamma: 90 } },
    { system: "monoclinic", centering: "C", spaceGroup: "C 1 2/m 1", cell: { a: 9.7, b: 8.9, c: 5.3, alpha: 90, beta: 105.2, gamma: 90 } },
    { system: "monoclinic", centering: "A", spaceGroup: "A 1 2/m 1", cell: { a: 9.7, b: 8.9, c: 5.3, alpha: 90, beta: 105.2, gamma: 90 } },
    { system: "monoclinic", centering: "I", spaceGroup: "I 1 2/m 1", cell: { a: 9.7, b: 8.9, c: 5.3, alpha: 90, beta: 105.2, gamma: 90 } },
    { system: "triclinic", centering: "P", spaceGroup: "P -1", cell: { a: 5.1, b: 6.3, c: 7.7, alpha: 81, beta: 97, gamma: 103 } },
  ];
  const dMin = 1.1;

  it("same reflections, d-spacings and multiplicities, accidental coincidences kept apart", () => {
    const theirs = runReference<{ hkl: number[]; d: number; multiplicity: number }[][]>(
      "lattice_reflections.py",
      cases.map((c) => ({ spaceGroup: c.spaceGroup, cell: [c.cell.a, c.cell.b, c.cell.c, c.cell.alpha, c.cell.beta, c.cell.gamma], dMin })),
    );
    cases.forEach((c, i) => {
      const label = `${c.system} ${c.centering}`;
      const ours = allowedReflections(c.cell, c.system, c.centering, { dMin, equivalents: true });
      const reference = theirs[i];
      expect(ours.length, label).toBe(reference.length);
      // Each gemmi reflection is one of ours: same d, and its hkl among our representative's equivalents.
      for (const r of reference) {
        const match = ours.find((o) => o.equivalents?.some((e) => e.h === r.hkl[0] && e.k === r.hkl[1] && e.l === r.hkl[2]));
        expect(match, `${label} ${r.hkl.join(" ")}`).toBeDefined();
        expect(match?.multiplicity, `${label} ${r.hkl.join(" ")}`).toBe(r.multiplicity);
        expect(Math.abs((match?.d ?? 0) - r.d), `${label} ${r.hkl.join(" ")}`).toBeLessThan(1e-9);
      }
    });
  });
});
