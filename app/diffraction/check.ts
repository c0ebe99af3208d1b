// The automatic lattice-parameter check of a delivered scan: peaks, lines that are not the sample's,
// indexing, refinement, merit, verdict.

import { type Cell, type Centering, type CrystalSystem, CENTERINGS, CRYSTAL_SYSTEMS, checkCellForSystem, checkCentering, twoThetaFromD } from "./cell";
import { type CubicIndexing, indexCubic } from "./index-cubic";
import { type HolderMatch, indexingWindow, matchHolderLines, matchStrayLines, type PeakOrigin, type StrayMatch } from "./foreign-lines";
import { SAMPLE_HOLDER_IDS, type SampleHolder } from "./holders";
import { penetrationMmOf, refinedLineShift } from "./line-shifts";
import { allowedReflections } from "./reflections";
import { deWolffM20, smithSnyderFN } from "./merit";
import { type CheckableScan, type ParseScanOptions, parseScan, type ScanMetadata } from "./parse-scan";
import { analysePeaks, type FittedPeak } from "./peaks";
import { fitPhases, type PhaseFit } from "./mixture";
import type { AcceptanceWindow, CandidateResult, DeclaredPhase, PhaseResult, PhaseTick, WholePatternFigures, WindowResult } from "./phases";
import { median } from "./sorted";
import { fitWholePattern, type WholePatternFit } from "./whole-pattern";
import { fixedCellParameters, judgeWindow, windowProblem } from "./window";
import {
  type CorrectionKind,
  figuresOfMeritLines,
  type ObservedPeak,
  type RefinedCorrectionKind,
  type Refinement,
  type RefineOptions,
  refineCell,
  type TransparencyOption,
} from "./refine";
import { type InstrumentProfile, SCHERRER_CAUTION, scherrerSize } from "./scherrer";
import { decideVerdict, type Verdict, type VerdictResult } from "./verdict";
import { type Radiation, radiationLines, strayLines } from "./wavelengths";

export interface LatticeCheckOptions {
  radiation: Radiation;
  system?: CrystalSystem;
  centering?: Centering;
  /** The sample's declared (approximate) cell; without it a cubic pattern is indexed from scratch. */
  cell?: Cell;
  /**
   * Which instrumental correction is refined with the cell: default "auto" (zero shift and specimen
   * displacement together where the range separates them) for an anode tube's Bragg–Brentano scan, a zero
   * shift for a single wavelength.
   */
  refine?: CorrectionKind;
  /** The transparency correction for a weakly absorbing sample: refined, or fixed from its μ (cm⁻¹). */
  transparency?: TransparencyOption;
  /** For the displacement and transparency corrections, mm (default 240 mm, a usual lab radius; common practice). */
  goniometerRadiusMm?: number;
  /** The sample holder, whose own lines are then labelled rather than counted as unindexed. */
  holder?: SampleHolder;
  /** Instrument profile for the Scherrer sizes; without it sizes include instrumental broadening. */
  instrumentProfile?: InstrumentProfile;
  /** The main phase's name, for the sentences ("LiFePO4"). */
  mainName?: string | null;
  /** Further expected phases (an impurity, a second component), each with its approximate cell. */
  phases?: DeclaredPhase[];
  /** Candidate forms: alternatives to the main declaration; the check says which one explains the scan. */
  candidates?: DeclaredPhase[];
  /** The client's acceptance window on the main phase's cell. */
  window?: AcceptanceWindow;
  /**
   * Whether to make the whole-pattern fit (default true): the plot's calculated curve, Rwp/Rexp/GoF, the
   * candidates' Rwp and the cells of overlapped phases. Without it the verdict and the cells are the same.
   */
  wholePattern?: boolean;
}

/** Why a peak is not the sample's: a stray tube line of another peak's reflection, or a holder line. */
export interface ForeignLine {
  origin: Exclude<PeakOrigin, "sample">;
  /** The line ("Cu Kβ", "W Lα1") or the holder's phase ("Al", "Si", "quartz", "steel"). */
  line: string;
  /** Stray lines: the peak (index into `peaks`) whose reflection diffracts it, and that peak's Miller indices. */
  parentPeak: number | null;
  parentHkl: [number, number, number] | null;
  /** Stray lines: integrated intensity over the parent's. */
  ratioToParent: number | null;
  /** Holder lines: the holder phase's reflection. */
  holderHkl: [number, number, number] | null;
  /** Where the line was expected, degrees 2θ. */
  expectedTwoTheta: number;
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
  /** Standard uncertainty of the FWHM from the profile fit, degrees 2θ (absent in results stored before it). */
  fwhmEsd?: number | null;
  eta: number;
  /**
   * The sample's reflection, or a line that is not the sample's (then `foreign` says which). Absent in results
   * stored before these labels: the sample's.
   */
  origin?: PeakOrigin;
  foreign?: ForeignLine | null;
  hkl: [number, number, number] | null;
  /** Calculated position of the assigned reflection in the observed frame, degrees 2θ. */
  twoThetaCalc?: number;
  /** Observed − calculated, degrees 2θ. */
  delta?: number;
  /** False when the peak was indexed but kept out of the least squares (a blend or an outlier). */
  usedInRefinement: boolean;
  /** Scherrer crystallite size, nm (see scherrer.ts for the caution). */
  crystalliteSizeNm: number | null;
  /** Index into `phases` of the phase that indexes this peak; null for none (absent in results stored before phases). */
  phase?: number | null;
}

