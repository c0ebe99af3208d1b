// Indexing of observed peaks against a declared cell and least-squares refinement of that cell with a
// zero shift, a specimen displacement, both, and optionally the specimen transparency.
//
// Model, 2θ in degrees: 2θ_obs = 2θ(Q(p)) + Z − (360/π)·s·cos θ / R − (90/π)·sin 2θ / (μ R)
// (zero shift Z, specimen displacement s and penetration 1/μ on a goniometer of radius R; line-shifts.ts);
// each correction is refined or held at zero as asked. Q = 1/d² is linear in the system's free
// reciprocal-metric parameters p and the corrections enter linearly, so each Gauss–Newton step is a small
// weighted linear fit; the weights are the peak-position uncertainties from the profile fits.
//
// "auto" refines the zero shift and the displacement together where the scan's angular range tells them
// apart (the displacement follows cos θ, the zero is constant). Where that fit finds one of them and the other
// indistinguishable from none, the found one is refined alone; where it finds neither, or the range does not
// separate them (|correlation| above CORRELATION_LIMIT), the zero shift alone, with a warning
// (docs/reference-values.md#peak-positions-and-widths).

import { type Cell, type Centering, type CrystalSystem, cellFromMetricParams, freeParameters, metricParamsFromCell, qDesignRow } from "./cell";
import { invertSymmetric, matVec, squareMatrix, type SquareMatrix } from "./least-squares";
import { displacementShiftAtTheta, penetrationMmOf, refinedLineShift, transparencyShiftAtTheta } from "./line-shifts";
import type { IndexedLine } from "./merit";
import { allowedReflections, type Reflection } from "./reflections";
import { lowerBound, median } from "./sorted";

const RAD = Math.PI / 180;
const DEG = 180 / Math.PI;

/** The instrumental correction refined with the cell; "auto" chooses (see the module comment). */
export type CorrectionKind = "zero_shift" | "displacement" | "zero_and_displacement" | "auto";

/** The correction a refinement actually used. */
export type RefinedCorrectionKind = Exclude<CorrectionKind, "auto">;

/**
 * The transparency correction for weakly absorbing samples: refined (as the penetration depth 1/μ), or
 * fixed from a known linear attenuation coefficient μ in cm⁻¹.
 */
export type TransparencyOption = { refine: true } | { linearAttenuationPerCm: number };

/**
 * Above this |correlation| of the zero shift and the displacement, the scan's range does not separate them
 * and "auto" refines the zero shift alone. With the cell refined alongside, the two correlate above 0.99 on
 * every laboratory scan (simulated scans of 4–155° 2θ with every anode: 0.998–0.99998), yet the combined fit
 * still gives an unbiased cell with honest esds there, whereas one correction chosen by the data when neither
 * is clearly found was biased by up to 8×10⁻⁴ Å. So the fallback is kept for ranges where even the combined
 * fit no longer holds them apart (own choice, docs/reference-values.md#peak-positions-and-widths).
 */
export const CORRELATION_LIMIT = 0.99999;

/**
 * In the combined fit, a correction at least this many esds from zero is taken as found, one closer as
 * indistinguishable from none (own choice: about 95 % two-sided).
 */
export const SIGNIFICANT_T = 2;

type Term = "zero" | "displacement" | "transparency";

interface Model {
  terms: Term[];
  /** Penetration depth 1/μ (mm) held fixed, 0 for none. */
  fixedPenetration: number;
}

/** An observed peak as refinement needs it. */
export interface ObservedPeak {
  twoTheta: number;
  twoThetaEsd: number;
  fwhm: number;
  intensity: number;
}

export interface RefineOptions {
  wavelength: number;
  system: CrystalSystem;
  centering: Centering;
  start: Cell;
  /** Default "zero_shift". */
  correction?: CorrectionKind;
  transparency?: TransparencyOption;
  /** Goniometer radius for the displacement and transparency, mm; 240 mm is a usual lab radius (common practice). */
  goniometerRadiusMm?: number;
  /** Largest 2θ of the scan, degrees: reflections beyond it are not listed. */
  twoThetaMax: number;
  /** Relative change of the cell lengths searched for the first assignment (default ±2 %). */
  searchRange?: number;
}

export interface Assignment {
  peak: number;
  reflection: Reflection;
  /** Calculated 2θ in the observed frame (with the zero or displacement correction), degrees. */
  twoThetaCalc: number;
  /** Used in the least squares (false when another reflection lies too close to tell them apart). */
  used: boolean;
}

export interface Refinement {
  cell: Cell;
  esd: Cell | null;
  /** The correction refined (what "auto" chose). */
  correction: RefinedCorrectionKind;
  /** Degrees 2θ when refined, else 0. */
  zeroShift: number;
  zeroShiftEsd: number | null;
  /** mm when refined, else 0. */
  displacement: number;
  displacementEsd: number | null;
  /** Correlation coefficient of the zero shift and the displacement from the covariance matrix, when both were refined (or tried by "auto"). */
  zeroDisplacementCorrelation: number | null;
  /** Transparency as the penetration depth 1/μ in mm (refined or fixed), else 0. */
  penetrationMm: number;
  penetrationMmEsd: number | null;
  transparencyRefined: boolean;
  /** Largest |correlation| of the refined transparency with the other corrections. */
  transparencyCorrelation: number | null;
  /** Sentences about the corrections (a fallback of "auto", a transparency that the range cannot separate). */
  warnings: string[];
  assignments: Assignment[];
  /** Indices of observed peaks no reflection claimed. */
  unindexed: number[];
  /** Reflections of the refined cell up to the scan's end. */
  reflections: Reflection[];
  reducedChi2: number;
  /** Peaks used in the least squares, and the degrees of freedom. */
  used: number;
  dof: number;
  converged: boolean;
  /** Free metric parameters and their scaled covariance (for reporting and tests). */
  metricParams: number[];
  iterations: number;
  /** Goniometer radius the displacement refers to, mm. */
  radiusMm: number;
}

