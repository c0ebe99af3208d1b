// The automatic lattice-parameter check of a delivered scan: peaks, indexing, refinement, merit, verdict.

import { type Cell, type Centering, type CrystalSystem, CENTERINGS, CRYSTAL_SYSTEMS, checkCellForSystem, checkCentering, twoThetaFromD } from "./cell";
import { type CubicIndexing, indexCubic } from "./index-cubic";
import { refinedLineShift } from "./line-shifts";
import { deWolffM20, smithSnyderFN } from "./merit";
import { type ParseScanOptions, type Scan, parseScan } from "./parse-scan";
import { analysePeaks, type FittedPeak } from "./peaks";
import { median } from "./sorted";
import { type CorrectionKind, figuresOfMeritLines, type ObservedPeak, type Refinement, refineCell } from "./refine";
import { type InstrumentProfile, SCHERRER_CAUTION, scherrerSize } from "./scherrer";
import { decideVerdict, type Verdict } from "./verdict";
import { type Radiation, radiationLines } from "./wavelengths";

export interface LatticeCheckOptions {
  radiation: Radiation;
  system?: CrystalSystem;
  centering?: Centering;
  /** The sample's declared (approximate) cell; without it a cubic pattern is indexed from scratch. */
  cell?: Cell;
  /** Which instrumental correction is refined with the cell (default a zero shift). */
  refine?: CorrectionKind;
  /** For the displacement correction, mm (default 240 mm, a usual lab radius; common practice). */
  goniometerRadiusMm?: number;
  /** Instrument profile for the Scherrer sizes; without it sizes include instrumental broadening. */
  instrumentProfile?: InstrumentProfile;
}

export interface CheckedPeak {
  /** Kα1 position, degrees 2θ, and its standard uncertainty from the profile fit. */
  twoTheta: number;
  twoThetaEsd: number;
  d: number;
  /** Integrated intensity of the Kα1 component above background, counts × degrees 2θ. */
  intensity: number;
  /** Intensity relative to the strongest peak, 0–100. */
  relativeIntensity: number;
  height: number;
  fwhm: number;
  eta: number;
  hkl: [number, number, number] | null;
  /** Calculated position of the assigned reflection in the observed frame, degrees 2θ. */
  twoThetaCalc?: number;
  /** Observed − calculated, degrees 2θ. */
  delta?: number;
  /** False when the peak was indexed but kept out of the least squares (a blend or an outlier). */
  usedInRefinement: boolean;
  /** Scherrer crystallite size, nm (see scherrer.ts for the caution). */
  crystalliteSizeNm: number | null;
}

export interface TickMark {
  h: number;
  k: number;
  l: number;
  d: number;
  /** Position in the observed frame (with the refined zero shift or displacement), degrees 2θ. */
  twoTheta: number;
  multiplicity: number;
}

export interface FiguresOfMerit {
  M20: number | null;
  /** Lines M20 was computed over (20 unless the pattern has fewer indexed lines). */
  M20Lines: number;
  FN: number | null;
  /** N of F_N. */
  FNLines: number;
  /** ⟨|Δ2θ|⟩, degrees. */
  FNMeanDelta: number | null;
  /** N_poss. */
  FNPossible: number | null;
}

export interface CellDeviation {
  /** Refined − declared, Å and degrees. */
  absolute: Cell;
  /** (Refined − declared) / declared. */
  relative: Cell;
}