/** A reflection's tick in the observed frame (with the refined corrections), degrees 2θ. */
export type TickMark = PhaseTick;

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
  /** The correction asked for, and the one refined (what "auto" chose). */
  correctionRequested: CorrectionKind;
  correction: RefinedCorrectionKind;
  /** Degrees 2θ (observed = calculated + zeroShift + …); 0 when not refined. */
  zeroShift: number;
  zeroShiftEsd: number | null;
  /** mm, positive above the focusing circle; 0 when not refined. */
  displacement: number;
  displacementEsd: number | null;
  /** Correlation coefficient of the zero shift and the displacement when both were refined or tried. */
  zeroDisplacementCorrelation: number | null;
  /** Transparency: none, refined, or fixed from the given μ; penetration depth 1/μ in mm. */
  transparency: "none" | "refined" | "fixed";
  penetrationMm: number;
  penetrationMmEsd: number | null;
  goniometerRadiusMm: number;
  holder: SampleHolder | null;
  /** How many peaks were labelled as lines that are not the sample's. */
  foreignPeaks: { kbeta: number; tungstenL: number; holder: number };
  deviation: CellDeviation | null;
  peaks: CheckedPeak[];
  unindexed: CheckedPeak[];
  /** Every declared phase: the main one (the chosen candidate) first, then the expected ones. */
  phases: PhaseResult[];
  /** The candidate forms, the main declaration first, when alternatives were declared. */
  candidates: CandidateResult[] | null;
  /** The acceptance window's answer, kept apart from the verdict. */
  window: WindowResult;
  withinWindow: boolean | null;
  /** The whole-pattern fit's figures; null when no fit was made. */
  wholePattern: WholePatternFigures | null;
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
  /** The sum of the freely fitted single peaks and the background (a separate layer, not a whole-pattern fit). */
  fittedProfile: Float64Array;
  /** The whole-pattern fit's calculated curve with the background; null when no fit was made. */
  calculatedProfile: Float64Array | null;
  wavelength: number;
  /** The scan file's format (reader id and label) and what the file states about the measurement. */
  scanFormat: string;
  scanFormatLabel: string;
  metadata: ScanMetadata;
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
  if (options.refine && !["zero_shift", "displacement", "zero_and_displacement", "auto"].includes(options.refine)) {
    return `Unknown instrumental correction "${options.refine}".`;
  }
  if (options.holder && !SAMPLE_HOLDER_IDS.includes(options.holder)) return `Unknown sample holder "${options.holder}".`;
  const t = options.transparency;
  if (t && "linearAttenuationPerCm" in t && !(t.linearAttenuationPerCm > 0 && Number.isFinite(t.linearAttenuationPerCm))) {
    return `The linear attenuation coefficient must be a positive number of cm⁻¹; got ${t.linearAttenuationPerCm}.`;
  }
  if (options.goniometerRadiusMm !== undefined && !(options.goniometerRadiusMm > 0 && options.goniometerRadiusMm < 2000)) {
    return `The goniometer radius must be a positive number of mm; got ${options.goniometerRadiusMm}.`;
  }
  if (options.system && options.centering) {
    const problem = checkCentering(options.system, options.centering);
    if (problem) return problem;
  }
  const lists: [string, DeclaredPhase[] | undefined][] = [
    ["expected phase", options.phases],
    ["candidate form", options.candidates],
  ];
  for (const [what, list] of lists) {
    for (const [i, phase] of (list ?? []).entries()) {
      const name = phase.name?.trim() ? `"${phase.name.trim()}"` : `${what} ${i + 1}`;
      const problem = declaredPhaseProblem(phase);
      if (problem) return `The ${what} ${name}: ${problem}`;
    }
  }
  if ((options.phases?.length || options.candidates?.length) && !options.cell) {
    if (options.candidates?.length) return "Candidate forms are alternatives to a declared main cell; declare the main cell too.";
  }
  if (options.window && options.cell) {
    const problem = windowProblem(options.window, options.system ?? inferSystem(options.cell));
    if (problem) return problem;
  }
  return null;
}

function declaredPhaseProblem(phase: DeclaredPhase): string | null {
  if (!CRYSTAL_SYSTEMS.includes(phase.system)) return `unknown crystal system "${phase.system}".`;
  if (!CENTERINGS.includes(phase.centering)) return `unknown lattice centering "${phase.centering}".`;
  return checkCellForSystem(phase.system, phase.cell) ?? checkCentering(phase.system, phase.centering);
}

