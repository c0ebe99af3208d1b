// Real measured scans of mixtures (several phases known to be present), for the multi-phase check. Each file's origin,
// licence and what it says are in tests/data/real/SOURCES.md; every cell below names its source beside it. These are
// plain data: the test that uses them is written once the multi-phase check exists.
import type { Cell, Centering, CrystalSystem } from "~/diffraction/cell";
import type { Radiation } from "~/diffraction/wavelengths";

export interface MixturePhase {
  name: string;
  system: CrystalSystem;
  centering: Centering;
  /** The published (or reference) cell, Å and degrees; the source is named in a comment beside each. */
  cell: Cell;
  /** Weighed or nominal mass fraction in %, where the data set states one; null otherwise. */
  massPercent: number | null;
}

export interface MixtureCase {
  /** File name in tests/data/real/. */
  file: string;
  /** Reader label the file is read as (parse-scan's `format`). */
  format: string;
  radiation: Radiation;
  phases: MixturePhase[];
  /** Name of the phase a client would declare as the main one. */
  main: string;
  /** Names of the phases known to be in the specimen (all of them, main included). */
  present: string[];
  /** What the data set says about the specimen, in one sentence. */
  note: string;
}

const hexagonal = (a: number, c: number): Cell => ({ a, b: a, c, alpha: 90, beta: 90, gamma: 120 });
const cubic = (a: number): Cell => ({ a, b: a, c: a, alpha: 90, beta: 90, gamma: 90 });

// GSAS's combined refinement of the round robin's sample 1a–1h scans (AdvancedPhotonSource/GSAS-II,
// Exercises/TOF_QPRR/cpd1A-H.exp, commit 1da55734620cb0e6ace17e91f05f626ffb56f261, records CRS1/CRS2/CRS3 ABC) was
// made with λ = 1.5405 Å (its HST ICONS records); scaled here to this engine's Cu Kα1 1.540593 Å (cell ∝ λ), as
// tests/diffraction/real-scans.test.ts does for the Si3N4 reference.
const GSAS_CPD_LAMBDA = 1.5405;
const CU_KA1 = 1.540593;
const toCuKa1 = (x: number): number => (x * CU_KA1) / GSAS_CPD_LAMBDA;

export const MIXTURE_CASES: MixtureCase[] = [
  {
    file: "cpd-1g-corundum-fluorite-zincite-cu.prn",
    format: "xy",
    // Philips 3020, Cu long-fine-focus tube, diffracted-beam curved graphite monochromator: Kβ removed, the Kα1/Kα2
    // doublet passes (the data set's instrument description, quoted in SOURCES.md).
    radiation: { kind: "anode", anode: "Cu", monochromation: "k_alpha_doublet" },
    phases: [
      {
        name: "corundum",
        system: "trigonal",
        centering: "R",
        // GSAS refinement of samples 1a–1h (cpd1A-H.exp CRS1): a = 4.757644(19) Å, c = 12.988040(77) Å at λ 1.5405 Å.
        // For comparison, NIST SRM 676a certificate (2015 issue, quoted in SOURCES.md): a = 4.759355 Å, c = 12.99231 Å.
        cell: hexagonal(toCuKa1(4.757644), toCuKa1(12.98804)),
        // Weighed composition of sample 1g: Madsen et al. (2001) J. Appl. Cryst. 34, 409, as quoted by the data
        // set's vendoring repository (SOURCES.md).
        massPercent: 31.37,
      },
      {
        name: "fluorite",
        system: "cubic",
        centering: "F",
        // GSAS refinement of samples 1a–1h (cpd1A-H.exp CRS2): a = 5.462294(17) Å at λ 1.5405 Å.
        cell: cubic(toCuKa1(5.462294)),
        massPercent: 34.42,
      },
      {
        name: "zincite",
        system: "hexagonal",
        centering: "P",
        // GSAS refinement of samples 1a–1h (cpd1A-H.exp CRS3): a = 3.248734(9) Å, c = 5.204844(19) Å at λ 1.5405 Å.
        cell: hexagonal(toCuKa1(3.248734), toCuKa1(5.204844)),
        massPercent: 34.21,
      },
    ],
    // The three are weighed in nearly equal parts; fluorite is taken as the declared main phase (its lines are the
    // strongest), the other two as further expected phases.
    main: "fluorite",
    present: ["corundum", "fluorite", "zincite"],
    note: "IUCr CPD quantitative phase analysis round robin, sample 1g: Al2O3 31.37 %, ZnO 34.21 %, CaF2 34.42 % by weight.",
  },
  {
    file: "srm487-austenite-martensite-cu.csv",
    format: "csv",
    // The repository's instrument file for these data (BrukerD8_E211110.instprm): Lam1 1.5405, Lam2 1.5443,
    // I(L2)/I(L1) 0.5, i.e. the Cu Kα doublet; the optics are not stated.
    radiation: { kind: "anode", anode: "Cu", monochromation: "k_alpha_doublet" },
    phases: [
      {
        name: "ferrite (martensite)",
        system: "cubic",
        centering: "I",
        // The repository's phase file ExampleData/Example05/ferrite-SRM487.cif (usnistgov/AusteniteCalculator, commit
        // ae17b398b5f3037a6a8a2835aef8cfeff5c810a3): a = 2.87219(5) Å, Im-3m. Pure α-Fe is a = 2.8665 Å (from memory).
        // Martensite may be slightly tetragonal; the data set models it as cubic.
        cell: cubic(2.87219),
        // SRM 487 is nominally 30 % retained austenite in martensite (the repository's README, citing NBS SP 260-78).
        massPercent: 70,
      },
      {
        name: "austenite",
        system: "cubic",
        centering: "F",
        // The repository's phase file ExampleData/Example05/austenite-SRM487.cif (same repository, commit
        // a644cc6c6586c857a93c7f67f85dc1d266c91311): a = 3.59300(10) Å, Fm-3m.
        cell: cubic(3.593),
        massPercent: 30,
      },
    ],
    main: "ferrite (martensite)",
    present: ["ferrite (martensite)", "austenite"],
    note: "NIST SRM 487 (withdrawn), retained austenite in martensite, nominally 30 % austenite; NIST laboratory diffractometer, Cu.",
  },
];