export interface LatticeCheckResult {
  verdict: Verdict;
  reasons: string[];
  system: CrystalSystem | null;
  centering: Centering | null;
  declaredCell: Cell | null;
  cell: Cell | null;
  esd: Cell | null;
  correction: CorrectionKind;
  /** Degrees 2θ (observed = calculated + zeroShift). */
  zeroShift: number;
  zeroShiftEsd: number | null;
  /** mm, positive above the focusing circle (displacement model only). */
  displacement: number;
  displacementEsd: number | null;
  deviation: CellDeviation | null;
  peaks: CheckedPeak[];
  unindexed: CheckedPeak[];
  figuresOfMerit: FiguresOfMerit;
  reflections: TickMark[];
  /** Reduced χ² of the cell refinement, and peaks used / degrees of freedom. */
  reducedChi2: number | null;
  peaksUsed: number;
  /** From-scratch cubic indexing, when no cell was declared. */
  cubicIndexing: {
    candidates: { centering: Centering; a: number; aEsd: number | null; M20: number | null; unindexed: number }[];
    lowerSymmetryNeeded: boolean;
    message: string;
  } | null;
  /** For the plot: the scan's angles and counts, the background and the fitted profile on the same points. */
  twoTheta: Float64Array;
  observed: Float64Array;
  background: Float64Array;
  fittedProfile: Float64Array;
  wavelength: number;
  warnings: string[];
  elapsedMs: number;
}

const CELL_KEYS = ["a", "b", "c", "alpha", "beta", "gamma"] as const;

/** The crystal system a cell's shape suggests, highest symmetry first (for a cell declared without one). */
export function inferSystem(cell: Cell): CrystalSystem {
  for (const system of ["cubic", "hexagonal", "tetragonal", "orthorhombic", "monoclinic"] as const) {
    if (checkCellForSystem(system, cell) === null) return system;
  }
  return "triclinic";
}

/** One sentence when the options cannot describe a check, else null. */
export function checkOptionsProblem(options: LatticeCheckOptions): string | null {
  const r = options.radiation;
  if (r.kind === "custom" && !(r.wavelength > 0 && r.wavelength < 20)) {
    return `The wavelength must be a positive number of ångström below 20; got ${r.wavelength}.`;
  }
  if (options.system && !CRYSTAL_SYSTEMS.includes(options.system)) return `Unknown crystal system "${options.system}".`;
  if (options.centering && !CENTERINGS.includes(options.centering)) return `Unknown lattice centering "${options.centering}".`;
  if (options.cell) {
    const system = options.system ?? inferSystem(options.cell);
    const problem = checkCellForSystem(system, options.cell);
    if (problem) return problem;
  }
  if (options.system && options.centering) return checkCentering(options.system, options.centering);
  return null;
}