/** Runs the check on a parsed scan. Throws a RangeError with a sentence when the options are unusable. */
export function runLatticeCheck(scan: CheckableScan, options: LatticeCheckOptions): LatticeCheckResult {
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
  const correctionRequested: CorrectionKind = options.refine ?? (options.radiation.kind === "anode" ? "auto" : "zero_shift");
  const radius = options.goniometerRadiusMm ?? 240;
  const holder = options.holder && options.holder !== "none" ? options.holder : null;

  // Stray tube lines predicted from the observed peaks alone, before any cell: kept out of the indexing.
  const stray = strayLines(options.radiation);
  const strayOptions = { wavelength, kAlpha2: lines[1] ? { wavelength: lines[1].wavelength, weight: lines[1].weight } : undefined };
  const strayBefore = matchStrayLines(observed, stray, strayOptions);

  let system = options.system ?? (options.cell ? inferSystem(options.cell) : null);
  if (options.cell && !options.system) warnings.push(`No crystal system was given; the declared cell's shape suggests ${system}.`);
  let centering: Centering | null = options.centering ?? null;
  if (options.cell && !centering) {
    centering = "P";
    warnings.push("No lattice centering was given; P (primitive) was assumed, so extra reflections are allowed.");
  }
  const ctx: CheckContext = {
    observed,
    fitted,
    stray,
    strayOptions,
    wavelength,
    twoThetaMax,
    twoThetaMin: scan.twoTheta[0],
    correctionRequested,
    radius,
    holder,
    options,
  };
  let outcome: Outcome;
  let candidates: Outcome[] | null = null;
  let cubicIndexing: CubicIndexing | null = null;
  const expected = options.cell ? (options.phases ?? []) : [];
  if (options.phases?.length && !options.cell) warnings.push("Further expected phases are used only with a declared main cell; they were not looked for.");
  if (fitted.length > 0 && options.cell && system && centering) {
    const main: DeclaredPhase = { name: options.mainName ?? null, system, centering, cell: options.cell };
    const hypotheses = [main, ...(options.candidates ?? [])];
    const outcomes = hypotheses.map((h) => evaluate(ctx, strayBefore, h, expected));
    const chosen = chooseCandidate(outcomes);
    outcome = outcomes[chosen];
    if (hypotheses.length > 1) {
      candidates = outcomes;
      outcome.extraReasons.unshift(candidateSentence(outcomes, chosen));
    }
    system = outcome.main!.system;
    centering = outcome.main!.centering;
  } else if (fitted.length > 0 && (!system || system === "cubic")) {
    // Without a cell a holder's own (often cubic) lines could be indexed as the sample: left out too.
    const excluded = new Set(strayBefore.keys());
    if (holder) {
      const candidatePeaks = observed.map((_, i) => i).filter((i) => !excluded.has(i));
      for (const i of matchHolderLines(observed, candidatePeaks, holder, { wavelength, twoThetaMax }).keys()) excluded.add(i);
    }
    const sampleIndices = observed.map((_, i) => i).filter((i) => !excluded.has(i));
    cubicIndexing = indexCubic(
      sampleIndices.map((i) => observed[i]),
      { wavelength, twoThetaMax },
    );
    const best = cubicIndexing.candidates[0];
    if (best && !cubicIndexing.lowerSymmetryNeeded) {
      system = "cubic";
      centering = best.centering;
      const found: DeclaredPhase = { name: options.mainName ?? null, system, centering, cell: best.refinement.cell };
      outcome = evaluate(ctx, strayBefore, found, [], { searchRange: 0.002, excluded, declared: null });
    } else {
      outcome = emptyOutcome(ctx);
    }
    outcome.extraReasons.push(cubicIndexing.message);
  } else {
    outcome = emptyOutcome(ctx);
    if (fitted.length > 0) {
      outcome.extraReasons.push(`No cell was declared; indexing from scratch is done only for cubic lattices, so a ${system} sample needs its cell declared.`);
    }
  }

  // The whole-pattern fit of the chosen hypothesis (and, for the candidates' figures, of the others).
  const fitWhole = options.wholePattern !== false;
  const whole = fitWhole ? wholePatternFor(ctx, analysis, scan, lines, outcome, warnings) : null;
  if (candidates && fitWhole) {
    for (const o of candidates) o.whole = o === outcome ? whole : wholePatternFor(ctx, analysis, scan, lines, o, null, { refineCells: false });
  }

  const { refinement, peaks, foreignPeaks, decision, m20, fn } = outcome;
  const refined = outcome.refined;
  const declared = outcome.declared;
  if (refinement) warnings.push(...refinement.warnings);
  if (peaks.length > 0 && !options.instrumentProfile) warnings.push(SCHERRER_CAUTION);
  const reflections: TickMark[] = refined ? ticksOf(refinement!, wavelength, scan.twoTheta[0], twoThetaMax) : [];
  const wholeIndex = wholePatternPhaseIndex(outcome);
  const phases = outcome.fits.map((f, j) =>
    phaseResult(f, j === 0 ? refined : f.present, outcome.refinement, whole?.refinedCells ? (whole.fit.phases[wholeIndex[j]] ?? null) : null, {
      wavelength,
      twoThetaMin: scan.twoTheta[0],
      twoThetaMax,
    }),
  );
  const mainPhase = phases[0];
  if (mainPhase && outcome.main) mainPhase.name = outcome.main.name ?? null;
  // The main phase's cell: from the peaks, or sharpened by the whole-pattern fit where its lines overlap.
  const cell = refined ? (mainPhase?.cell ?? refinement!.cell) : null;
  const esd = refined ? (mainPhase?.cell ? mainPhase.esd : refinement!.esd) : null;
  if (mainPhase?.cellFrom === "whole_pattern") {
    outcome.extraReasons.push("Many of the main phase's lines overlap, so its cell is the whole-pattern fit's rather than the peak refinement's.");
  }
  const windowResult = judgeWindow(options.window, declared, cell, esd);
  const t = options.transparency;
  const transparency = t && "refine" in t ? "refined" : t && "linearAttenuationPerCm" in t ? "fixed" : "none";
  return {
    verdict: decision.verdict,
    reasons: [...decision.reasons, ...outcome.extraReasons],
    system,
    centering,
    declaredCell: declared,
    cell,
    esd,
    correctionRequested,
    correction: refinement?.correction ?? (correctionRequested === "auto" ? "zero_and_displacement" : correctionRequested),
    zeroShift: refined ? refinement!.zeroShift : 0,
    zeroShiftEsd: refined ? refinement!.zeroShiftEsd : null,
    displacement: refined ? refinement!.displacement : 0,
    displacementEsd: refined ? refinement!.displacementEsd : null,
    zeroDisplacementCorrelation: refinement ? refinement.zeroDisplacementCorrelation : null,
    transparency,
    penetrationMm: refined ? refinement!.penetrationMm : t && "linearAttenuationPerCm" in t ? penetrationMmOf(t.linearAttenuationPerCm) : 0,
    penetrationMmEsd: refined ? refinement!.penetrationMmEsd : null,
    goniometerRadiusMm: radius,
    holder,
    foreignPeaks,
    deviation: cell && declared ? cellDeviation(cell, declared) : null,
    peaks,
    unindexed: outcome.unindexed,
    phases,
    candidates: candidates ? candidates.map((o) => candidateResult(o, o === outcome)) : null,
    window: windowResult,
    withinWindow: windowResult.withinWindow,
    wholePattern: whole ? wholePatternFigures(whole.fit) : null,
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
    calculatedProfile: whole ? whole.fit.calculated : null,
    wavelength,
    scanFormat: scan.format ?? "xy",
    scanFormatLabel: scan.formatLabel ?? scan.format ?? "xy",
    metadata: scan.metadata ?? {},
    warnings,
    elapsedMs: performance.now() - started,
  };
}