interface State {
  p: number[];
  /** The refined corrections, in the order of the model's terms. */
  shifts: number[];
}

/** ∂(2θ)/∂(term), degrees per unit of the term, at the Bragg angle θ (radians). */
function termColumn(term: Term, theta: number, radius: number): number {
  if (term === "zero") return 1;
  if (term === "displacement") return displacementShiftAtTheta(theta, 1, radius);
  return transparencyShiftAtTheta(theta, 1, radius);
}

/** The correction's shift, degrees 2θ, of a line of Bragg angle θ (radians). */
function shiftAt(theta: number, shifts: number[], model: Model, radius: number): number {
  let shift = model.fixedPenetration ? transparencyShiftAtTheta(theta, model.fixedPenetration, radius) : 0;
  for (let k = 0; k < model.terms.length; k++) shift += shifts[k] * termColumn(model.terms[k], theta, radius);
  return shift;
}

/** Calculated 2θ (degrees, observed frame) of a Q for the current state; NaN beyond the Bragg limit. */
function predict(q: number, shifts: number[], model: Model, options: RefineOptions, radius: number): number {
  const s = (options.wavelength * Math.sqrt(q)) / 2;
  if (!(s < 1)) return NaN;
  const theta = Math.asin(s);
  return 2 * theta * DEG + shiftAt(theta, shifts, model, radius);
}

function modelOf(kind: RefinedCorrectionKind, options: RefineOptions): Model {
  const terms: Term[] = kind === "zero_shift" ? ["zero"] : kind === "displacement" ? ["displacement"] : ["zero", "displacement"];
  const t = options.transparency;
  if (t && "refine" in t) terms.push("transparency");
  const fixedPenetration = t && "linearAttenuationPerCm" in t && t.linearAttenuationPerCm > 0 ? penetrationMmOf(t.linearAttenuationPerCm) : 0;
  return { terms, fixedPenetration };
}

function qOf(system: CrystalSystem, p: number[], r: Reflection): number {
  const row = qDesignRow(system, r);
  let q = 0;
  for (let i = 0; i < row.length; i++) q += row[i] * p[i];
  return q;
}

function listReflections(system: CrystalSystem, centering: Centering, p: number[], options: RefineOptions): Reflection[] {
  const { cell } = cellFromMetricParams(system, p);
  const thetaMax = Math.min(options.twoThetaMax + 2, 179) / 2;
  const dMin = options.wavelength / (2 * Math.sin(thetaMax * RAD));
  return allowedReflections(cell, system, centering, { dMin });
}

/** A reflection with its design row ∂Q/∂p and a key that is equal for reflections of equal Q-expression. */
interface PoolEntry {
  r: Reflection;
  row: number[];
  key: string;
}

/**
 * Every reflection any cell the refinement can reach may show in the scan: those of the start cell
 * enlarged by the search range plus a margin, listed once per refinement.
 */
function reflectionPool(system: CrystalSystem, centering: Centering, p: number[], options: RefineOptions, range: number): PoolEntry[] {
  return listReflections(
    system,
    centering,
    p.map((x) => x / (1 + range + 0.005) ** 2),
    options,
  ).map((r) => {
    const row = qDesignRow(system, r);
    return { r, row, key: row.join(",") };
  });
}

function qOfRow(row: number[], p: number[]): number {
  let q = 0;
  for (let i = 0; i < row.length; i++) q += row[i] * p[i];
  return q;
}

/**
 * Indexes and refines; see the module comment for the model. The indexing window of each reflection is
 * the peak's own resolution plus three standard uncertainties of the reflection's predicted position,
 * propagated from the covariance of the cell (at first a prior of ±0.5 % on the lengths around the
 * coarse search's cell, then the refinement's own), so it narrows as the cell converges. While a
 * window holds reflections of more than one Q-expression the peak waits for a later pass (see assign).
 */
/**
 * Refined with both corrections, a cell that explains fewer than this share of the peaks the zero shift alone
 * explained has traded the indexing for a large correction (seen on mixtures); one peak more or less at the
 * edge of its window is not that. Our own choice.
 */
const FEWER_PEAKS_SHARE = 0.9;

/**
 * A refinement that keeps at least this share of the peaks ends the search over the priors; below it the
 * tighter priors are tried too and the one keeping most peaks stands (our own choice: a single phase keeps
 * nearly all, a mixture's main phase often half or more).
 */
const ENOUGH_PEAKS_SHARE = 0.6;