/** Runs the check on a parsed scan. Throws a RangeError with a sentence when the options are unusable. */
export function runLatticeCheck(scan: Scan, options: LatticeCheckOptions): LatticeCheckResult {
  const started = performance.now();
  const problem = checkOptionsProblem(options);
  if (problem) throw new RangeError(problem);
  const warnings = [...scan.warnings];
  const lines = radiationLines(options.radiation);
  const wavelength = lines[0].wavelength;
  if (scan.wavelength && Math.abs(scan.wavelength - wavelength) / wavelength > 1e-3) {
    warnings.push(`The file states a wavelength of ${scan.wavelength} Å but the check uses ${wavelength} Å from the declared source.`);
  }
  const n = scan.twoTheta.length;
  const twoThetaMax = scan.twoTheta[n - 1];
  const analysis = analysePeaks(scan.twoTheta, scan.intensity, { lines, esd: scan.esd });
  const fitted = analysis.peaks;
  const observed: ObservedPeak[] = fitted.map((p) => ({
    twoTheta: p.twoTheta,
    twoThetaEsd: p.twoThetaEsd,
    fwhm: p.fwhm,
    intensity: p.area,
  }));
  const correction = options.refine ?? "zero_shift";
  const radius = options.goniometerRadiusMm ?? 240;

  let system = options.system ?? (options.cell ? inferSystem(options.cell) : null);
  if (options.cell && !options.system) warnings.push(`No crystal system was given; the declared cell's shape suggests ${system}.`);
  let centering: Centering | null = options.centering ?? null;
  if (options.cell && !centering) {
    centering = "P";
    warnings.push("No lattice centering was given; P (primitive) was assumed, so extra reflections are allowed.");
  }
  let refinement: Refinement | null = null;
  let cubicIndexing: CubicIndexing | null = null;
  const extraReasons: string[] = [];
  if (fitted.length > 0 && options.cell && system && centering) {
    refinement = refineCell(observed, {
      wavelength,
      system,
      centering,
      start: options.cell,
      correction,
      goniometerRadiusMm: radius,
      twoThetaMax,
    });
  } else if (fitted.length > 0 && (!system || system === "cubic")) {
    cubicIndexing = indexCubic(observed, { wavelength, twoThetaMax });
    const best = cubicIndexing.candidates[0];
    if (best && !cubicIndexing.lowerSymmetryNeeded) {
      system = "cubic";
      centering = best.centering;
      refinement = refineCell(observed, {
        wavelength,
        system,
        centering,
        start: best.refinement.cell,
        correction,
        goniometerRadiusMm: radius,
        twoThetaMax,
        searchRange: 0.002,
      });
    }
    extraReasons.push(cubicIndexing.message);
  } else if (fitted.length > 0) {
    extraReasons.push(`No cell was declared; indexing from scratch is done only for cubic lattices, so a ${system} sample needs its cell declared.`);
  }

  const hklOf = new Map<number, Refinement["assignments"][number]>();
  for (const a of refinement?.assignments ?? []) hklOf.set(a.peak, a);
  const strongestArea = Math.max(0, ...fitted.map((p) => p.area));
  const peaks: CheckedPeak[] = fitted.map((p, i) => checkedPeak(p, hklOf.get(i), strongestArea, wavelength, options.instrumentProfile));

  const {
    lines: meritLines,
    calculatedQ,
    calculatedTwoTheta,
  } = refinement ? figuresOfMeritLines(observed, refinement, wavelength) : { lines: [], calculatedQ: [], calculatedTwoTheta: [] };
  const m20 = deWolffM20(meritLines, calculatedQ);
  const fn = smithSnyderFN(meritLines, calculatedTwoTheta);
  const refined = refinement !== null && refinement.used > 0 && refinement.dof >= 0 && refinement.assignments.some((a) => a.used);
  const unindexed = peaks.filter((p) => p.hkl === null);
  const byIntensity = [...peaks].sort((a, b) => b.intensity - a.intensity);
  const cell = refined ? refinement!.cell : null;
  const declared = options.cell ?? null;
  const decision = decideVerdict({
    refined,
    strongest: byIntensity.map((p) => ({ indexed: p.hkl !== null, relativeIntensity: p.relativeIntensity / 100, twoTheta: p.twoTheta })),
    unindexed: unindexed.map((p) => ({ twoTheta: p.twoTheta, relativeIntensity: p.relativeIntensity / 100 })),
    m20: m20 ? m20.value : null,
    meanMissInFwhm: fn ? fn.meanDelta / median(peaks.filter((p) => p.hkl !== null).map((p) => p.fwhm)) : null,
    declared,
    refinedCell: cell,
    esd: refined ? refinement!.esd : null,
  });
  if (peaks.length > 0 && !options.instrumentProfile) warnings.push(SCHERRER_CAUTION);
  const reflections: TickMark[] = refined
    ? refinement!.reflections
        .map((r) => ({
          h: r.h,
          k: r.k,
          l: r.l,
          d: r.d,
          multiplicity: r.multiplicity,
          twoTheta: observedPosition(r.d, wavelength, refinement!),
        }))
        .filter((t) => t.twoTheta >= scan.twoTheta[0] && t.twoTheta <= twoThetaMax)
        .sort((x, y) => x.twoTheta - y.twoTheta)
    : [];
  return {
    verdict: decision.verdict,
    reasons: [...decision.reasons, ...extraReasons],
    system,
    centering,
    declaredCell: declared,
    cell,
    esd: refined ? refinement!.esd : null,
    correction,
    zeroShift: refined ? refinement!.zeroShift : 0,
    zeroShiftEsd: refined ? refinement!.zeroShiftEsd : null,
    displacement: refined ? refinement!.displacement : 0,
    displacementEsd: refined ? refinement!.displacementEsd : null,
    deviation: cell && declared ? cellDeviation(cell, declared) : null,
    peaks,
    unindexed,
    figuresOfMerit: {
      M20: m20 ? m20.value : null,
      M20Lines: m20 ? m20.lines : 0,
      FN: fn ? fn.value : null,
      FNLines: fn ? fn.lines : 0,
      FNMeanDelta: fn ? fn.meanDelta : null,
      FNPossible: fn ? fn.possible : null,
    },
    reflections,
    reducedChi2: refined && Number.isFinite(refinement!.reducedChi2) ? refinement!.reducedChi2 : null,
    peaksUsed: refined ? refinement!.used : 0,
    cubicIndexing: cubicIndexing
      ? {
          candidates: cubicIndexing.candidates.map((c) => ({
            centering: c.centering,
            a: c.a,
            aEsd: c.aEsd,
            M20: c.m20,
            unindexed: c.unindexed,
          })),
          lowerSymmetryNeeded: cubicIndexing.lowerSymmetryNeeded,
          message: cubicIndexing.message,
        }
      : null,
    twoTheta: scan.twoTheta,
    observed: scan.intensity,
    background: analysis.background,
    fittedProfile: analysis.fittedProfile,
    wavelength,
    warnings,
    elapsedMs: performance.now() - started,
  };
}