interface CheckContext {
  observed: ObservedPeak[];
  fitted: FittedPeak[];
  stray: ReturnType<typeof strayLines>;
  strayOptions: { wavelength: number; kAlpha2?: { wavelength: number; weight: number } };
  wavelength: number;
  twoThetaMin: number;
  twoThetaMax: number;
  correctionRequested: CorrectionKind;
  radius: number;
  holder: SampleHolder | null;
  options: LatticeCheckOptions;
}

/** One hypothesis checked: a main phase (a candidate, the declaration, or the cubic indexing's cell) with the expected phases. */
interface Outcome {
  main: DeclaredPhase | null;
  declared: Cell | null;
  fits: PhaseFit[];
  refinement: Refinement | null;
  refined: boolean;
  peaks: CheckedPeak[];
  unindexed: CheckedPeak[];
  foreignPeaks: LatticeCheckResult["foreignPeaks"];
  decision: VerdictResult;
  m20: ReturnType<typeof deWolffM20>;
  fn: ReturnType<typeof smithSnyderFN>;
  strongIndexed: number;
  strongCount: number;
  extraReasons: string[];
  /** The whole-pattern fit of this hypothesis, when one was made, and whether it refined the cells. */
  whole?: WholePattern | null;
}

const STRONG_PEAKS = 10;

/**
 * Indexes and refines one hypothesis: the main phase on every peak that is not a tube line, stray lines the
 * refined cell explains taken back, the expected phases beside it (mixture.ts), then the labels of the peaks
 * no phase explains (tube and holder lines) and the verdict.
 */