export function refineCell(peaks: readonly ObservedPeak[], options: RefineOptions): Refinement {
  const kind = options.correction ?? "zero_shift";
  if (kind !== "auto") return refineWith(peaks, options, kind);
  // The zero shift alone first: one offset is the most robust way to find which reflection each peak is (two
  // strongly correlated corrections can trade a wrong cell for a large displacement on a mixture). Both are
  // then refined from that indexing; if that keeps fewer peaks, the zero shift's refinement stands.
  const zeroFirst = refineWith(peaks, options, "zero_shift");
  const fromZero = zeroFirst.used > 0 ? { ...options, start: zeroFirst.cell, searchRange: Math.min(options.searchRange ?? 0.02, 0.002) } : options;
  const both = refineWith(peaks, fromZero, "zero_and_displacement", zeroFirst.used > 0);
  if (zeroFirst.used > 0 && both.used < FEWER_PEAKS_SHARE * zeroFirst.used) {
    zeroFirst.zeroDisplacementCorrelation = both.zeroDisplacementCorrelation;
    zeroFirst.warnings.unshift(
      `Refined together with the specimen displacement, the cell explained far fewer peaks (${both.used} against ${zeroFirst.used}), so only the zero shift was refined.`,
    );
    return zeroFirst;
  }
  const correlation = both.zeroDisplacementCorrelation;
  const usable = both.dof > 0 && correlation !== null && both.zeroShiftEsd !== null && both.displacementEsd !== null;
  // The esds are scaled by the reduced χ²; for this test never below the weights' own (χ²ᵣ < 1 would shrink them).
  const inflate = Number.isFinite(both.reducedChi2) && both.reducedChi2 < 1 ? 1 / Math.sqrt(Math.max(both.reducedChi2, 1e-6)) : 1;
  const tZero = usable ? Math.abs(both.zeroShift) / (both.zeroShiftEsd! * inflate) : 0;
  const tDisplacement = usable ? Math.abs(both.displacement) / (both.displacementEsd! * inflate) : 0;
  // One of the two found and the other indistinguishable from none: the found one alone (refining the
  // other adds only its strongly correlated uncertainty to the cell's).
  const single: RefinedCorrectionKind | null =
    tZero >= SIGNIFICANT_T && tDisplacement < SIGNIFICANT_T ? "zero_shift" : tDisplacement >= SIGNIFICANT_T && tZero < SIGNIFICANT_T ? "displacement" : null;
  // The single refinements start from the combined fit's cell, which is as close as the declaration or closer.
  const near = both.used > 0 ? { ...options, start: both.cell, searchRange: Math.min(options.searchRange ?? 0.02, 0.002) } : options;
  // The zero shift alone was refined first already; only a displacement alone needs a refinement of its own.
  const zeroAlone = () => (zeroFirst.used > 0 ? zeroFirst : refineWith(peaks, near, "zero_shift", both.used > 0));
  if (usable && single) {
    const alone = single === "zero_shift" ? zeroAlone() : refineWith(peaks, near, single, both.used > 0);
    if (alone.used >= both.used) {
      alone.zeroDisplacementCorrelation = correlation;
      alone.warnings.unshift(
        single === "zero_shift"
          ? `Refined together with the zero shift, the specimen displacement came out at ${both.displacement.toFixed(3)} ± ${both.displacementEsd!.toFixed(3)} mm, indistinguishable from none, so the zero shift was refined alone.`
          : `Refined together with the specimen displacement, the zero shift came out at ${both.zeroShift.toFixed(4)}° ± ${both.zeroShiftEsd!.toFixed(4)}°, indistinguishable from none, so the displacement was refined alone.`,
      );
      return alone;
    }
  }
  const bothFound = usable && tZero >= SIGNIFICANT_T && tDisplacement >= SIGNIFICANT_T;
  if (bothFound && Math.abs(correlation!) <= CORRELATION_LIMIT) return both;
  // Neither found, the range does not separate them, or too few peaks for both: the zero shift alone, the
  // check's single correction.
  const alone = zeroAlone();
  alone.zeroDisplacementCorrelation = correlation;
  alone.warnings.unshift(
    !usable
      ? "Too few peaks to refine both the zero shift and the specimen displacement, so only the zero shift was refined."
      : bothFound
        ? `The scan's angular range does not separate the zero shift from the specimen displacement (correlation ${correlation!.toFixed(5)}, above ${CORRELATION_LIMIT}), so only the zero shift was refined.`
        : `Refined together, neither the zero shift (${both.zeroShift.toFixed(4)}° ± ${both.zeroShiftEsd!.toFixed(4)}°) nor the specimen displacement (${both.displacement.toFixed(3)} ± ${both.displacementEsd!.toFixed(3)} mm) stands out from none at this scan's precision (correlation ${correlation!.toFixed(5)}), so only the zero shift was refined.`,
  );
  return alone;
}

/**
 * One refinement with the given correction. `warm`: the start is an already refined cell, so the indexing
 * begins under the tightest prior (the wider ones follow only if that leaves too few peaks).
 */