function checkedPeak(
  p: FittedPeak,
  assignment: Refinement["assignments"][number] | undefined,
  strongestArea: number,
  wavelength: number,
  instrument: InstrumentProfile | undefined,
): CheckedPeak {
  const r = assignment?.reflection;
  return {
    twoTheta: p.twoTheta,
    twoThetaEsd: p.twoThetaEsd,
    d: p.d,
    intensity: p.area,
    relativeIntensity: strongestArea > 0 ? (100 * p.area) / strongestArea : 0,
    height: p.height,
    fwhm: p.fwhm,
    eta: p.eta,
    hkl: r ? [r.h, r.k, r.l] : null,
    twoThetaCalc: assignment?.twoThetaCalc,
    delta: assignment ? p.twoTheta - assignment.twoThetaCalc : undefined,
    usedInRefinement: assignment?.used ?? false,
    crystalliteSizeNm: scherrerSize(p.fwhm, p.twoTheta, wavelength, { eta: p.eta, instrument }).sizeNm,
  };
}

function observedPosition(d: number, wavelength: number, refinement: Refinement): number {
  const bragg = twoThetaFromD(d, wavelength);
  return bragg + refinedLineShift(bragg, refinement);
}

function cellDeviation(cell: Cell, declared: Cell): CellDeviation {
  const absolute = {} as Cell;
  const relative = {} as Cell;
  for (const key of CELL_KEYS) {
    absolute[key] = cell[key] - declared[key];
    relative[key] = (cell[key] - declared[key]) / declared[key];
  }
  return { absolute, relative };
}

export type CheckScanResult = { ok: true; result: LatticeCheckResult } | { ok: false; error: string };

/** Parses and checks a scan's text; bad input of any kind comes back as one sentence. */
export function checkScanText(text: string, options: LatticeCheckOptions & ParseScanOptions): CheckScanResult {
  const problem = checkOptionsProblem(options);
  if (problem) return { ok: false, error: problem };
  const parsed = parseScan(text, options);
  if (!parsed.ok) return parsed;
  const result = runLatticeCheck(parsed.scan, options);
  if (result.peaks.length === 0) {
    return { ok: false, error: "No peaks stand out from the noise; the scan looks like a flat line." };
  }
  return { ok: true, result };
}
