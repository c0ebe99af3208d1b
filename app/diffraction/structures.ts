// Small crystal structures for simulated scans and reference tests: line-position standards, common
// phases of the demo scenario and one monoclinic example.

import type { Cell, Centering, CrystalSystem } from "./cell";

/** One atom site in fractional coordinates; occupancy defaults to 1, Biso (Å²) to the simulation's default. */
export interface AtomSite {
  element: string;
  x: number;
  y: number;
  z: number;
  occupancy?: number;
  /** Isotropic displacement B = 8π²U in Å². */
  bIso?: number;
  /** Isotropic displacement U in Å² (used when bIso is absent). */
  uIso?: number;
}

/** A crystal structure: `atoms` is the full list of unit-cell sites, `sites` the asymmetric unit it came from. */
export interface CrystalStructure {
  name: string;
  formula: string;
  /** Hermann–Mauguin symbol with setting, for people and for tests that expand `sites`. */
  spaceGroup: string;
  system: CrystalSystem;
  centering: Centering;
  cell: Cell;
  sites: AtomSite[];
  atoms: AtomSite[];
}

// `atoms` were expanded from `sites` once with gemmi's space-group operators
// (tests/reference/expand_sites.py); tests/diffraction/structures.test.ts repeats the expansion.

/** Silicon, F d -3 m:1. Si on 8a, origin choice 1 (common textbook value); cell: NIST SRM 640c certificate (docs/reference-values.md#certified-lattice-parameters). */
export const SILICON: CrystalStructure = {
  name: "Silicon",
  formula: "Si",
  spaceGroup: "F d -3 m:1",
  system: "cubic",
  centering: "F",
  cell: { a: 5.4311946, b: 5.4311946, c: 5.4311946, alpha: 90, beta: 90, gamma: 90 },
  sites: [{ element: "Si", x: 0, y: 0, z: 0 }],
  atoms: [
    { element: "Si", x: 0, y: 0, z: 0 },
    { element: "Si", x: 0.25, y: 0.25, z: 0.25 },
    { element: "Si", x: 0, y: 0.5, z: 0.5 },
    { element: "Si", x: 0.75, y: 0.25, z: 0.75 },
    { element: "Si", x: 0.25, y: 0.75, z: 0.75 },
    { element: "Si", x: 0.75, y: 0.75, z: 0.25 },
    { element: "Si", x: 0.5, y: 0, z: 0.5 },
    { element: "Si", x: 0.5, y: 0.5, z: 0 },
  ],
};

/** Lanthanum hexaboride, P m -3 m. La on 1a, B on 6f with x = 0.1996 (from memory, common textbook value); cell: NIST SRM 660c certificate (docs/reference-values.md#certified-lattice-parameters). */
export const LANTHANUM_HEXABORIDE: CrystalStructure = {
  name: "Lanthanum hexaboride",
  formula: "LaB6",
  spaceGroup: "P m -3 m",
  system: "cubic",
  centering: "P",
  cell: { a: 4.156826, b: 4.156826, c: 4.156826, alpha: 90, beta: 90, gamma: 90 },
  sites: [
    { element: "La", x: 0, y: 0, z: 0 },
    { element: "B", x: 0.1996, y: 0.5, z: 0.5 },
  ],
  atoms: [
    { element: "La", x: 0, y: 0, z: 0 },
    { element: "B", x: 0.1996, y: 0.5, z: 0.5 },
    { element: "B", x: 0.5, y: 0.1996, z: 0.5 },
    { element: "B", x: 0.8004, y: 0.5, z: 0.5 },
    { element: "B", x: 0.5, y: 0.8004, z: 0.5 },
    { element: "B", x: 0.5, y: 0.5, z: 0.1996 },
    { element: "B", x: 0.5, y: 0.5, z: 0.8004 },
  ],
};

/** Sodium chloride (halite), F m -3 m. Na on 4a, Cl on 4b (rock-salt type); a = 5.6402 Å from memory. */
export const HALITE: CrystalStructure = {
  name: "Sodium chloride (halite)",
  formula: "NaCl",
  spaceGroup: "F m -3 m",
  system: "cubic",
  centering: "F",
  cell: { a: 5.6402, b: 5.6402, c: 5.6402, alpha: 90, beta: 90, gamma: 90 },
  sites: [
    { element: "Na", x: 0, y: 0, z: 0 },
    { element: "Cl", x: 0.5, y: 0.5, z: 0.5 },
  ],
  atoms: [
    { element: "Na", x: 0, y: 0, z: 0 },
    { element: "Na", x: 0, y: 0.5, z: 0.5 },
    { element: "Na", x: 0.5, y: 0, z: 0.5 },
    { element: "Na", x: 0.5, y: 0.5, z: 0 },
    { element: "Cl", x: 0.5, y: 0.5, z: 0.5 },
    { element: "Cl", x: 0.5, y: 0, z: 0 },
    { element: "Cl", x: 0, y: 0.5, z: 0 },
    { element: "Cl", x: 0, y: 0, z: 0.5 },
  ],
};