function refineWith(peaks: readonly ObservedPeak[], options: RefineOptions, kind: RefinedCorrectionKind, warm = false): Refinement {
  const { system, centering } = options;
  const model = modelOf(kind, options);
  const radius = options.goniometerRadiusMm ?? 240;
  const nFree = freeParameters(system).length;
  const startP = metricParamsFromCell(system, options.start);
  const search = options.searchRange ?? 0.02;
  const pool = reflectionPool(system, centering, startP, options, search);
  const coarse = coarseSearch(peaks, pool, startP, options, model, radius, search);
  const priorZero = priorOffset(peaks);
  let state = coarse;
  let assignments: Assignment[] = [];
  let fit: LinearStep | null = null;
  let converged = false;
  let iterations = 0;
  // A dense pattern (low symmetry, short wavelength) may leave too few unambiguous peaks under the widest
  // prior; the declared cell is then trusted more closely, down to ±0.05 %.
  const priors = warm ? [PRIOR_LENGTHS[PRIOR_LENGTHS.length - 1], ...PRIOR_LENGTHS.slice(0, -1)] : PRIOR_LENGTHS;
  const schedule = [...priors.map((prior) => ({ prior, lenient: false })), { prior: PRIOR_LENGTHS[1], lenient: true }];
  // The refinement that keeps the most peaks: a prior whose first windows took another phase's lines for
  // this cell's can converge on a wrong cell that keeps only a few; a tighter prior then does better.
  let kept: { state: State; assignments: Assignment[]; fit: LinearStep; converged: boolean } | null = null;
  for (const { prior, lenient } of schedule) {
    if (kept && kept.fit.used >= ENOUGH_PEAKS_SHARE * peaks.length) break;
    state = coarse;
    converged = false;
    let covariance = priorCovariance(system, state.p, model, radius, prior, priorZero);
    fit = null;
    assignments = [];
    let previous = "";
    for (let pass = 0; pass < 12; pass++) {
      const s = fit ? Math.sqrt(Math.max(fit.reducedChi2, 1)) : 1;
      const next = assign(peaks, pool, state, covariance, options, model, radius, s, lenient);
      const key = next.map((a) => `${a.peak}:${a.reflection.h},${a.reflection.k},${a.reflection.l},${a.used}`).join(";");
      if (key === previous && fit) {
        converged = true;
        break;
      }
      previous = key;
      const result = iterateLeastSquares(peaks, next, state, options, model, radius, nFree);
      iterations += result.iterations;
      if (!result.fit) break;
      assignments = next;
      fit = result.fit;
      state = result.state;
      covariance = scaledCovariance(fit) ?? fit.covariance;
    }
    if (fit && (!kept || fit.used > kept.fit.used)) kept = { state, assignments, fit, converged };
  }
  if (kept) ({ state, assignments, fit, converged } = kept);
  else {
    fit = null;
    assignments = [];
  }
  if (fit) addStraddledBlends(peaks, pool, state, assignments, options, model, radius);
  // The assigned reflections were listed before the last step; give them the final cell's d and position.
  for (const a of assignments) {
    const q = qOf(system, state.p, a.reflection);
    a.reflection = { ...a.reflection, d: 1 / Math.sqrt(q) };
    a.twoThetaCalc = predict(q, state.shifts, model, options, radius);
  }
  const claimed = new Set(assignments.map((a) => a.peak));
  const unindexed = peaks.map((_, i) => i).filter((i) => !claimed.has(i));
  const finalCovariance = fit ? scaledCovariance(fit) : null;
  const cellCov = finalCovariance ? leadingBlock(finalCovariance, nFree) : undefined;
  const { cell, esd } = cellFromMetricParams(system, state.p, cellCov);
  const n = nFree + model.terms.length;
  const termIndex = (term: Term) => {
    const k = model.terms.indexOf(term);
    return k < 0 ? -1 : nFree + k;
  };
  const value = (term: Term) => (termIndex(term) < 0 ? 0 : state.shifts[termIndex(term) - nFree]);
  const esdOf = (term: Term) => {
    const i = termIndex(term);
    return i < 0 || !finalCovariance ? null : Math.sqrt(Math.max(finalCovariance.data[i * n + i], 0));
  };
  const correlationOf = (x: Term, y: Term) => {
    const i = termIndex(x);
    const j = termIndex(y);
    if (i < 0 || j < 0 || !fit) return null;
    const c = fit.covariance.data;
    const r = c[i * n + j] / Math.sqrt(c[i * n + i] * c[j * n + j]);
    return Number.isFinite(r) ? r : null;
  };
  const warnings: string[] = [];
  let transparencyCorrelation: number | null = null;
  if (model.terms.includes("transparency")) {
    const others = model.terms.filter((t) => t !== "transparency").map((t) => Math.abs(correlationOf("transparency", t) ?? 0));
    transparencyCorrelation = others.length ? Math.max(...others) : null;
    if (transparencyCorrelation !== null && transparencyCorrelation > CORRELATION_LIMIT) {
      warnings.push(
        `The transparency correlates with the other corrections by ${transparencyCorrelation.toFixed(3)} over this scan's range, so its value and theirs are uncertain; give the sample's linear attenuation coefficient instead if it is known.`,
      );
    }
  }
  return {
    cell,
    esd,
    correction: kind,
    zeroShift: value("zero"),
    zeroShiftEsd: esdOf("zero"),
    displacement: value("displacement"),
    displacementEsd: esdOf("displacement"),
    zeroDisplacementCorrelation: correlationOf("zero", "displacement"),
    penetrationMm: model.terms.includes("transparency") ? value("transparency") : model.fixedPenetration,
    penetrationMmEsd: esdOf("transparency"),
    transparencyRefined: model.terms.includes("transparency"),
    transparencyCorrelation,
    warnings,
    assignments,
    unindexed,
    reflections: listReflections(system, centering, state.p, options),
    reducedChi2: fit ? fit.reducedChi2 : NaN,
    used: fit ? fit.used : 0,
    dof: fit ? fit.dof : 0,
    converged: converged && fit !== null,
    metricParams: state.p,
    iterations,
    radiusMm: radius,
  };
}

// Prior uncertainty of the cell before any fit: ±0.5 % on the lengths (±1 % on Q) at first, the cross
// terms of Q scaled alike from the diagonal ones they couple, and of the offset left after the coarse
// search (zero, or its equivalent in displacement or transparency; see priorOffset).
const PRIOR_LENGTHS = [0.005, 0.002, 0.001, 0.0005];
/** Upper bound of the offset's prior, degrees 2θ: an instrument's usual zero error (common practice). */
const PRIOR_ZERO = 0.05;

/**
 * The offset's prior uncertainty, degrees 2θ: the coarse search has placed the strongest peaks within
 * half a FWHM of their reflections on a grid of a third of a FWHM, so the offset it found is known to
 * about one FWHM of those peaks (never below the grid's 0.002° floor), and never worse than PRIOR_ZERO.
 * A fixed 0.05° would be ten widths of a 0.005° synchrotron line: every reflection's window would then
 * reach over its neighbours in a dense pattern and no peak could be indexed unambiguously.
 */
function priorOffset(peaks: readonly ObservedPeak[]): number {
  const fwhm = strongestWidth(peaks);
  return Number.isFinite(fwhm) ? Math.min(PRIOR_ZERO, Math.max(fwhm, ZERO_STEP_FLOOR)) : PRIOR_ZERO;
}

function priorCovariance(system: CrystalSystem, p: number[], model: Model, radius: number, priorLength: number, priorZero: number): SquareMatrix {
  const names = freeParameters(system);
  const n = names.length + model.terms.length;
  const cov = squareMatrix(n);
  const diagonal: Record<string, number> = {};
  names.forEach((name, j) => {
    if (name === "A" || name === "B" || name === "C") diagonal[name] = Math.abs(p[j]);
  });
  diagonal.B ??= diagonal.A;
  diagonal.C ??= diagonal.A;
  const couples: Record<string, [string, string]> = { D: ["B", "C"], E: ["A", "C"], F: ["A", "B"] };
  names.forEach((name, j) => {
    const scale = couples[name] ? Math.sqrt(diagonal[couples[name][0]] * diagonal[couples[name][1]]) : Math.abs(p[j]);
    cov.data[j * n + j] = (2 * priorLength * scale) ** 2;
  });
  // Each correction's prior: the value that moves a line by priorZero where it moves lines most (the
  // displacement at low angles, the transparency at 2θ = 90°).
  model.terms.forEach((term, k) => {
    const sigma = priorZero / Math.abs(termColumn(term, term === "transparency" ? Math.PI / 4 : 0, radius));
    const j = names.length + k;
    cov.data[j * n + j] = sigma ** 2;
  });
  return cov;
}

