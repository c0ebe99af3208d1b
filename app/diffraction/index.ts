// Public API of the diffraction engine as the app uses it: the lattice check of a scan file and the types of
// its inputs and result. Everything else is imported from its own module (cell, peaks, refine, verdict, …).

export { checkParsedScan, type CheckedPeak, type LatticeCheckResult } from "./check";
export { parseScan, type Scan } from "./parse-scan";
export type { Cell, Centering, CrystalSystem } from "./cell";
export type { Radiation } from "./wavelengths";