/** Cerium dioxide, F m -3 m. Ce on 4a, O on 8c (fluorite type, common textbook value); cell: NIST SRM 674b (docs/reference-values.md#certified-lattice-parameters). */
export const CERIA: CrystalStructure = {
  name: "Cerium dioxide",
  formula: "CeO2",
  spaceGroup: "F m -3 m",
  system: "cubic",
  centering: "F",
  cell: { a: 5.411651, b: 5.411651, c: 5.411651, alpha: 90, beta: 90, gamma: 90 },
  sites: [
    { element: "Ce", x: 0, y: 0, z: 0 },
    { element: "O", x: 0.25, y: 0.25, z: 0.25 },
  ],
  atoms: [
    { element: "Ce", x: 0, y: 0, z: 0 },
    { element: "Ce", x: 0, y: 0.5, z: 0.5 },
    { element: "Ce", x: 0.5, y: 0, z: 0.5 },
    { element: "Ce", x: 0.5, y: 0.5, z: 0 },
    { element: "O", x: 0.25, y: 0.25, z: 0.25 },
    { element: "O", x: 0.75, y: 0.25, z: 0.25 },
    { element: "O", x: 0.75, y: 0.75, z: 0.25 },
    { element: "O", x: 0.25, y: 0.75, z: 0.25 },
    { element: "O", x: 0.25, y: 0.75, z: 0.75 },
    { element: "O", x: 0.75, y: 0.75, z: 0.75 },
    { element: "O", x: 0.75, y: 0.25, z: 0.75 },
    { element: "O", x: 0.25, y: 0.25, z: 0.75 },
  ],
};

/** Titanium dioxide (rutile), P 42/m n m. Ti on 2a, O on 4f with x = 0.3049 (from memory, common textbook value); cell: NIST SRM 674b (docs/reference-values.md#certified-lattice-parameters). */
export const RUTILE: CrystalStructure = {
  name: "Titanium dioxide (rutile)",
  formula: "TiO2",
  spaceGroup: "P 42/m n m",
  system: "tetragonal",
  centering: "P",
  cell: { a: 4.593927, b: 4.593927, c: 2.958875, alpha: 90, beta: 90, gamma: 90 },
  sites: [
    { element: "Ti", x: 0, y: 0, z: 0 },
    { element: "O", x: 0.3049, y: 0.3049, z: 0 },
  ],
  atoms: [
    { element: "Ti", x: 0, y: 0, z: 0 },
    { element: "Ti", x: 0.5, y: 0.5, z: 0.5 },
    { element: "O", x: 0.3049, y: 0.3049, z: 0 },
    { element: "O", x: 0.1951, y: 0.8049, z: 0.5 },
    { element: "O", x: 0.6951, y: 0.6951, z: 0 },
    { element: "O", x: 0.8049, y: 0.1951, z: 0.5 },
  ],
};

/** Zinc oxide (zincite), P 63 m c. Zn and O on 2b, O at z = 0.3825 (from memory, common textbook value); cell: NIST SRM 674b (docs/reference-values.md#certified-lattice-parameters). */
export const ZINCITE: CrystalStructure = {
  name: "Zinc oxide (zincite)",
  formula: "ZnO",
  spaceGroup: "P 63 m c",
  system: "hexagonal",
  centering: "P",
  cell: { a: 3.249897, b: 3.249897, c: 5.20653, alpha: 90, beta: 90, gamma: 120 },
  sites: [
    { element: "Zn", x: 1 / 3, y: 2 / 3, z: 0 },
    { element: "O", x: 1 / 3, y: 2 / 3, z: 0.3825 },
  ],
  atoms: [
    { element: "Zn", x: 1 / 3, y: 2 / 3, z: 0 },
    { element: "Zn", x: 2 / 3, y: 1 / 3, z: 0.5 },
    { element: "O", x: 1 / 3, y: 2 / 3, z: 0.3825 },
    { element: "O", x: 2 / 3, y: 1 / 3, z: 0.8825 },
  ],
};