// A floor of 0.5 % of the FWHM on each position's uncertainty keeps one very strong peak from carrying
// the whole fit on a statistical esd far below what the profile model can deliver (common practice).
function positionSigma(peak: ObservedPeak): number {
  const esd = Number.isFinite(peak.twoThetaEsd) ? peak.twoThetaEsd : 0.1 * peak.fwhm;
  return Math.sqrt(esd * esd + (0.005 * peak.fwhm) ** 2);
}

/** The strongest peaks the coarse search matches, indices into the peaks. */
function strongestPeaks(peaks: readonly ObservedPeak[]): number[] {
  return [...peaks.keys()].sort((a, b) => peaks[b].intensity - peaks[a].intensity).slice(0, COARSE_PEAKS);
}

/** Median FWHM of the strongest peaks, degrees 2θ (NaN without peaks). */
function strongestWidth(peaks: readonly ObservedPeak[]): number {
  const strong = strongestPeaks(peaks);
  return strong.length ? median(strong.map((i) => peaks[i].fwhm)) : NaN;
}

/** Peaks the coarse search matches; the offset's range, degrees 2θ, and the floor of its grid step. */
const COARSE_PEAKS = 20;
const ZERO_RANGE = 0.2;
const ZERO_STEP_FLOOR = 0.002;
/**
 * Grid points (scale × offset) of one level of the coarse search, the matching candidates kept from a
 * level for the next, and how much narrower each level's tolerance is than the one before (own choices:
 * a laboratory scan's grid fits in one level; a synchrotron scan's would otherwise grow as 1/FWHM²).
 */
const COARSE_GRID_POINTS = 4096;
const COARSE_CANDIDATES = 8;
const COARSE_REFINEMENT = 4;

/**
 * The uniform change of the cell lengths (within ±range) and the zero offset (±0.2°) that bring most of
 * the strongest peaks within half a FWHM of a reflection: the start of the indexing, so that a declared
 * cell a little off (thermal expansion, a solid solution) still indexes.
 *
 * Coarse to fine: the score of a (scale, offset) is Σ (1 − (miss/tolerance)²) over the strongest peaks
 * within tolerance, on a grid of a third of the tolerance. Where that grid at the peaks' own half-FWHM
 * tolerance would exceed COARSE_GRID_POINTS (narrow lines), the first level widens every tolerance by a
 * common factor to fit the grid into that many points; each following level narrows the tolerance by
 * COARSE_REFINEMENT and searches only around the best few candidates of the level before, down to the
 * peaks' own half FWHM. The work is thus bounded whatever the line width.
 */