function evaluate(
  ctx: CheckContext,
  strayBefore: Map<number, StrayMatch>,
  main: DeclaredPhase,
  expected: readonly DeclaredPhase[],
  { searchRange, excluded: given, declared = main.cell }: { searchRange?: number; excluded?: Set<number>; declared?: Cell | null } = {},
): Outcome {
  const { observed, wavelength, twoThetaMax, radius, options } = ctx;
  const excluded = new Set(given ?? strayBefore.keys());
  const base = { transparency: options.transparency, goniometerRadiusMm: radius };
  const refineOn = (indices: number[], start: Cell, extra: Partial<RefineOptions> = {}) =>
    refineCell(
      indices.map((i) => observed[i]),
      {
        ...base,
        wavelength,
        system: main.system,
        centering: main.centering,
        start,
        correction: ctx.correctionRequested,
        twoThetaMax,
        ...(searchRange ? { searchRange } : {}),
        ...extra,
      },
    );
  let sampleIndices = observed.map((_, i) => i).filter((i) => !excluded.has(i));
  let refinement = refineOn(sampleIndices, main.cell);
  // A peak left out as a stray line that the refined cell also explains goes back to the sample unless it
  // is faint (the usual leak-through) and sits closer to the stray line's place than to the reflection's.
  if (excluded.size > 0) {
    const strayAfter = matchStrayLines(observed, ctx.stray, { ...ctx.strayOptions, correction: refinement });
    const reclaimed = [...excluded].filter((i) => {
      if (!strayBefore.has(i)) return false;
      const reflection = nearestReflection(observed[i].twoTheta, refinement, wavelength);
      if (reflection === null) return false;
      const window = indexingWindow(observed[i]);
      if (reflection.miss > window) return false;
      const match = strayAfter.get(i);
      return !match?.faint || match.distance > reflection.miss / window;
    });
    if (reclaimed.length > 0) {
      for (const i of reclaimed) excluded.delete(i);
      sampleIndices = observed.map((_, i) => i).filter((i) => !excluded.has(i));
      refinement = refineOn(sampleIndices, refinement.cell, { searchRange: 0.002, correction: refinement.correction });
    }
  }
  const fits = fitPhases({ observed, excluded, wavelength, twoThetaMax, correction: ctx.correctionRequested, base }, main, expected, refinement);
  const mainFit = fits[0];
  refinement = mainFit.refinement ?? refinement;
  const mainIndices = mainFit.attributed;
  const hklOf = new Map<number, { assignment: Refinement["assignments"][number]; phase: number }>();
  fits.forEach((f, j) => {
    if (!f.present && j > 0) return;
    for (const [i, a] of f.explained) if (!hklOf.has(i)) hklOf.set(i, { assignment: a, phase: j });
  });

  // The labels, with the refined corrections when there are any: every peak no phase indexes.
  const correction = refinement && refinement.used > 0 ? refinement : undefined;
  const notIndexed = observed.map((_, i) => i).filter((i) => !hklOf.has(i));
  const strayFinal = matchStrayLines(observed, ctx.stray, { ...ctx.strayOptions, correction });
  const foreignOf = new Map<number, StrayMatch | HolderMatch>();
  for (const i of notIndexed) {
    const m = strayFinal.get(i);
    if (m) foreignOf.set(i, m);
  }
  if (ctx.holder) {
    const candidates = notIndexed.filter((i) => !foreignOf.has(i));
    for (const [i, m] of matchHolderLines(observed, candidates, ctx.holder, { wavelength, twoThetaMax, correction })) foreignOf.set(i, m);
  }
  const strongestArea = Math.max(0, ...ctx.fitted.map((p) => p.area));
  const peaks: CheckedPeak[] = ctx.fitted.map((p, i) => {
    const h = hklOf.get(i);
    const peak = checkedPeak(p, h?.assignment, strongestArea, wavelength, options.instrumentProfile);
    peak.phase = h ? h.phase : null;
    return peak;
  });
  const foreignPeaks = labelForeign(peaks, foreignOf);
  const extraReasons: string[] = [];
  if (foreignPeaks.kbeta + foreignPeaks.tungstenL + foreignPeaks.holder > 0) {
    const parts = [
      foreignPeaks.kbeta ? `${foreignPeaks.kbeta} Kβ` : "",
      foreignPeaks.tungstenL ? `${foreignPeaks.tungstenL} tungsten L` : "",
      foreignPeaks.holder ? `${foreignPeaks.holder} sample holder` : "",
    ].filter(Boolean);
    extraReasons.push(`Peaks labelled as lines that are not the sample's and left out of the indexing: ${parts.join(", ")}.`);
  }
  for (const f of fits.slice(1)) {
    const name = phaseName(f.phase, "An expected phase");
    extraReasons.push(f.present ? `${name} is present: ${f.reasons.join(" ")}` : `${name} was not found: ${f.reasons.join(" ")}`);
  }

  const mainObserved = mainIndices.map((i) => observed[i]);
  const {
    lines: meritLines,
    calculatedQ,
    calculatedTwoTheta,
  } = refinement ? figuresOfMeritLines(mainObserved, refinement, wavelength) : { lines: [], calculatedQ: [], calculatedTwoTheta: [] };
  const m20 = deWolffM20(meritLines, calculatedQ);
  const fn = smithSnyderFN(meritLines, calculatedTwoTheta);
  const refined = refinement !== null && refinement.used > 0 && refinement.dof >= 0 && refinement.assignments.some((a) => a.used);
  const samplePeaks = peaks.filter((p) => !p.foreign);
  const unindexed = samplePeaks.filter((p) => p.hkl === null);
  const byIntensity = [...samplePeaks].sort((a, b) => b.intensity - a.intensity);
  const others = fits.slice(1).filter((f) => f.present);
  const decision = decideVerdict({
    refined,
    strongest: byIntensity.map((p) => ({ indexed: p.hkl !== null, byMain: p.phase === 0, relativeIntensity: p.relativeIntensity / 100, twoTheta: p.twoTheta })),
    unindexed: unindexed.map((p) => ({ twoTheta: p.twoTheta, relativeIntensity: p.relativeIntensity / 100 })),
    m20: m20 ? m20.value : null,
    meanMissInFwhm: fn ? fn.meanDelta / median(peaks.filter((p) => p.phase === 0).map((p) => p.fwhm)) : null,
    declared,
    refinedCell: refined ? refinement!.cell : null,
    esd: refined ? refinement!.esd : null,
    otherPhases: others.map((f) => phaseName(f.phase, "an expected phase")),
  });
  const strong = byIntensity.slice(0, STRONG_PEAKS);
  return {
    main,
    declared,
    fits,
    refinement,
    refined,
    peaks,
    unindexed,
    foreignPeaks,
    decision,
    m20,
    fn,
    strongIndexed: strong.filter((p) => p.hkl !== null).length,
    strongCount: strong.length,
    extraReasons,
  };
}