/** Aluminium oxide (corundum), R -3 c:H. Al on 12c with z = 0.35216, O on 18e with x = 0.30624 (from memory, common textbook values); cell: NIST SRM 676a (docs/reference-values.md#certified-lattice-parameters). */
export const CORUNDUM: CrystalStructure = {
  name: "Aluminium oxide (corundum)",
  formula: "Al2O3",
  spaceGroup: "R -3 c:H",
  system: "trigonal",
  centering: "R",
  cell: { a: 4.759091, b: 4.759091, c: 12.991779, alpha: 90, beta: 90, gamma: 120 },
  sites: [
    { element: "Al", x: 0, y: 0, z: 0.35216 },
    { element: "O", x: 0.30624, y: 0, z: 0.25 },
  ],
  atoms: [
    { element: "Al", x: 0, y: 0, z: 0.35216 },
    { element: "Al", x: 0, y: 0, z: 0.14784 },
    { element: "Al", x: 0, y: 0, z: 0.64784 },
    { element: "Al", x: 0, y: 0, z: 0.85216 },
    { element: "Al", x: 2 / 3, y: 1 / 3, z: 0.685493 },
    { element: "Al", x: 2 / 3, y: 1 / 3, z: 0.481173 },
    { element: "Al", x: 2 / 3, y: 1 / 3, z: 0.981173 },
    { element: "Al", x: 2 / 3, y: 1 / 3, z: 0.185493 },
    { element: "Al", x: 1 / 3, y: 2 / 3, z: 0.018827 },
    { element: "Al", x: 1 / 3, y: 2 / 3, z: 0.814507 },
    { element: "Al", x: 1 / 3, y: 2 / 3, z: 0.314507 },
    { element: "Al", x: 1 / 3, y: 2 / 3, z: 0.518827 },
    { element: "O", x: 0.30624, y: 0, z: 0.25 },
    { element: "O", x: 0, y: 0.30624, z: 0.25 },
    { element: "O", x: 0.69376, y: 0.69376, z: 0.25 },
    { element: "O", x: 0.69376, y: 0, z: 0.75 },
    { element: "O", x: 0, y: 0.69376, z: 0.75 },
    { element: "O", x: 0.30624, y: 0.30624, z: 0.75 },
    { element: "O", x: 0.972907, y: 1 / 3, z: 0.583333 },
    { element: "O", x: 2 / 3, y: 0.639573, z: 0.583333 },
    { element: "O", x: 0.360427, y: 0.027093, z: 0.583333 },
    { element: "O", x: 0.360427, y: 1 / 3, z: 0.083333 },
    { element: "O", x: 2 / 3, y: 0.027093, z: 0.083333 },
    { element: "O", x: 0.972907, y: 0.639573, z: 0.083333 },
    { element: "O", x: 0.639573, y: 2 / 3, z: 0.916667 },
    { element: "O", x: 1 / 3, y: 0.972907, z: 0.916667 },
    { element: "O", x: 0.027093, y: 0.360427, z: 0.916667 },
    { element: "O", x: 0.027093, y: 2 / 3, z: 0.416667 },
    { element: "O", x: 1 / 3, y: 0.360427, z: 0.416667 },
    { element: "O", x: 0.639573, y: 0.972907, z: 0.416667 },
  ],
};