function coarseSearch(
  peaks: readonly ObservedPeak[],
  pool: PoolEntry[],
  startP: number[],
  options: RefineOptions,
  model: Model,
  radius: number,
  range: number,
): State {
  const { wavelength } = options;
  const qCalc = Float64Array.from(pool.map((e) => qOfRow(e.row, startP))).sort();
  const strong = strongestPeaks(peaks);
  const fallback: State = { p: startP, shifts: model.terms.map(() => 0) };
  if (strong.length === 0 || qCalc.length === 0) return fallback;
  const fwhm = median(strong.map((i) => peaks[i].fwhm));
  const thetas = strong.map((i) => (peaks[i].twoTheta * RAD) / 2).sort((a, b) => a - b);
  const thetaHigh = thetas[Math.floor(0.75 * (thetas.length - 1))];
  // Steps of a third of the half-FWHM tolerance keep every peak's score smooth across the grid; `widen`
  // multiplies the tolerance and the steps alike.
  const scaleStepAt = (widen: number) => Math.max((0.35 * widen * fwhm * RAD) / (2 * Math.tan(thetaHigh)), 1e-5);
  const zeroStepAt = (widen: number) => Math.max(0.35 * widen * fwhm, ZERO_STEP_FLOOR);
  const gridSize = (widen: number) => (Math.floor((2 * range) / scaleStepAt(widen)) + 1) * (Math.floor((2 * ZERO_RANGE) / zeroStepAt(widen)) + 1);
  let widen = 1;
  while (gridSize(widen) > COARSE_GRID_POINTS) widen *= COARSE_REFINEMENT;

  // Observed Q of each strong peak, and its relative tolerance, are evaluated per offset.
  const scoreAt = (scale0: number, scaleStep: number, nScale: number, zero: number, out: Float64Array) => {
    out.fill(0);
    for (const i of strong) {
      const peak = peaks[i];
      const theta = ((peak.twoTheta - zero) * RAD) / 2;
      const qObs = (4 * Math.sin(theta) ** 2) / (wavelength * wavelength);
      // |Δ2θ| from |ΔQ|: dQ = Q cot θ d(2θ) (2θ in radians); the tolerance is half a (widened) FWHM.
      const relativeTolerance = (Math.cos(theta) / Math.sin(theta)) * 0.5 * widen * peak.fwhm * RAD;
      // Q rises with the scale, so one pass with a moving pointer finds every nearest reflection.
      let j = Math.max(0, lowerBound(qCalc, qObs * (1 + scale0) ** 2) - 1);
      for (let k = 0; k < nScale; k++) {
        const q = qObs * (1 + scale0 + k * scaleStep) ** 2;
        while (j < qCalc.length - 1 && qCalc[j + 1] <= q) j++;
        const nearest = j < qCalc.length - 1 && qCalc[j + 1] - q < q - qCalc[j] ? qCalc[j + 1] : qCalc[j];
        const miss = Math.abs(nearest - q) / (q * relativeTolerance);
        if (miss < 1) out[k] += 1 - miss * miss;
      }
    }
  };
  // Prefer the declared cell and no offset when scores tie.
  const ranked = (score: number, scale: number, zero: number) => score - 0.01 * (Math.abs(scale) / range + Math.abs(zero) / ZERO_RANGE);

  type Candidate = { score: number; scale: number; zero: number };
  // Level by level: the region searched (all of it at first, then around each kept candidate).
  let regions = [{ scaleLow: -range, scaleHigh: range, zeroLow: -ZERO_RANGE, zeroHigh: ZERO_RANGE }];
  let best: Candidate = { score: -Infinity, scale: 0, zero: 0 };
  for (;;) {
    const scaleStep = scaleStepAt(widen);
    const zeroStep = zeroStepAt(widen);
    // The level's grid points as three parallel lists of numbers (no object per point: a laboratory scan's level
    // has a few thousand of them).
    const foundScore: number[] = [];
    const foundScale: number[] = [];
    const foundZero: number[] = [];
    for (const region of regions) {
      // Grid points on the level's lattice (multiples of the steps from −range and −ZERO_RANGE).
      const k0 = Math.max(0, Math.ceil((region.scaleLow + range) / scaleStep - 1e-9));
      const k1 = Math.min(Math.floor((2 * range) / scaleStep + 1e-9), Math.floor((region.scaleHigh + range) / scaleStep + 1e-9));
      const z0 = Math.max(0, Math.ceil((region.zeroLow + ZERO_RANGE) / zeroStep - 1e-9));
      const z1 = Math.min(Math.floor((2 * ZERO_RANGE) / zeroStep + 1e-9), Math.floor((region.zeroHigh + ZERO_RANGE) / zeroStep + 1e-9));
      if (k1 < k0 || z1 < z0) continue;
      const nScale = k1 - k0 + 1;
      const scores = new Float64Array(nScale);
      for (let z = z0; z <= z1; z++) {
        const zero = -ZERO_RANGE + z * zeroStep;
        scoreAt(-range + k0 * scaleStep, scaleStep, nScale, zero, scores);
        for (let k = 0; k < nScale; k++) {
          const scale = -range + (k0 + k) * scaleStep;
          foundScore.push(ranked(scores[k], scale, zero));
          foundScale.push(scale);
          foundZero.push(zero);
        }
      }
    }
    const count = foundScore.length;
    if (widen === 1) {
      // The highest score, the first of equal ones (as a stable sort by score would put first).
      let top = -1;
      for (let i = 0; i < count; i++) if (top < 0 || foundScore[i] > foundScore[top]) top = i;
      if (top >= 0) best = { score: foundScore[top], scale: foundScale[top], zero: foundZero[top] };
      break;
    }
    // Highest score first, equal scores in the order found (a stable sort).
    const order = Array.from({ length: count }, (_, i) => i).sort((a, b) => foundScore[b] - foundScore[a] || a - b);
    // The best candidates at least two grid steps apart, each searched at the next level over the
    // neighbourhood its grid cell leaves uncertain.
    const kept: Candidate[] = [];
    for (const i of order) {
      const c: Candidate = { score: foundScore[i], scale: foundScale[i], zero: foundZero[i] };
      if (kept.length >= COARSE_CANDIDATES) break;
      if (kept.some((k) => Math.abs(k.scale - c.scale) < 2 * scaleStep && Math.abs(k.zero - c.zero) < 2 * zeroStep)) continue;
      kept.push(c);
    }
    regions = kept.map((c) => ({
      scaleLow: c.scale - 1.5 * scaleStep,
      scaleHigh: c.scale + 1.5 * scaleStep,
      zeroLow: c.zero - 1.5 * zeroStep,
      zeroHigh: c.zero + 1.5 * zeroStep,
    }));
    widen = Math.max(1, widen / COARSE_REFINEMENT);
  }
  const p = startP.map((x) => x / (1 + best.scale) ** 2);
  // The offset found goes to the zero shift when it is refined, else to the displacement, as the value
  // giving the same shift at the strong peaks' median angle (displacementShiftAtTheta solved for s).
  const thetaMid = thetas[Math.floor(0.5 * (thetas.length - 1))];
  const shifts = model.terms.map(() => 0);
  const zero = model.terms.indexOf("zero");
  const displacement = model.terms.indexOf("displacement");
  if (zero >= 0) shifts[zero] = best.zero;
  else if (displacement >= 0) shifts[displacement] = best.zero / termColumn("displacement", thetaMid, radius);
  return { p, shifts };
}

/**
 * Each peak takes the nearest reflection within its window (see refineCell); a reflection goes to one
 * peak only, the closer. When the window also holds a reflection of another Q-expression, resolved from
 * the nearest, the peak waits while the candidates' positions are uncertain; once they are known to a
 * small part of the FWHM it is indexed to the nearest but kept out of the least squares, as is any peak
 * with another unclaimed reflection within half a FWHM: its fitted position is a blend.
 */
