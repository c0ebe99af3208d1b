// Public API of the diffraction engine: the lattice check and the pieces the app and workers call.

export {
  checkScanText,
  inferSystem,
  runLatticeCheck,
  type CellDeviation,
  type CheckedPeak,
  type CheckScanResult,
  type FiguresOfMerit,
  type LatticeCheckOptions,
  type LatticeCheckResult,
  type TickMark,
} from "./check";
export { parseScan, DEFAULT_MAX_BYTES, MIN_POINTS, type ParseScanOptions, type ParseScanResult, type Scan, type ScanFormat } from "./parse-scan";
export { analysePeaks, type EmissionLine, type FittedPeak, type PeakAnalysis } from "./peaks";
export { estimateBackground } from "./background";
export { refineCell, type CorrectionKind, type ObservedPeak, type Refinement } from "./refine";
export { deWolffM20, smithSnyderFN, type IndexedLine } from "./merit";
export { decideVerdict, VERDICT_RULE, type Verdict } from "./verdict";
export { indexCubic, type CubicCandidate, type CubicIndexing } from "./index-cubic";
export { scherrerSize, SCHERRER_CAUTION, type InstrumentProfile } from "./scherrer";
export {
  type Cell,
  type Centering,
  type CrystalSystem,
  CENTERINGS,
  CRYSTAL_SYSTEMS,
  dFromTwoTheta,
  dSpacing,
  twoThetaFromD,
} from "./cell";
export { allowedReflections, type Reflection } from "./reflections";
export { ANODES, ANODE_LINES, type Anode, type Monochromation, type Radiation, primaryWavelength, radiationLines } from "./wavelengths";