/** A scan whose main phase could not be indexed at all (no declaration, no cubic cell): every peak labelled as far as it can be. */
function emptyOutcome(ctx: CheckContext): Outcome {
  const strongestArea = Math.max(0, ...ctx.fitted.map((p) => p.area));
  const strayFinal = matchStrayLines(ctx.observed, ctx.stray, ctx.strayOptions);
  const peaks = ctx.fitted.map((p) => checkedPeak(p, undefined, strongestArea, ctx.wavelength, ctx.options.instrumentProfile));
  const foreignOf = new Map<number, StrayMatch | HolderMatch>(strayFinal);
  if (ctx.holder) {
    const candidates = peaks.map((_, i) => i).filter((i) => !foreignOf.has(i));
    for (const [i, m] of matchHolderLines(ctx.observed, candidates, ctx.holder, { wavelength: ctx.wavelength, twoThetaMax: ctx.twoThetaMax }))
      foreignOf.set(i, m);
  }
  const foreignPeaks = labelForeign(peaks, foreignOf);
  const samplePeaks = peaks.filter((p) => !p.foreign);
  const byIntensity = [...samplePeaks].sort((a, b) => b.intensity - a.intensity);
  const decision = decideVerdict({
    refined: false,
    strongest: byIntensity.map((p) => ({ indexed: false, relativeIntensity: p.relativeIntensity / 100, twoTheta: p.twoTheta })),
    unindexed: samplePeaks.map((p) => ({ twoTheta: p.twoTheta, relativeIntensity: p.relativeIntensity / 100 })),
    m20: null,
    meanMissInFwhm: null,
    declared: ctx.options.cell ?? null,
    refinedCell: null,
    esd: null,
  });
  return {
    main: null,
    declared: ctx.options.cell ?? null,
    fits: [],
    refinement: null,
    refined: false,
    peaks,
    unindexed: samplePeaks,
    foreignPeaks,
    decision,
    m20: null,
    fn: null,
    strongIndexed: 0,
    strongCount: Math.min(STRONG_PEAKS, samplePeaks.length),
    extraReasons: [],
  };
}

/**
 * The whole-pattern fit (Le Bail extraction, whole-pattern.ts) of a hypothesis: the main phase and every
 * present expected phase, from their refined cells (the declared cell where none was refined) and the main
 * refinement's instrumental correction. Cells and corrections are refined with the profile unless the verdict
 * is inconsistent, where they are held so that the calculated curve shows how the declared lattice misses the
 * scan. A fit that fails leaves a warning and no figures; the check itself stands.
 */
function wholePatternFor(
  ctx: CheckContext,
  analysis: { background: Float64Array; variance: Float64Array; typicalFwhm: number },
  scan: CheckableScan,
  lines: { wavelength: number; weight: number }[],
  o: Outcome,
  warnings: string[] | null,
  { refineCells }: { refineCells?: boolean } = {},
): WholePattern | null {
  if (!o.main || ctx.fitted.length === 0) return null;
  const phases = o.fits
    .filter((f, j) => j === 0 || f.present)
    .map((f, j) => {
      const r = f.refinement;
      const ok = (j === 0 ? o.refined : f.present) && r !== null && r.used > 0;
      return { system: f.phase.system, centering: f.phase.centering, cell: ok ? r!.cell : f.phase.cell };
    });
  if (phases.length === 0) return null;
  const r = o.refined ? o.refinement! : null;
  const refinedCells = refineCells ?? o.decision.verdict !== "inconsistent";
  try {
    const fit = fitWholePattern({
      twoTheta: scan.twoTheta,
      intensity: scan.intensity,
      variance: analysis.variance,
      background: analysis.background,
      lines,
      phases,
      correction: {
        kind: r ? r.correction : "zero_shift",
        zeroShift: r ? r.zeroShift : 0,
        displacement: r ? r.displacement : 0,
        penetrationMm: r ? r.penetrationMm : 0,
        radiusMm: ctx.radius,
      },
      typicalFwhm: analysis.typicalFwhm,
      refineCells: refinedCells,
      cellUncertainty: r ? WHOLE_PATTERN_START_UNCERTAINTY : undefined,
    });
    return { fit, refinedCells };
  } catch (err) {
    warnings?.push(`The whole-pattern fit could not be made: ${err instanceof Error ? err.message : String(err)}`);
    return null;
  }
}

interface WholePattern {
  fit: WholePatternFit;
  /** Whether the fit refined the cells (else they were held at the peak refinement's, or the declared ones). */
  refinedCells: boolean;
}

/** Index of each of the outcome's phases in its whole-pattern fit (the main one and the present ones), -1 for none. */
function wholePatternPhaseIndex(o: Outcome): number[] {
  let k = 0;
  return o.fits.map((f, j) => (j === 0 || f.present ? k++ : -1));
}

/** The cells handed to the whole-pattern fit were refined on the peaks already: known to about this (relative; own choice). */
const WHOLE_PATTERN_START_UNCERTAINTY = 5e-4;