function assign(
  peaks: readonly ObservedPeak[],
  pool: PoolEntry[],
  state: State,
  covariance: SquareMatrix,
  options: RefineOptions,
  model: Model,
  radius: number,
  chiScale: number,
  lenient: boolean,
): Assignment[] {
  const n = covariance.n;
  const xMax = options.twoThetaMax + 2;
  const calc = pool
    .map(({ r, row, key }) => {
      const q = qOfRow(row, state.p);
      const x = predict(q, state.shifts, model, options, radius);
      if (!(x <= xMax)) return null;
      const g = positionGradient(options, model, row, q, radius);
      let variance = 0;
      for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) variance += g[i] * covariance.data[i * n + j] * g[j];
      return { r, x, sigma: Math.sqrt(Math.max(variance, 0)), row: key };
    })
    .filter((c) => c !== null)
    .sort((a, b) => a.x - b.x);
  const xs = Float64Array.from(calc.map((c) => c.x));
  let widest = 0;
  for (const c of calc) widest = Math.max(widest, c.sigma);
  const best = new Map<number, { peak: number; miss: number; blend: boolean }>();
  peaks.forEach((peak, i) => {
    const base = Math.min(0.5 * peak.fwhm, Math.max(0.25 * peak.fwhm, 4 * chiScale * positionSigma(peak)));
    const reach = base + 3 * widest;
    let j = lowerBound(xs, peak.twoTheta - reach);
    const inside: number[] = [];
    for (; j < xs.length && xs[j] <= peak.twoTheta + reach; j++) {
      if (Math.abs(xs[j] - peak.twoTheta) <= base + 3 * calc[j].sigma) inside.push(j);
    }
    if (inside.length === 0) return;
    // Distance in units of each reflection's own window.
    const distance = (k: number) => Math.abs(xs[k] - peak.twoTheta) / (base + 3 * calc[k].sigma);
    let nearest = inside[0];
    for (const k of inside) if (distance(k) < distance(nearest)) nearest = k;
    const rivals = inside.filter((k) => calc[k].row !== calc[nearest].row);
    const blend = rivals.length > 0;
    if (blend) {
      const uncertain = inside.some((k) => calc[k].sigma > 0.15 * peak.fwhm);
      // Strict: wait until every candidate's position is known to a small part of the FWHM. Lenient (when
      // strict leaves too few peaks to refine at all): take the nearest if every rival is at least
      // twice as far in units of its window.
      if (uncertain && (!lenient || rivals.some((k) => distance(k) < 2 * distance(nearest)))) return;
    }
    const miss = Math.abs(xs[nearest] - peak.twoTheta);
    const holder = best.get(nearest);
    if (!holder || miss < holder.miss) best.set(nearest, { peak: i, miss, blend });
  });
  const claimedReflections = new Set(best.keys());
  const out: Assignment[] = [];
  for (const [j, { peak, blend }] of best) {
    const fwhm = peaks[peak].fwhm;
    let crowded = blend;
    for (let k = j - 1; k >= 0 && calc[j].x - calc[k].x < 0.5 * fwhm; k--) {
      if (!claimedReflections.has(k) && calc[k].row !== calc[j].row) crowded = true;
    }
    for (let k = j + 1; k < calc.length && calc[k].x - calc[j].x < 0.5 * fwhm; k++) {
      if (!claimedReflections.has(k) && calc[k].row !== calc[j].row) crowded = true;
    }
    out.push({ peak, reflection: calc[j].r, twoThetaCalc: calc[j].x, used: !crowded });
  }
  return out.sort((a, b) => a.peak - b.peak);
}

/**
 * After the refinement, an unindexed peak that lies between two unclaimed reflections less than 0.8 FWHM
 * apart is their unresolved blend: its fitted position is an intensity-weighted mean of the two, so it
 * sits outside both windows. It is indexed to the nearer, kept out of the least squares.
 */
function addStraddledBlends(
  peaks: readonly ObservedPeak[],
  pool: PoolEntry[],
  state: State,
  assignments: Assignment[],
  options: RefineOptions,
  model: Model,
  radius: number,
): void {
  const claimedPeaks = new Set(assignments.map((a) => a.peak));
  const claimed = new Set(assignments.map((a) => a.reflection));
  const calc = pool
    .filter((e) => !claimed.has(e.r))
    .map((e) => ({ r: e.r, x: predict(qOfRow(e.row, state.p), state.shifts, model, options, radius) }))
    .filter((c) => Number.isFinite(c.x))
    .sort((a, b) => a.x - b.x);
  const xs = Float64Array.from(calc.map((c) => c.x));
  peaks.forEach((peak, i) => {
    if (claimedPeaks.has(i)) return;
    const j = lowerBound(xs, peak.twoTheta);
    if (j === 0 || j === xs.length) return;
    const [below, above] = [calc[j - 1], calc[j]];
    if (above.x - below.x >= 0.8 * peak.fwhm) return;
    const nearer = peak.twoTheta - below.x <= above.x - peak.twoTheta ? below : above;
    if (claimed.has(nearer.r)) return;
    claimed.add(nearer.r);
    assignments.push({ peak: i, reflection: nearer.r, twoThetaCalc: nearer.x, used: false });
  });
  assignments.sort((a, b) => a.peak - b.peak);
}

/**
 * ∂(2θ_calc)/∂(p, corrections) of a reflection, degrees per unit of each parameter (the corrections' own
 * dependence on p through θ is left out: it is of the order of the shift times the step, far below the noise).
 */
function positionGradient(options: RefineOptions, model: Model, row: readonly number[], q: number, radius: number): number[] {
  const theta = Math.asin((options.wavelength * Math.sqrt(q)) / 2);
  const slope = (options.wavelength / (2 * Math.sqrt(q) * Math.cos(theta))) * DEG;
  // `row` is the reflection's design row ∂Q/∂p (qDesignRow), which the callers have at hand already.
  const nRow = row.length;
  const g = new Array<number>(nRow + model.terms.length);
  for (let i = 0; i < nRow; i++) g[i] = row[i] * slope;
  for (let k = 0; k < model.terms.length; k++) g[nRow + k] = termColumn(model.terms[k], theta, radius);
  return g;
}

interface LinearStep {
  covariance: SquareMatrix;
  chi2: number;
  dof: number;
  reducedChi2: number;
  used: number;
}

/**
 * Gauss–Newton on the used assignments, then removal from the fit (not from the indexing) of positions
 * more than five robust standard deviations off, repeated until none is removed.
 */