/** Lithium iron phosphate (olivine), P n m a. Li on 4a, Fe, P, O1, O2 on 4c, O3 on 8d; cell and positions from memory (common literature values, good to about 0.002 in the coordinates). */
export const LITHIUM_IRON_PHOSPHATE: CrystalStructure = {
  name: "Lithium iron phosphate (olivine)",
  formula: "LiFePO4",
  spaceGroup: "P n m a",
  system: "orthorhombic",
  centering: "P",
  cell: { a: 10.332, b: 6.01, c: 4.692, alpha: 90, beta: 90, gamma: 90 },
  sites: [
    { element: "Li", x: 0, y: 0, z: 0 },
    { element: "Fe", x: 0.2822, y: 0.25, z: 0.9747 },
    { element: "P", x: 0.095, y: 0.25, z: 0.4182 },
    { element: "O", x: 0.0967, y: 0.25, z: 0.7428 },
    { element: "O", x: 0.4569, y: 0.25, z: 0.2061 },
    { element: "O", x: 0.1658, y: 0.0464, z: 0.2847 },
  ],
  atoms: [
    { element: "Li", x: 0, y: 0, z: 0 },
    { element: "Li", x: 0.5, y: 0, z: 0.5 },
    { element: "Li", x: 0.5, y: 0.5, z: 0.5 },
    { element: "Li", x: 0, y: 0.5, z: 0 },
    { element: "Fe", x: 0.2822, y: 0.25, z: 0.9747 },
    { element: "Fe", x: 0.2178, y: 0.75, z: 0.4747 },
    { element: "Fe", x: 0.7822, y: 0.25, z: 0.5253 },
    { element: "Fe", x: 0.7178, y: 0.75, z: 0.0253 },
    { element: "P", x: 0.095, y: 0.25, z: 0.4182 },
    { element: "P", x: 0.405, y: 0.75, z: 0.9182 },
    { element: "P", x: 0.595, y: 0.25, z: 0.0818 },
    { element: "P", x: 0.905, y: 0.75, z: 0.5818 },
    { element: "O", x: 0.0967, y: 0.25, z: 0.7428 },
    { element: "O", x: 0.4033, y: 0.75, z: 0.2428 },
    { element: "O", x: 0.5967, y: 0.25, z: 0.7572 },
    { element: "O", x: 0.9033, y: 0.75, z: 0.2572 },
    { element: "O", x: 0.4569, y: 0.25, z: 0.2061 },
    { element: "O", x: 0.0431, y: 0.75, z: 0.7061 },
    { element: "O", x: 0.9569, y: 0.25, z: 0.2939 },
    { element: "O", x: 0.5431, y: 0.75, z: 0.7939 },
    { element: "O", x: 0.1658, y: 0.0464, z: 0.2847 },
    { element: "O", x: 0.3342, y: 0.9536, z: 0.7847 },
    { element: "O", x: 0.6658, y: 0.4536, z: 0.2153 },
    { element: "O", x: 0.8342, y: 0.5464, z: 0.7153 },
    { element: "O", x: 0.8342, y: 0.9536, z: 0.7153 },
    { element: "O", x: 0.6658, y: 0.0464, z: 0.2153 },
    { element: "O", x: 0.3342, y: 0.5464, z: 0.7847 },
    { element: "O", x: 0.1658, y: 0.4536, z: 0.2847 },
  ],
};

/** Zirconium dioxide (baddeleyite, monoclinic), P 1 21/c 1. Zr, O1, O2 on 4e; cell and positions from memory (common literature values). */
export const BADDELEYITE: CrystalStructure = {
  name: "Zirconium dioxide (baddeleyite, monoclinic)",
  formula: "ZrO2",
  spaceGroup: "P 1 21/c 1",
  system: "monoclinic",
  centering: "P",
  cell: { a: 5.1505, b: 5.2116, c: 5.3173, alpha: 90, beta: 99.23, gamma: 90 },
  sites: [
    { element: "Zr", x: 0.2754, y: 0.0395, z: 0.2083 },
    { element: "O", x: 0.07, y: 0.3317, z: 0.3447 },
    { element: "O", x: 0.4496, y: 0.7569, z: 0.4792 },
  ],
  atoms: [
    { element: "Zr", x: 0.2754, y: 0.0395, z: 0.2083 },
    { element: "Zr", x: 0.7246, y: 0.5395, z: 0.2917 },
    { element: "Zr", x: 0.7246, y: 0.9605, z: 0.7917 },
    { element: "Zr", x: 0.2754, y: 0.4605, z: 0.7083 },
    { element: "O", x: 0.07, y: 0.3317, z: 0.3447 },
    { element: "O", x: 0.93, y: 0.8317, z: 0.1553 },
    { element: "O", x: 0.93, y: 0.6683, z: 0.6553 },
    { element: "O", x: 0.07, y: 0.1683, z: 0.8447 },
    { element: "O", x: 0.4496, y: 0.7569, z: 0.4792 },
    { element: "O", x: 0.5504, y: 0.2569, z: 0.0208 },
    { element: "O", x: 0.5504, y: 0.2431, z: 0.5208 },
    { element: "O", x: 0.4496, y: 0.7431, z: 0.9792 },
  ],
};
/** Every structure of this module by a short key. */
export const STRUCTURES = {
  silicon: SILICON,
  lanthanumHexaboride: LANTHANUM_HEXABORIDE,
  halite: HALITE,
  ceria: CERIA,
  rutile: RUTILE,
  zincite: ZINCITE,
  corundum: CORUNDUM,
  lithiumIronPhosphate: LITHIUM_IRON_PHOSPHATE,
  baddeleyite: BADDELEYITE,
} as const satisfies Record<string, CrystalStructure>;