function wholePatternFigures(w: WholePatternFit): WholePatternFigures {
  return {
    Rwp: w.Rwp,
    Rexp: w.Rexp,
    GoF: w.GoF,
    Rp: w.Rp,
    points: w.points,
    parameters: w.parameters,
    reflections: w.reflections,
    cycles: w.cycles,
    converged: w.converged,
    elapsedMs: w.elapsedMs,
  };
}

/** Labels the peaks that are not the sample's (a stray tube line of another peak, a holder line) and counts them. */
function labelForeign(peaks: CheckedPeak[], foreignOf: Map<number, StrayMatch | HolderMatch>): LatticeCheckResult["foreignPeaks"] {
  peaks.forEach((p, i) => {
    const m = foreignOf.get(i);
    if (!m) return;
    p.origin = m.origin;
    p.foreign =
      m.origin === "holder"
        ? { origin: "holder", line: m.phase, parentPeak: null, parentHkl: null, ratioToParent: null, holderHkl: m.hkl, expectedTwoTheta: m.expectedTwoTheta }
        : {
            origin: m.origin,
            line: m.label,
            parentPeak: m.parent,
            parentHkl: peaks[m.parent].hkl,
            ratioToParent: m.ratio,
            holderHkl: null,
            expectedTwoTheta: m.expectedTwoTheta,
          };
  });
  return {
    kbeta: peaks.filter((p) => p.origin === "kbeta").length,
    tungstenL: peaks.filter((p) => p.origin === "tungsten_l").length,
    holder: peaks.filter((p) => p.origin === "holder").length,
  };
}

const VERDICT_RANK: Record<Verdict, number> = { consistent: 2, review: 1, inconsistent: 0 };

/**
 * The candidate that explains the scan: the best verdict, then the larger share of the strongest peaks
 * explained, then the cell that moved less from its declaration (two forms with the same lattice type and
 * cells within the indexing window index the same lines; the declaration nearer the refined cell is the one
 * the scan is), then the higher M20 (docs/decisions/012-phases-and-window.md).
 */
function chooseCandidate(outcomes: Outcome[]): number {
  let best = 0;
  const key = (o: Outcome) => [
    VERDICT_RANK[o.decision.verdict],
    o.strongCount ? o.strongIndexed / o.strongCount : 0,
    -movedFromDeclaration(o),
    o.m20?.value ?? 0,
  ];
  for (let i = 1; i < outcomes.length; i++) {
    const a = key(outcomes[i]);
    const b = key(outcomes[best]);
    const better = a[0] !== b[0] ? a[0] > b[0] : a[1] !== b[1] ? a[1] > b[1] : Math.abs(a[2] - b[2]) > CANDIDATE_MOVE_DIFFERENCE ? a[2] > b[2] : a[3] > b[3];
    if (better) best = i;
  }
  return best;
}

/** Candidates whose cells moved by amounts closer than this (relative) are told apart by M20 instead (own choice). */
const CANDIDATE_MOVE_DIFFERENCE = 1e-3;

/** The largest relative change of a cell length (or angle over 90°) from the declaration; Infinity when not refined. */
function movedFromDeclaration(o: Outcome): number {
  if (!o.refined || !o.refinement || !o.main) return Number.POSITIVE_INFINITY;
  const { cell } = o.refinement;
  const declared = o.main.cell;
  return Math.max(
    ...(["a", "b", "c"] as const).map((k) => Math.abs(cell[k] - declared[k]) / declared[k]),
    ...(["alpha", "beta", "gamma"] as const).map((k) => Math.abs(cell[k] - declared[k]) / 90),
  );
}

function phaseName(phase: DeclaredPhase, fallback: string): string {
  return phase.name?.trim() ? phase.name.trim() : fallback;
}

function candidateSentence(outcomes: Outcome[], chosen: number): string {
  const o = outcomes[chosen];
  const name = phaseName(o.main!, chosen === 0 ? "The main declaration" : `Candidate ${chosen + 1}`);
  const others = outcomes
    .filter((_, i) => i !== chosen)
    .map((x) => `${phaseName(x.main!, "another candidate")}: ${x.strongIndexed} of ${x.strongCount}, ${x.decision.verdict}`)
    .join("; ");
  return `${name} explains the scan best (${o.strongIndexed} of the ${o.strongCount} strongest peaks, M20 ${o.m20 ? o.m20.value.toFixed(1) : "not defined"}); ${others}.`;
}

function candidateResult(o: Outcome, chosen: boolean): CandidateResult {
  const r = o.refined ? o.refinement! : null;
  return {
    name: o.main?.name ?? null,
    system: o.main!.system,
    centering: o.main!.centering,
    cell: o.main!.cell,
    refinedCell: r ? r.cell : null,
    esd: r ? r.esd : null,
    verdict: o.decision.verdict,
    strongIndexed: o.strongIndexed,
    strongCount: o.strongCount,
    M20: o.m20 ? o.m20.value : null,
    Rwp: o.whole ? o.whole.fit.Rwp : null,
    chosen,
  };
}

function ticksOf(refinement: Refinement, wavelength: number, twoThetaMin: number, twoThetaMax: number): TickMark[] {
  return refinement.reflections
    .map((r) => ({ h: r.h, k: r.k, l: r.l, d: r.d, multiplicity: r.multiplicity, twoTheta: observedPosition(r.d, wavelength, refinement) }))
    .filter((t) => t.twoTheta >= twoThetaMin && t.twoTheta <= twoThetaMax)
    .sort((x, y) => x.twoTheta - y.twoTheta);
}