function iterateLeastSquares(
  peaks: readonly ObservedPeak[],
  assignments: Assignment[],
  start: State,
  options: RefineOptions,
  model: Model,
  radius: number,
  nFree: number,
): { fit: LinearStep | null; state: State; iterations: number } {
  let state = start;
  let iterations = 0;
  for (let round = 0; round < 4; round++) {
    const used = assignments.filter((a) => a.used);
    if (used.length < nFree + model.terms.length + 1) return { fit: null, state, iterations };
    let fit: LinearStep | null = null;
    for (let it = 0; it < 20; it++) {
      iterations++;
      const step = gaussNewtonStep(peaks, used, state, options, model, radius);
      if (!step) return { fit: null, state, iterations };
      state = step.state;
      fit = step.fit;
      if (step.small) break;
    }
    if (!fit) return { fit: null, state, iterations };
    const normalised = used.map((a) => {
      const calc = predict(qOf(options.system, state.p, a.reflection), state.shifts, model, options, radius);
      return (peaks[a.peak].twoTheta - calc) / positionSigma(peaks[a.peak]);
    });
    const centre = median(normalised);
    const spread = 1.4826 * median(normalised.map((r) => Math.abs(r - centre)));
    const limit = 5 * Math.max(spread, 1);
    let removed = 0;
    used.forEach((a, i) => {
      if (Math.abs(normalised[i]) > limit && used.length - removed > nFree + model.terms.length + 1) {
        a.used = false;
        removed++;
      }
    });
    if (removed === 0) return { fit, state, iterations };
  }
  return { fit: null, state, iterations };
}

function gaussNewtonStep(
  peaks: readonly ObservedPeak[],
  used: Assignment[],
  state: State,
  options: RefineOptions,
  model: Model,
  radius: number,
): { state: State; fit: LinearStep; small: boolean } | null {
  const { system, wavelength } = options;
  const rows: number[][] = [];
  const residuals: number[] = [];
  const weights: number[] = [];
  for (const a of used) {
    const row = qDesignRow(system, a.reflection);
    const q = qOfRow(row, state.p);
    const sinTheta = (wavelength * Math.sqrt(q)) / 2;
    if (!(sinTheta < 1) || !(q > 0)) return null;
    const theta = Math.asin(sinTheta);
    rows.push(positionGradient(options, model, row, q, radius));
    // A fixed transparency is part of the calculated position; the refined corrections are unknowns.
    const fixed = model.fixedPenetration ? transparencyShiftAtTheta(theta, model.fixedPenetration, radius) : 0;
    residuals.push(peaks[a.peak].twoTheta - 2 * theta * DEG - fixed);
    weights.push(1 / positionSigma(peaks[a.peak]) ** 2);
  }
  const n = rows[0].length;
  const normal = squareMatrix(n);
  const rhs = new Float64Array(n);
  rows.forEach((row, i) => {
    for (let j = 0; j < n; j++) {
      rhs[j] += weights[i] * row[j] * residuals[i];
      for (let k = 0; k < n; k++) normal.data[j * n + k] += weights[i] * row[j] * row[k];
    }
  });
  const covariance = invertSymmetric(normal);
  if (!covariance) return null;
  // Unknowns: the step of the metric parameters and the corrections themselves (they enter linearly).
  const delta = matVec(covariance, rhs);
  const nP = state.p.length;
  const p = state.p.map((x, j) => x + delta[j]);
  const shifts = Array.from(delta.slice(nP));
  let chi2 = 0;
  rows.forEach((row, i) => {
    let f = 0;
    for (let j = 0; j < n; j++) f += row[j] * delta[j];
    chi2 += weights[i] * (residuals[i] - f) ** 2;
  });
  const dof = used.length - n;
  const small = delta.slice(0, nP).every((d, j) => Math.abs(d) <= 1e-10 * Math.abs(p[j])) && shifts.every((x, k) => Math.abs(x - state.shifts[k]) < 1e-7);
  return {
    state: { p, shifts },
    fit: { covariance, chi2, dof, reducedChi2: dof > 0 ? chi2 / dof : NaN, used: used.length },
    small,
  };
}

function scaledCovariance(fit: LinearStep): SquareMatrix | null {
  if (!(fit.dof > 0)) return null;
  const out = squareMatrix(fit.covariance.n);
  for (let i = 0; i < out.data.length; i++) out.data[i] = fit.covariance.data[i] * fit.reducedChi2;
  return out;
}

function leadingBlock(m: SquareMatrix, size: number): number[][] {
  return Array.from({ length: size }, (_, i) => Array.from({ length: size }, (_, j) => m.data[i * m.n + j]));
}

/**
 * The indexed lines and calculated line lists of a refinement, as the figures of merit take them:
 * observed Q after removing the refined zero shift or displacement, calculated 2θ in the observed frame.
 */
export function figuresOfMeritLines(
  peaks: readonly ObservedPeak[],
  refinement: Refinement,
  wavelength: number,
): { lines: IndexedLine[]; calculatedQ: number[]; calculatedTwoTheta: number[] } {
  const offset = (twoThetaBragg: number) => refinedLineShift(twoThetaBragg, refinement);
  const bragg = (d: number) => 2 * Math.asin(Math.min(wavelength / (2 * d), 1)) * DEG;
  const lines = refinement.assignments.map((a): IndexedLine => {
    const d = a.reflection.d;
    const corrected = peaks[a.peak].twoTheta - offset(bragg(d));
    const s = Math.sin((corrected * RAD) / 2);
    return {
      qObs: (4 * s * s) / (wavelength * wavelength),
      qCalc: 1 / (d * d),
      twoThetaObs: peaks[a.peak].twoTheta,
      twoThetaCalc: a.twoThetaCalc,
    };
  });
  const calculatedQ = refinement.reflections.map((r) => 1 / (r.d * r.d));
  const calculatedTwoTheta = refinement.reflections.filter((r) => wavelength / (2 * r.d) < 1).map((r) => bragg(r.d) + offset(bragg(r.d)));
  return { lines, calculatedQ, calculatedTwoTheta };
}