/**
 * Above this share of a phase's indexed lines kept out of the peak refinement as blends, its lines overlap so
 * much that the whole-pattern fit, which models every overlapping line, gives its cell (own choice;
 * docs/decisions/012-phases-and-window.md).
 */
const OVERLAP_SHARE = 0.25;

function phaseResult(
  f: PhaseFit,
  refined: boolean,
  main: Refinement | null,
  whole: WholePatternFit["phases"][number] | null,
  range: { wavelength: number; twoThetaMin: number; twoThetaMax: number },
): PhaseResult {
  const r = f.refinement;
  const ok = refined && r !== null && r.used > 0 && r.dof >= 0;
  const explained = [...f.explained.values()];
  const blends = explained.filter((a) => !a.used).length;
  const sharpen = ok && whole !== null && whole.esd !== null && explained.length > 0 && blends / explained.length >= OVERLAP_SHARE;
  return {
    role: f.role,
    name: f.phase.name ?? null,
    system: f.phase.system,
    centering: f.phase.centering,
    declaredCell: f.phase.cell,
    cell: sharpen ? whole!.cell : ok ? r!.cell : null,
    esd: sharpen ? largerEsd(whole!.esd!, r!.esd) : ok ? r!.esd : null,
    cellFrom: sharpen ? "whole_pattern" : "peaks",
    wholePatternCell: whole ? whole.cell : null,
    wholePatternEsd: whole ? whole.esd : null,
    fixed: fixedCellParameters(f.phase.system),
    present: f.present,
    peaks: f.present ? f.explained.size : 0,
    M20: f.present ? f.m20 : null,
    reasons: f.reasons,
    reflections: ok ? ticksOf(r!, range.wavelength, range.twoThetaMin, range.twoThetaMax) : declaredTicks(f.phase, main, range),
  };
}

/**
 * A sharpened cell's esds: the larger of the whole-pattern fit's and the peak refinement's, parameter by
 * parameter. Least-squares esds of a whole-pattern fit are known to come out small where neighbouring residuals
 * correlate (Bérar & Lelann 1991, J. Appl. Cryst. 24, 1 — from memory); the peak refinement's stand as a floor.
 */
function largerEsd(whole: Cell, peaks: Cell | null): Cell {
  if (!peaks) return whole;
  const out = { ...whole };
  for (const k of ["a", "b", "c", "alpha", "beta", "gamma"] as const) out[k] = Math.max(whole[k], peaks[k]);
  return out;
}

/** An absent (or unrefined) phase's reflections where its declared cell puts them, with the main phase's line shift. */
function declaredTicks(phase: DeclaredPhase, main: Refinement | null, range: { wavelength: number; twoThetaMin: number; twoThetaMax: number }): TickMark[] {
  const dMin = range.wavelength / (2 * Math.sin((Math.min(range.twoThetaMax + 1, 179) * Math.PI) / 360));
  return allowedReflections(phase.cell, phase.system, phase.centering, { dMin })
    .map((x) => {
      const bragg = twoThetaFromD(x.d, range.wavelength);
      return { h: x.h, k: x.k, l: x.l, d: x.d, multiplicity: x.multiplicity, twoTheta: bragg + (main && main.used > 0 ? refinedLineShift(bragg, main) : 0) };
    })
    .filter((t) => t.twoTheta >= range.twoThetaMin && t.twoTheta <= range.twoThetaMax)
    .sort((x, y) => x.twoTheta - y.twoTheta);
}

/** The refined cell's reflection nearest to an observed position, and how far it is, degrees 2θ. */
function nearestReflection(twoTheta: number, refinement: Refinement, wavelength: number): { miss: number } | null {
  let best: number | null = null;
  for (const r of refinement.reflections) {
    const x = observedPosition(r.d, wavelength, refinement);
    if (Number.isFinite(x) && (best === null || Math.abs(x - twoTheta) < best)) best = Math.abs(x - twoTheta);
  }
  return best === null ? null : { miss: best };
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
    fwhmEsd: Number.isFinite(p.fwhmEsd) ? p.fwhmEsd : null,
    eta: p.eta,
    origin: "sample",
    foreign: null,
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

/** Reads and checks a scan file (its bytes, or its text); bad input of any kind comes back as one sentence. */
export function checkScanFile(input: string | Uint8Array, options: LatticeCheckOptions & ParseScanOptions): CheckScanResult {
  const problem = checkOptionsProblem(options);
  if (problem) return { ok: false, error: problem };
  const parsed = parseScan(input, options);
  if (!parsed.ok) return parsed;
  return checkParsedScan(parsed.scan, options);
}

/** Checks a scan already read (the caller read it to learn what it states); bad options or a flat scan give one sentence. */
export function checkParsedScan(scan: CheckableScan, options: LatticeCheckOptions): CheckScanResult {
  const problem = checkOptionsProblem(options);
  if (problem) return { ok: false, error: problem };
  const result = runLatticeCheck(scan, options);
  if (result.peaks.length === 0) {
    return { ok: false, error: "No peaks stand out from the noise; the scan looks like a flat line." };
  }
  return { ok: true, result };
}
