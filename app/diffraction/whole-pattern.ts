// Whole-pattern fit of a powder scan by Le Bail extraction (Le Bail, Duroy & Fourquet 1988, Mat. Res. Bull. 23,
// 447): the reflection positions follow from each phase's cell by Bragg's law and the instrument's line shift,
// every reflection's intensity is free, and one pseudo-Voigt profile with Caglioti widths, a Lorentzian share
// linear in 2θ and a two-term asymmetry is shared by all, on top of the peak analysis' background with a smooth
// correction. Model, sources and conventions: docs/whole-pattern.md.
//
// Each cycle is one Levenberg–Marquardt step on everything but the intensities — the cells' free
// reciprocal-metric parameters, the refined corrections, the profile and the background terms — whose trial
// re-extracts the intensities by the Le Bail partition; the step allows for the intensities' response through
// the projected normal matrix (see projectedNormal). A start cell far from the truth (several FWHMs at high
// angle) is reached through stages in which every line is first broadened by the position error the cell's
// uncertainty allows, then less, then not. Finely stepped scans are fitted on bins and evaluated on every point.

import { type Cell, type Centering, type CrystalSystem, cellFromMetricParams, metricParamsFromCell, qDesignRow } from "./cell";
import { choleskyFactor, choleskySolve, invertSymmetric, squareMatrix } from "./least-squares";
import { displacementShiftAtTheta, transparencyShiftAtTheta } from "./line-shifts";
import { allowedReflections, type Reflection } from "./reflections";
import type { WholePatternFigures } from "./phases";
import type { RefinedCorrectionKind } from "./refine";
import { lowerBound, median } from "./sorted";

const RAD = Math.PI / 180;
const DEG = 180 / Math.PI;
// Unit-area pseudo-Voigt pieces of FWHM H: G = (2/H)√(ln2/π) exp(−4 ln2 x²/H²), L = (2/πH)/(1 + 4x²/H²).
const GAUSS_NORM = 2 * Math.sqrt(Math.LN2 / Math.PI);
const LORENTZ_NORM = 2 / Math.PI;
const FOUR_LN2 = 4 * Math.LN2;

/**
 * Half-width of the window each line is computed over, in FWHMs; the Lorentzian's value at the window's edge
 * is subtracted so the profile meets zero without a step (as the simulator does). At 12 FWHMs the Lorentzian
 * has fallen to 0.17 % of its peak (own choice; a cut-off of a fraction of a percent of the peak is common
 * practice).
 */
const WINDOW = 12;
/**
 * While the lines are broadened to find the cell, they are Gaussians cut at this many FWHMs: only the
 * positions matter then, and short windows keep those stages cheap (own choice).
 */
const BROAD_WINDOW = 3;
/**
 * Within this many FWHMs of a line its derivatives enter the least squares; farther out the line adds its tail
 * to the model but no derivative (the tail's dependence on position and width is small there; own choice).
 */
const JACOBIAN_REACH = 4;
/** Chebyshev terms of the smooth correction added to the given background (constant to cubic; own choice). */
const BACKGROUND_TERMS = 4;
/** Le Bail partition passes per trial: each is cheap with the profiles held, and a few settle overlaps. */
const PARTITION_PASSES = 3;
/** A stage ends when a full step would lower χ² by less than this fraction of the reduced χ² (own choice). */
const PREDICTED_TOLERANCE = 0.01;
/** A step lowering χ² by less than this fraction ends a broadened stage, or the last one (own choice). */
const BROAD_TOLERANCE = 1e-3;
const FINAL_TOLERANCE = 1e-6;
/** Most iterations of one broadened stage (own choice). */
const STAGE_ITERATIONS = 6;
/** A scan with more than twice this many points per typical FWHM is fitted on bins (see fitWholePattern). */
const BIN_FRACTION = 6;
/** Default relative uncertainty of the given cells: the start the stages are planned for (own choice). */
const DEFAULT_CELL_UNCERTAINTY = 0.003;

export interface WholePatternPhaseInput {
  system: CrystalSystem;
  centering: Centering;
  cell: Cell;
}

export interface WholePatternInput {
  twoTheta: Float64Array;
  intensity: Float64Array;
  /** Variance of each point, as the peak analysis computes it (the weights are its inverse). */
  variance: Float64Array;
  /** The peak analysis' background: held, with a smooth correction refined on top. */
  background: Float64Array;
  /** The diffracting lines: Kα1 first; the weights are relative to the first line's. */
  lines: { wavelength: number; weight: number }[];
  phases: WholePatternPhaseInput[];
  /** The instrument's line shift as the cell refinement left it: the refined terms of `kind` start from it. */
  correction: { kind: RefinedCorrectionKind; zeroShift: number; displacement: number; penetrationMm: number; radiusMm: number };
  /** Typical FWHM from the peak analysis, degrees 2θ: the profile's start. */
  typicalFwhm: number;
  /** Default true; false holds every line position (cells and corrections) and fits only profile and intensities. */
  refineCells?: boolean;
  /**
   * Relative uncertainty of the given cell lengths (default 0.003): how far the lines may start from their
   * places. The fit broadens the lines by that much at first and narrows them stage by stage; a small value
   * (a cell already refined on the peaks) skips the stages.
   */
  cellUncertainty?: number;
  /** Most cycles in all (default 40; a fit from a good start takes 5–25). */
  maxCycles?: number;
}

export interface WholePatternReflection {
  h: number;
  k: number;
  l: number;
  d: number;
  /** Where the first line (Kα1) of the reflection is seen, degrees 2θ (with the instrument's shift). */
  twoTheta: number;
  /** Extracted integrated intensity of the first line, counts × degrees 2θ (reflections at one d share it by multiplicity). */
  intensity: number;
  multiplicity: number;
}

/** Rwp, Rexp, GoF = (Rwp/Rexp)² = χ²/(N − P) and Rp (fractions, not percent), N, P (the intensities included), reflections and cycles: phases.ts. */
export interface WholePatternFit extends WholePatternFigures {
  /** Background plus every phase on each point of the scan. */
  calculated: Float64Array;
  /** Each phase's contribution without background. */
  phaseProfiles: Float64Array[];
  phases: { cell: Cell; esd: Cell | null; reflections: WholePatternReflection[] }[];
  zeroShift: number;
  zeroShiftEsd: number | null;
  displacement: number;
  displacementEsd: number | null;
  /**
   * Caglioti FWHM² = U tan²θ + V tanθ + W (degrees² 2θ); the pseudo-Voigt's Lorentzian fraction η at the first
   * and at the last point of the scan, linear in 2θ between; the asymmetry P1, P2 (Bérar–Baldinozzi, divided by
   * tanθ; docs/whole-pattern.md).
   */
  profile: { U: number; V: number; W: number; eta: number[]; asymmetry: number[] };
}

/** Reflections of one phase at one d for every cell of the system (equal design rows): one intensity. */
interface Group {
  phase: number;
  row: number[];
  members: Reflection[];
}

interface PhaseState {
  input: WholePatternPhaseInput;
  /** Index of the phase's first metric parameter in the full parameter vector. */
  base: number;
  nFree: number;
  groups: number[];
}

/**
 * The whole-pattern fit. Never throws on a phase without reflections in the scan (it comes back with an empty
 * list and no esd) or on a scan without counting statistics (the given variances weight it); throws a
 * RangeError only when the arrays do not describe one scan.
 */
export function fitWholePattern(input: WholePatternInput): WholePatternFit {
  const started = performance.now();
  const { twoTheta: x, lines } = input;
  const n = x.length;
  if (n < 2 || input.intensity.length !== n || input.variance.length !== n || input.background.length !== n) {
    throw new RangeError("The whole-pattern fit needs angles, intensities, variances and a background of one common length.");
  }
  for (let i = 1; i < n; i++) {
    if (!(x[i] > x[i - 1])) throw new RangeError("The whole-pattern fit needs the angles finite and rising.");
  }
  if (lines.length === 0 || !lines.every((l) => l.wavelength > 0 && Number.isFinite(l.wavelength) && l.weight >= 0)) {
    throw new RangeError("The whole-pattern fit needs at least one positive wavelength.");
  }
  // A value that is not a number is left out of the fit (weight zero) and counts as zero.
  const yo = Float64Array.from(input.intensity, (v) => (Number.isFinite(v) ? v : 0));
  // ——— Weights: 1/variance; a zero among neighbours of tens of counts is no count (a gap, padding) ———
  const sw = new Float64Array(n);
  const gain = median(Array.from({ length: n }, (_, i) => input.variance[i] / Math.max(Math.abs(yo[i]), 1)));
  for (let i = 0; i < n; i++) {
    const v = input.variance[i];
    const gap = yo[i] === 0 && isGap(yo, i, 20 * (Number.isFinite(gain) && gain > 0 ? gain : 1));
    if (v > 0 && Number.isFinite(v) && Number.isFinite(input.intensity[i]) && !gap) sw[i] = 1 / Math.sqrt(v);
  }
  const background = Float64Array.from(input.background, (b) => (Number.isFinite(b) ? b : 0));
  const span = Math.max(x[n - 1] - x[0], 1e-9);
  const step = span / (n - 1);
  // A typical width that is missing or absurd falls back to ten steps (as the peak analysis' own fallback).
  const typicalFwhm = input.typicalFwhm > 0 && input.typicalFwhm < 0.2 * span ? input.typicalFwhm : 10 * step;
  const frame: Frame = { xFirst: x[0], xLast: x[n - 1], step, typicalFwhm };
  const data: ScanData = { x, yo, sw, background };
  const setup = listGroups(input, frame);
  const maxCycles = input.maxCycles ?? 40;
  const left = (state: FitState | null) => Math.max(maxCycles - (state?.cycles ?? 0), 0);
  let state: FitState | null = null;
  // Broadened stages while the position error the cell's uncertainty allows exceeds a typical FWHM at the scan's
  // end, each with a quarter of the last one's error. Each is fitted on bins of a sixth of its broadened width:
  // the lines are wide there, and so the stage costs no more than the fit with the true widths.
  if ((input.refineCells ?? true) && setup.groups.length > 0) {
    const uncertainty = Math.max(input.cellUncertainty ?? DEFAULT_CELL_UNCERTAINTY, 0);
    const tanMax = Math.tan(Math.min(frame.xLast, 160) * 0.5 * RAD);
    let stages = 0;
    for (let delta = uncertainty; 2 * tanMax * delta * DEG > typicalFwhm && stages < 6 && left(state) > 0; delta /= 4, stages++) {
      const width = (t: number) => Math.hypot(typicalFwhm, 2 * Math.tan(t * 0.5 * RAD) * delta * DEG) / BIN_FRACTION;
      const plan: Plan = { kind: "broad", delta, maxIterations: Math.min(STAGE_ITERATIONS, left(state)) };
      state = fitOn(input, setup, binByWidth(data, width), frame, state, plan, started).state;
    }
  }
  // The fit with the true widths; a finely stepped scan on bins of a sixth of the typical FWHM (the profile hardly
  // changes across one, as in the peak fits), then evaluated, its intensities re-extracted and its figures
  // taken on every point.
  const fine = binByWidth(data, () => typicalFwhm / BIN_FRACTION);
  if (fine === data) return fitOn(input, setup, data, frame, state, { kind: "final", maxIterations: left(state) }, started).fit!;
  state = fitOn(input, setup, fine, frame, state, { kind: "final", maxIterations: left(state) }, started).state;
  return fitOn(input, setup, data, frame, state, { kind: "evaluate" }, started).fit!;
}

/** What one call of fitOn does: a broadened stage, the fit with the true widths, or only the evaluation. */
type Plan = { kind: "broad"; delta: number; maxIterations: number } | { kind: "final"; maxIterations: number } | { kind: "evaluate" };

/** The scan as a fit sees it: angles, intensities, √weights (0: left out) and the given background. */
interface ScanData {
  x: Float64Array;
  yo: Float64Array;
  sw: Float64Array;
  background: Float64Array;
}

/** What does not change with binning: the scan's ends, its step and the typical FWHM. */
interface Frame {
  xFirst: number;
  xLast: number;
  step: number;
  typicalFwhm: number;
}

/** A fit's parameters and intensities, handed from the binned fit to the evaluation on every point. */
interface FitState {
  full: Float64Array;
  intensities: Float64Array;
  cycles: number;
  converged: boolean;
  /** The projected normal matrix of the refined parameters at the end of the fit with the true widths. */
  normal: Float64Array | null;
}

/**
 * Consecutive points gathered into bins about `width(2θ)` wide: each bin's mean angle and background, the mean of
 * its weighted points and the variance of that mean. The scan itself when no bin would hold two points.
 */
function binByWidth(data: ScanData, width: (twoTheta: number) => number): ScanData {
  const n = data.x.length;
  const starts: number[] = [];
  for (let i = 0; i < n; ) {
    starts.push(i);
    const end = data.x[i] + width(data.x[i]);
    let j = i + 1;
    while (j < n && data.x[j] < end) j++;
    i = j;
  }
  if (starts.length === n) return data;
  starts.push(n);
  const m = starts.length - 1;
  const out: ScanData = { x: new Float64Array(m), yo: new Float64Array(m), sw: new Float64Array(m), background: new Float64Array(m) };
  for (let k = 0; k < m; k++) {
    let sx = 0;
    let sy = 0;
    let sv = 0;
    let sb = 0;
    let count = 0;
    const size = starts[k + 1] - starts[k];
    for (let i = starts[k]; i < starts[k + 1]; i++) {
      sx += data.x[i];
      sb += data.background[i];
      if (data.sw[i] === 0) continue;
      sy += data.yo[i];
      sv += 1 / (data.sw[i] * data.sw[i]);
      count++;
    }
    out.x[k] = sx / size;
    out.background[k] = sb / size;
    out.yo[k] = count > 0 ? sy / count : 0;
    out.sw[k] = count > 0 ? count / Math.sqrt(sv) : 0;
  }
  return out;
}

/** The reflections of every phase, gathered into groups (one intensity each), and the phases' parameter slots. */
interface Setup {
  phases: PhaseState[];
  groups: Group[];
  /** Number of metric parameters of all phases (the full parameter vector starts with them). */
  nFull: number;
}

/** Lists the reflections once for a cell a little larger than any the fit can reach. */
function listGroups(input: WholePatternInput, frame: Frame): Setup {
  const { lines } = input;
  const { xFirst, xLast, step, typicalFwhm } = frame;
  const uncertainty = Math.max(input.cellUncertainty ?? DEFAULT_CELL_UNCERTAINTY, 0);
  const longest = Math.max(...lines.map((l) => l.wavelength));
  const shortest = Math.min(...lines.map((l) => l.wavelength));
  const reach = WINDOW * Math.max(typicalFwhm, step) * 4;
  const thetaHigh = (Math.min(xLast + reach + 2, 179.9) / 2) * RAD;
  const thetaLow = (Math.max(xFirst - reach - 2, 0) / 2) * RAD;
  const phases: PhaseState[] = [];
  const groups: Group[] = [];
  let nFull = 0;
  input.phases.forEach((phase, index) => {
    const nFree = metricParamsFromCell(phase.system, phase.cell).length;
    const state: PhaseState = { input: phase, base: nFull, nFree, groups: [] };
    nFull += nFree;
    phases.push(state);
    if (!validCell(phase.cell)) return;
    // Every reflection in range for any cell between the given one shrunk and stretched by `margin`, listed for
    // the stretched cell (its d-spacings are the largest, so the upper limit widens by margin²).
    const margin = 1 + 2 * uncertainty + 0.01;
    const larger = { ...phase.cell, a: phase.cell.a * margin, b: phase.cell.b * margin, c: phase.cell.c * margin };
    const dMin = longest / (2 * Math.sin(thetaHigh));
    const dMax = thetaLow > 0 ? (shortest / (2 * Math.sin(thetaLow))) * margin * margin : Number.POSITIVE_INFINITY;
    let list: Reflection[];
    try {
      list = allowedReflections(larger, phase.system, phase.centering, { dMin, dMax });
    } catch {
      list = [];
    }
    const byKey = new Map<string, Group>();
    for (const r of list) {
      const row = qDesignRow(phase.system, r);
      const key = row.join(",");
      let g = byKey.get(key);
      if (!g) {
        g = { phase: index, row, members: [] };
        byKey.set(key, g);
        state.groups.push(groups.length);
        groups.push(g);
      }
      g.members.push(r);
    }
  });
  return { phases, groups, nFull };
}

/**
 * One step of the fit on one version of the scan (binned or not), from the state `warm` (or the given cells
 * and a profile of the typical width): a broadened stage or the fit with the true widths, which hand back their
 * state; the fit with the true widths on every point, or the evaluation of `warm` on every point, which also
 * give the figures, esds and curves.
 */
function fitOn(
  input: WholePatternInput,
  setup: Setup,
  data: ScanData,
  frame: Frame,
  warm: FitState | null,
  plan: Plan,
  started: number,
): { fit: WholePatternFit | null; state: FitState } {
  const { lines } = input;
  const { x, yo, sw } = data;
  const n = x.length;
  const refineCells = input.refineCells ?? true;
  const { xFirst, xLast, step, typicalFwhm } = frame;
  const span = Math.max(xLast - xFirst, 1e-9);
  const radius = input.correction.radiusMm > 0 ? input.correction.radiusMm : 240;
  const penetration = input.correction.penetrationMm || 0;
  const lineWeights = lines.map((l) => l.weight / lines[0].weight);
  const nLines = lines.length;
  let points = 0;
  for (let i = 0; i < n; i++) if (sw[i] > 0) points++;
  const bgBase = data.background;
  const chebyshev = Array.from({ length: BACKGROUND_TERMS }, () => new Float64Array(n));
  for (let i = 0; i < n; i++) {
    const s = (2 * (x[i] - xFirst)) / span - 1;
    let prev = 1;
    let cur = s;
    chebyshev[0][i] = 1;
    if (BACKGROUND_TERMS > 1) chebyshev[1][i] = s;
    for (let j = 2; j < BACKGROUND_TERMS; j++) {
      const next = 2 * s * cur - prev;
      chebyshev[j][i] = next;
      prev = cur;
      cur = next;
    }
  }

  const { phases, groups, nFull } = setup;
  const nGroups = groups.length;

  // ——— The full parameter vector: cells, zero, displacement, U V W, η at both ends, background terms ———
  const ZERO = nFull;
  const DISP = nFull + 1;
  const U = nFull + 2;
  const V = nFull + 3;
  const W = nFull + 4;
  const ETA0 = nFull + 5;
  const ETA1 = nFull + 6;
  const ASYM1 = nFull + 7;
  const ASYM2 = nFull + 8;
  const BG = nFull + 9;
  const fullSize = BG + BACKGROUND_TERMS;
  const full = new Float64Array(fullSize);
  for (const ph of phases) full.set(validCell(ph.input.cell) ? metricParamsFromCell(ph.input.system, ph.input.cell) : new Array(ph.nFree).fill(0), ph.base);
  const kind = input.correction.kind;
  full[ZERO] = kind === "displacement" ? 0 : input.correction.zeroShift || 0;
  full[DISP] = kind === "zero_shift" ? 0 : input.correction.displacement || 0;
  full[U] = 0;
  full[V] = 0;
  full[W] = Math.max(typicalFwhm, 2 * step) ** 2;
  full[ETA0] = 0.5;
  full[ETA1] = 0.5;
  const hMin = 0.5 * step;

  // Which parameters each stage refines.
  const latticeParams: number[] = [];
  const correctionParams: number[] = [];
  if (refineCells) {
    for (const ph of phases) if (ph.groups.length > 0) for (let j = 0; j < ph.nFree; j++) latticeParams.push(ph.base + j);
    if (kind !== "displacement") correctionParams.push(ZERO);
    if (kind !== "zero_shift") correctionParams.push(DISP);
  }
  const cellParams = [...latticeParams, ...correctionParams];
  const backgroundParams = Array.from({ length: BACKGROUND_TERMS }, (_, j) => BG + j);
  const profileParams = [U, V, W, ETA0, ETA1, ASYM1, ASYM2];

  // ——— Per component (group × line) values of one evaluation ———
  const comp = nGroups * nLines;
  const cValid = new Uint8Array(comp);
  const cX0 = new Float64Array(comp);
  const cH = new Float64Array(comp);
  const cEta = new Float64Array(comp);
  const cS = new Float64Array(comp);
  const cI0 = new Int32Array(comp);
  const cI1 = new Int32Array(comp);
  const cJ0 = new Int32Array(comp);
  const cJ1 = new Int32Array(comp);
  const cDxdQ = new Float64Array(comp);
  const cDxdDisp = new Float64Array(comp);
  const cDhdU = new Float64Array(comp);
  const cDhdV = new Float64Array(comp);
  const cDhdW = new Float64Array(comp);
  const cEtaFree = new Uint8Array(comp);
  const cInvTan = new Float64Array(comp);
  // The profile of each group (all its lines, unit area per unit intensity of the first line) on its window.
  const gFirst = new Int32Array(nGroups);
  // Each group's core (where its derivatives are taken), [gCoreLo, gCoreHi).
  const gCoreLo = new Int32Array(nGroups);
  const gCoreHi = new Int32Array(nGroups);
  const gOffset = new Int32Array(nGroups + 1);
  let values = new Float64Array(1024);
  const intensities = new Float64Array(nGroups);
  const ycNet = new Float64Array(n);
  const bgTotal = new Float64Array(n);
  // The relative position error the lines are broadened by, and the window and mixing that go with it.
  let broadening = 0;
  let window = WINDOW;
  let fixedEta: number | null = null;

  /** Positions and widths of every component for the parameters in `full`. */
  function placeComponents(): void {
    for (let g = 0; g < nGroups; g++) {
      const grp = groups[g];
      const base = phases[grp.phase].base;
      let q = 0;
      for (let j = 0; j < grp.row.length; j++) q += grp.row[j] * full[base + j];
      for (let l = 0; l < nLines; l++) {
        const c = g * nLines + l;
        const s = (lines[l].wavelength * Math.sqrt(q)) / 2;
        if (!(q > 0) || !(s < 1)) {
          cValid[c] = 0;
          continue;
        }
        const theta = Math.asin(s);
        const cos = Math.cos(theta);
        const t = s / cos;
        const x0 =
          2 * theta * DEG +
          full[ZERO] +
          (full[DISP] ? displacementShiftAtTheta(theta, full[DISP], radius) : 0) +
          (penetration ? transparencyShiftAtTheta(theta, penetration, radius) : 0);
        const b = 2 * t * broadening * DEG;
        const h2 = full[U] * t * t + full[V] * t + full[W] + b * b;
        const clamped = !(h2 > hMin * hMin);
        const H = clamped ? hMin : Math.sqrt(h2);
        const i0 = lowerBound(x, x0 - window * H);
        const i1 = lowerBound(x, x0 + window * H);
        cValid[c] = i1 > i0 ? 1 : 0;
        cX0[c] = x0;
        cH[c] = H;
        cI0[c] = i0;
        cI1[c] = i1;
        cJ0[c] = lowerBound(x, x0 - JACOBIAN_REACH * H);
        cJ1[c] = lowerBound(x, x0 + JACOBIAN_REACH * H);
        // ∂(2θ)/∂Q in degrees per Å⁻² (the shift's own dependence on θ is far below the noise; as refine.ts).
        cDxdQ[c] = (lines[l].wavelength / (2 * Math.sqrt(q) * cos)) * DEG;
        cDxdDisp[c] = displacementShiftAtTheta(theta, 1, radius);
        cDhdU[c] = clamped ? 0 : (t * t) / (2 * H);
        cDhdV[c] = clamped ? 0 : t / (2 * H);
        cDhdW[c] = clamped ? 0 : 1 / (2 * H);
        const sPos = Math.min(Math.max((x0 - xFirst) / span, 0), 1);
        const eta = fixedEta ?? full[ETA0] * (1 - sPos) + full[ETA1] * sPos;
        cEta[c] = Math.min(Math.max(eta, 0), 1);
        cEtaFree[c] = fixedEta === null && eta >= 0 && eta <= 1 ? 1 : 0;
        cS[c] = sPos;
        cInvTan[c] = 1 / t;
      }
    }
  }

  /**
   * Evaluates the model for `full` with the intensities held: the background, every group's profile (kept for
   * the partition) and the net calculated curve; with `jac`, ∂(model)/∂(parameter)·√w into the columns `cols`
   * gives each full parameter (−1: not refined).
   */
  function evaluate(jac: Float64Array | null, cols: Int32Array | null, nCols: number): void {
    placeComponents();
    for (let i = 0; i < n; i++) {
      let b = bgBase[i];
      for (let j = 0; j < BACKGROUND_TERMS; j++) b += full[BG + j] * chebyshev[j][i];
      bgTotal[i] = b;
    }
    let total = 0;
    for (let g = 0; g < nGroups; g++) {
      let lo = n;
      let hi = 0;
      let coreLo = n;
      let coreHi = 0;
      for (let l = 0; l < nLines; l++) {
        const c = g * nLines + l;
        if (!cValid[c]) continue;
        lo = Math.min(lo, cI0[c]);
        hi = Math.max(hi, cI1[c]);
        coreLo = Math.min(coreLo, cJ0[c]);
        coreHi = Math.max(coreHi, cJ1[c]);
      }
      gFirst[g] = lo;
      gCoreLo[g] = coreLo;
      gCoreHi[g] = Math.max(coreHi, coreLo);
      gOffset[g] = total;
      if (hi > lo) total += hi - lo;
    }
    gOffset[nGroups] = total;
    if (values.length < total) values = new Float64Array(Math.max(total, 2 * values.length));
    values.fill(0, 0, total);
    ycNet.fill(0);
    if (jac) jac.fill(0);
    for (let g = 0; g < nGroups; g++) {
      const grp = groups[g];
      const seg = gOffset[g] - gFirst[g];
      const ph = phases[grp.phase];
      const intensity = intensities[g];
      for (let l = 0; l < nLines; l++) {
        const c = g * nLines + l;
        if (!cValid[c]) continue;
        const x0 = cX0[c];
        const H = cH[c];
        const invH = 1 / H;
        const invH2 = invH * invH;
        const eta = cEta[c];
        const gAmp = GAUSS_NORM * invH;
        const lAmp = LORENTZ_NORM * invH;
        const lEdge = lAmp / (1 + 4 * window * window);
        const a = lineWeights[l];
        const withJac = jac !== null && cols !== null && intensity !== 0;
        // Column of each parameter this component depends on, and ∂(position or width)/∂(parameter).
        let cZero = -1;
        let cDisp = -1;
        let cU = -1;
        let cV = -1;
        let cW = -1;
        let cE0 = -1;
        let cE1 = -1;
        let cA1 = -1;
        let cA2 = -1;
        let phaseCols: number[] = [];
        let phaseSlopes: number[] = [];
        if (withJac) {
          cZero = cols[ZERO];
          cDisp = cols[DISP];
          cU = cols[U];
          cV = cols[V];
          cW = cols[W];
          cE0 = cEtaFree[c] ? cols[ETA0] : -1;
          cE1 = cEtaFree[c] ? cols[ETA1] : -1;
          cA1 = cols[ASYM1];
          cA2 = cols[ASYM2];
          phaseCols = [];
          phaseSlopes = [];
          for (let j = 0; j < ph.nFree; j++) {
            const col = cols[ph.base + j];
            if (col >= 0 && grp.row[j] !== 0) {
              phaseCols.push(col);
              phaseSlopes.push(cDxdQ[c] * grp.row[j]);
            }
          }
        }
        const dHdU = cDhdU[c];
        const dHdV = cDhdV[c];
        const dHdW = cDhdW[c];
        const dxdDisp = cDxdDisp[c];
        const s = cS[c];
        const j0 = cJ0[c];
        const j1 = cJ1[c];
        const invTan = cInvTan[c];
        const a1 = full[ASYM1] * invTan;
        const a2 = full[ASYM2] * invTan;
        const asymmetric = a1 !== 0 || a2 !== 0 || cA1 >= 0 || cA2 >= 0;
        for (let i = cI0[c]; i < cI1[c]; i++) {
          const d = x[i] - x0;
          const q = d * d * invH2;
          const gq = FOUR_LN2 * q;
          const G = gq < 40 ? gAmp * Math.exp(-gq) : 0;
          const den = 1 / (1 + 4 * q);
          const L = lAmp * den;
          let pv = eta * (L - lEdge) + (1 - eta) * G;
          // Bérar–Baldinozzi asymmetry: the profile times A(z) = 1 + (P1·Fa(z) + P2·Fb(z))/tanθ, z = Δ/H,
          // Fa = 2z·e^(−z²), Fb = 2(2z² − 3)·Fa — odd in z, so the area is kept.
          let A = 1;
          let dAdz = 0;
          let Fa = 0;
          let Fb = 0;
          if (asymmetric && q < 25) {
            const z = d * invH;
            const e = Math.exp(-q);
            const poly = 2 * (2 * q - 3);
            Fa = 2 * z * e;
            Fb = poly * Fa;
            const dFa = 2 * e * (1 - 2 * q);
            A = 1 + a1 * Fa + a2 * Fb;
            dAdz = a1 * dFa + a2 * (8 * z * Fa + poly * dFa);
            if (A < 0) {
              A = 0;
              dAdz = 0;
              Fa = 0;
              Fb = 0;
            }
          }
          const base = pv;
          pv *= A;
          values[seg + i] += a * pv;
          if (!withJac || i < j0 || i >= j1 || sw[i] === 0) continue;
          const dPdx0 = (eta * L * 8 * den + (1 - eta) * G * 2 * FOUR_LN2) * d * invH2 * A - base * dAdz * invH;
          const dPdH = (eta * (L * (8 * q * den - 1) + lEdge) + (1 - eta) * G * (2 * gq - 1)) * invH * A - base * dAdz * d * invH2;
          const dPdEta = (L - lEdge - G) * A;
          const scale = a * intensity * sw[i];
          if (cA1 >= 0) jac![i * nCols + cA1] += scale * base * Fa * invTan;
          if (cA2 >= 0) jac![i * nCols + cA2] += scale * base * Fb * invTan;
          const row = i * nCols;
          const dx = scale * dPdx0;
          for (let j = 0; j < phaseCols.length; j++) jac![row + phaseCols[j]] += dx * phaseSlopes[j];
          if (cZero >= 0) jac![row + cZero] += dx;
          if (cDisp >= 0) jac![row + cDisp] += dx * dxdDisp;
          const dh = scale * dPdH;
          if (cU >= 0) jac![row + cU] += dh * dHdU;
          if (cV >= 0) jac![row + cV] += dh * dHdV;
          if (cW >= 0) jac![row + cW] += dh * dHdW;
          const de = scale * dPdEta;
          if (cE0 >= 0) jac![row + cE0] += de * (1 - s);
          if (cE1 >= 0) jac![row + cE1] += de * s;
        }
      }
      if (intensity !== 0) {
        const end = gOffset[g + 1] - gOffset[g] + gFirst[g];
        for (let i = gFirst[g]; i < end; i++) ycNet[i] += intensity * values[seg + i];
      }
    }
    if (jac && cols) {
      for (let j = 0; j < BACKGROUND_TERMS; j++) {
        const col = cols[BG + j];
        if (col < 0) continue;
        const t = chebyshev[j];
        for (let i = 0; i < n; i++) jac[i * nCols + col] = t[i] * sw[i];
      }
    }
  }

  /** The net calculated curve from the held profiles and the current intensities. */
  function sumProfiles(): void {
    ycNet.fill(0);
    for (let g = 0; g < nGroups; g++) {
      const intensity = intensities[g];
      if (intensity === 0) continue;
      const seg = gOffset[g] - gFirst[g];
      const end = gOffset[g + 1] - gOffset[g] + gFirst[g];
      for (let i = gFirst[g]; i < end; i++) ycNet[i] += intensity * values[seg + i];
    }
  }

  /**
   * One Le Bail pass: each intensity becomes its share of the observed net counts, I ← I·Σφ(yo − yb)/y_net / Σφ
   * over its window (the partition of Le Bail et al. 1988 with the profile normalised on the points it has).
   */
  function partition(): void {
    const next = new Float64Array(nGroups);
    let largest = 0;
    for (let g = 0; g < nGroups; g++) {
      const seg = gOffset[g] - gFirst[g];
      const end = gOffset[g + 1] - gOffset[g] + gFirst[g];
      let num = 0;
      let den = 0;
      for (let i = gFirst[g]; i < end; i++) {
        const phi = values[seg + i];
        if (sw[i] === 0 || !(phi > 0)) continue;
        den += phi;
        const y = ycNet[i];
        if (y > 1e-300) num += (phi * (yo[i] - bgTotal[i])) / y;
      }
      next[g] = den > 0 ? intensities[g] * (num / den) : 0;
      largest = Math.max(largest, next[g]);
    }
    // A floor instead of zero: the update is multiplicative, and a reflection at zero could never come back.
    const floor = largest > 0 ? largest * 1e-9 : 0;
    for (let g = 0; g < nGroups; g++) {
      const has = gOffset[g + 1] > gOffset[g];
      intensities[g] = has ? Math.max(next[g], floor) : 0;
    }
    sumProfiles();
  }

  function chiSquared(): number {
    let chi2 = 0;
    for (let i = 0; i < n; i++) {
      const r = (yo[i] - bgTotal[i] - ycNet[i]) * sw[i];
      chi2 += r * r;
    }
    return chi2;
  }

  /** Starting intensities: the net counts at each reflection's first line, as the area of a peak of that height. */
  function startIntensities(): void {
    for (let g = 0; g < nGroups; g++) {
      const c = g * nLines;
      if (!cValid[c]) {
        intensities[g] = gOffset[g + 1] > gOffset[g] ? 1e-6 : 0;
        continue;
      }
      const i = Math.min(n - 1, lowerBound(x, cX0[c]));
      const height = Math.max(yo[i] - bgTotal[i], 0);
      const eta = cEta[c];
      intensities[g] = Math.max((height * cH[c]) / (eta * LORENTZ_NORM + (1 - eta) * GAUSS_NORM), 1e-6);
    }
  }

  // ——— The Levenberg–Marquardt steps, with the intensities' response projected out ———
  //
  // The intensities are not steps of their own: each trial's are re-extracted by the partition. So that a step
  // still allows for them, the Jacobian of the other parameters is projected onto the complement of the
  // profiles' span (variable projection, Golub & Pereyra 1973, SIAM J. Numer. Anal. 10, 413 — from memory):
  // N = JᵀJ − Cᵀ D⁻¹ C with D = ΦᵀΦ and C = ΦᵀJ (Φ: the groups' weighted profiles, one column each). D is
  // sparse — a group overlaps only its neighbours — and is factorised in its envelope.
  const order = new Int32Array(nGroups);

  interface Normal {
    nCols: number;
    /** The projected normal matrix and gradient. */
    matrix: Float64Array;
    gradient: Float64Array;
    /** The groups in D's order, D⁻¹C and D⁻¹Φᵀr: the intensities' least-squares response to a step. */
    active: Int32Array;
    Y: Float64Array | null;
    y: Float64Array | null;
  }

  /** Builds the projected normal equations of `free` at the current parameters and intensities. */
  function projectedNormal(free: number[], cols: Int32Array, jac: Float64Array): Normal {
    const nCols = free.length;
    evaluate(jac, cols, nCols);
    const residual = new Float64Array(n);
    for (let i = 0; i < n; i++) residual[i] = (yo[i] - bgTotal[i] - ycNet[i]) * sw[i];
    const matrix = new Float64Array(nCols * nCols);
    const gradient = new Float64Array(nCols);
    // Away from the lines a row has only the background's columns: each row's non-zero columns are gathered
    // first and only their products accumulated.
    const nonzero = new Int32Array(nCols);
    for (let i = 0; i < n; i++) {
      if (sw[i] === 0) continue;
      const o = i * nCols;
      const r = residual[i];
      let count = 0;
      for (let j = 0; j < nCols; j++) if (jac[o + j] !== 0) nonzero[count++] = j;
      for (let a = 0; a < count; a++) {
        const j = nonzero[a];
        const v = jac[o + j];
        gradient[j] += v * r;
        const row = j * nCols;
        for (let b = 0; b <= a; b++) {
          const k = nonzero[b];
          matrix[row + k] += v * jac[o + k];
        }
      }
    }
    // The groups with a profile on fitted points, ordered by where their windows start.
    let m = 0;
    for (let g = 0; g < nGroups; g++) if (gCoreHi[g] > gCoreLo[g] && intensities[g] > 0) order[m++] = g;
    const active = order.slice(0, m);
    active.sort((a, b) => gCoreLo[a] - gCoreLo[b]);
    let Y: Float64Array | null = null;
    let y: Float64Array | null = null;
    if (m > 0) {
      // On the cores only, as the derivatives: D and C lose only the far tails' small products.
      const ends = Int32Array.from(active, (g) => gCoreHi[g]);
      const env = buildEnvelope(
        Int32Array.from(active, (g) => gCoreLo[g]),
        ends,
      );
      // D (with the weights), C and Φᵀr.
      const C = new Float64Array(m * nCols);
      const gI = new Float64Array(m);
      for (let a = 0; a < m; a++) {
        const g = active[a];
        const seg = gOffset[g] - gFirst[g];
        for (let i = gCoreLo[g]; i < ends[a]; i++) {
          const w = sw[i];
          if (w === 0) continue;
          const phi = values[seg + i] * w;
          if (phi === 0) continue;
          gI[a] += phi * residual[i];
          const o = i * nCols;
          const co = a * nCols;
          for (let j = 0; j < nCols; j++) C[co + j] += phi * jac[o + j];
        }
        for (let b = env.first[a]; b <= a; b++) {
          const h = active[b];
          const lo = Math.max(gCoreLo[g], gCoreLo[h]);
          const hi = Math.min(ends[a], ends[b]);
          let sum = 0;
          const segH = gOffset[h] - gFirst[h];
          for (let i = lo; i < hi; i++) sum += values[seg + i] * values[segH + i] * sw[i] * sw[i];
          env.data[env.start[a] + b - env.first[a]] = sum;
        }
      }
      if (envelopeCholesky(env)) {
        // Y = D⁻¹C column by column, then N −= CᵀY and g −= Cᵀ D⁻¹ Φᵀr.
        const column = new Float64Array(m);
        Y = new Float64Array(m * nCols);
        for (let j = 0; j < nCols; j++) {
          for (let a = 0; a < m; a++) column[a] = C[a * nCols + j];
          envelopeSolve(env, column);
          for (let a = 0; a < m; a++) Y[a * nCols + j] = column[a];
          for (let k = 0; k <= j; k++) {
            let s = 0;
            for (let a = 0; a < m; a++) s += C[a * nCols + k] * column[a];
            matrix[j * nCols + k] -= s;
          }
        }
        envelopeSolve(env, gI);
        y = gI;
        for (let j = 0; j < nCols; j++) {
          let s = 0;
          for (let a = 0; a < m; a++) s += C[a * nCols + j] * gI[a];
          gradient[j] -= s;
        }
      }
    }
    for (let j = 0; j < nCols; j++) for (let k = 0; k < j; k++) matrix[k * nCols + j] = matrix[j * nCols + k];
    return { nCols, matrix, gradient, active, Y, y };
  }

  /** The model at the current parameters, its intensities re-extracted from `start`, and its χ². */
  function settle(start: Float64Array): number {
    intensities.set(start);
    evaluate(null, null, 0);
    for (let pass = 0; pass < PARTITION_PASSES; pass++) partition();
    return chiSquared();
  }

  /**
   * Levenberg–Marquardt on the parameters `free` (Marquardt's diagonal scaling, bounds held by freezing a
   * parameter on its bound); each trial's intensities are re-extracted. Returns the iterations run and whether
   * χ² settled.
   */
  function solve(free: number[], maxIterations: number, tolerance: number): { iterations: number; converged: boolean } {
    const nCols = free.length;
    if (nCols === 0 || points <= nCols) {
      settle(Float64Array.from(intensities));
      return { iterations: 0, converged: true };
    }
    const cols = new Int32Array(fullSize).fill(-1);
    free.forEach((f, j) => {
      cols[f] = j;
    });
    const jac = new Float64Array(n * nCols);
    let chi2 = settle(Float64Array.from(intensities));
    let lambda = 1e-3;
    let iterations = 0;
    while (iterations < maxIterations) {
      iterations++;
      const { matrix, gradient, active, Y, y } = projectedNormal(free, cols, jac);
      const current = Float64Array.from(free, (f) => full[f]);
      // Converged when the undamped step would lower χ² by less than a hundredth of the reduced χ², i.e. the
      // parameters are within a tenth of their standard uncertainties of the minimum.
      const newton = dampedSolve(matrix, gradient, 0, null);
      if (newton) {
        let predicted = 0;
        for (let j = 0; j < nCols; j++) predicted += newton[j] * gradient[j];
        const reduced = chi2 / Math.max(points - active.length - nCols, 1);
        if (predicted < PREDICTED_TOLERANCE * reduced) return { iterations, converged: true };
      }
      const kept = Float64Array.from(intensities);
      let accepted = false;
      let improvement = 0;
      while (!accepted) {
        const step = dampedStep(matrix, gradient, lambda, current, free);
        if (!step) {
          lambda *= 10;
          if (lambda > 1e10) return { iterations, converged: true };
          continue;
        }
        for (let j = 0; j < nCols; j++) {
          const f = free[j];
          full[f] = Math.min(Math.max(current[j] + step[j], lower[f]), upper[f]);
        }
        // The partition starts from the intensities' least-squares response to the step (clamped to stay
        // positive), so that it has little left to do.
        const startI = Float64Array.from(kept);
        if (Y && y) {
          for (let a = 0; a < active.length; a++) {
            const g = active[a];
            let v = kept[g] + y[a];
            for (let j = 0; j < nCols; j++) v -= Y[a * nCols + j] * (full[free[j]] - current[j]);
            startI[g] = Math.max(v, 0.01 * kept[g]);
          }
        }
        const trial = settle(startI);
        if (Number.isFinite(trial) && trial <= chi2) {
          improvement = (chi2 - trial) / Math.max(chi2, 1e-300);
          chi2 = trial;
          accepted = true;
          lambda = Math.max(lambda / 10, 1e-12);
        } else {
          for (let j = 0; j < nCols; j++) full[free[j]] = current[j];
          lambda *= 4;
          if (lambda > 1e10) {
            settle(kept);
            return { iterations, converged: true };
          }
        }
      }
      if (improvement < tolerance) return { iterations, converged: true };
    }
    return { iterations, converged: false };
  }

  /** The damped step (N + λ diag N) δ = g with parameters on a bound that the step would push through held. */
  function dampedStep(matrix: Float64Array, gradient: Float64Array, lambda: number, current: Float64Array, free: number[]): Float64Array | null {
    const nCols = free.length;
    let step = dampedSolve(matrix, gradient, lambda, null);
    if (!step) return null;
    const frozen = new Uint8Array(nCols);
    let held = 0;
    for (let j = 0; j < nCols; j++) {
      const f = free[j];
      if ((current[j] <= lower[f] && step[j] < 0) || (current[j] >= upper[f] && step[j] > 0)) {
        frozen[j] = 1;
        held++;
      }
    }
    if (held > 0) step = dampedSolve(matrix, gradient, lambda, frozen) ?? step;
    return step;
  }

  // Bounds: cell lengths within about ±10 % of the start, η within 0…1, and those below; the rest free.
  const lower = new Float64Array(fullSize).fill(Number.NEGATIVE_INFINITY);
  const upper = new Float64Array(fullSize).fill(Number.POSITIVE_INFINITY);
  for (const ph of phases) {
    for (let j = 0; j < ph.nFree; j++) {
      const p = full[ph.base + j];
      // The diagonal terms (a*², b*², c*²) are positive; a cross term (monoclinic E, triclinic D E F) is not bounded.
      if (j < 3 && p > 0) {
        lower[ph.base + j] = p * 0.8;
        upper[ph.base + j] = p * 1.25;
      }
    }
  }
  lower[ETA0] = 0;
  lower[ETA1] = 0;
  upper[ETA0] = 1;
  upper[ETA1] = 1;
  // U and W are not negative (the width's growth with tan²θ and its value at θ = 0 are variances; common
  // practice); the asymmetry stays within ±1, beyond which it no longer shapes a line but moves it.
  lower[U] = 0;
  lower[W] = 0;
  lower[ASYM1] = -1;
  upper[ASYM1] = 1;
  lower[ASYM2] = -1;
  upper[ASYM2] = 1;

  let cycles = warm?.cycles ?? 0;
  let converged = warm?.converged ?? false;
  const finalFree = [...cellParams, ...profileParams, ...backgroundParams];
  if (plan.kind === "broad") {
    broadening = plan.delta;
    window = BROAD_WINDOW;
    fixedEta = 0;
  }
  if (warm) {
    full.set(warm.full);
    intensities.set(warm.intensities);
  } else {
    evaluate(null, null, 0);
    startIntensities();
    sumProfiles();
  }
  if (plan.kind === "broad") {
    // Only the cells: against the broadened lines the corrections' valley with the cell's scale is flat, and
    // the background trades slowly with the extracted intensities; both are refined with the true widths.
    cycles += solve(latticeParams, plan.maxIterations, BROAD_TOLERANCE).iterations;
  } else if (plan.kind === "final" && nGroups > 0) {
    const r = solve(finalFree, plan.maxIterations, FINAL_TOLERANCE);
    cycles += r.iterations;
    converged = r.converged;
  } else {
    settle(Float64Array.from(intensities));
    if (nGroups === 0) converged = true;
  }

  // The normal matrix for the esds, where the fit with the true widths ended (on bins it carries the same
  // information as on every point, at a fraction of the cost).
  let normal = warm?.normal ?? null;
  if (plan.kind === "final" && cellParams.length > 0 && nGroups > 0) {
    const cols = new Int32Array(fullSize).fill(-1);
    finalFree.forEach((f, j) => {
      cols[f] = j;
    });
    normal = projectedNormal(finalFree, cols, new Float64Array(n * finalFree.length)).matrix;
  }
  const state: FitState = { full: Float64Array.from(full), intensities: Float64Array.from(intensities), cycles, converged, normal };
  // Figures and curves only on every point of the scan: after the evaluation, or a fit on the scan itself.
  if (plan.kind === "broad" || (plan.kind === "final" && data.x.length !== input.twoTheta.length)) return { fit: null, state };

  // ——— Figures, covariance and the curves ———
  const activeGroups = countActive();
  const parameters = finalFree.length + activeGroups;
  let chi2 = 0;
  let sumWy2 = 0;
  let sumAbs = 0;
  let sumY = 0;
  for (let i = 0; i < n; i++) {
    if (sw[i] === 0) continue;
    const r = yo[i] - bgTotal[i] - ycNet[i];
    chi2 += r * r * sw[i] * sw[i];
    sumWy2 += yo[i] * yo[i] * sw[i] * sw[i];
    sumAbs += Math.abs(r);
    sumY += Math.abs(yo[i]);
  }
  const dof = points - parameters;
  const Rwp = sumWy2 > 0 ? Math.sqrt(chi2 / sumWy2) : 0;
  const Rexp = sumWy2 > 0 ? Math.sqrt(Math.max(dof, 0) / sumWy2) : 0;
  // With no degree of freedom left (more parameters than points) χ² itself stands for the GoF, never NaN.
  const GoF = chi2 / Math.max(dof, 1);
  const Rp = sumY > 0 ? sumAbs / sumY : 0;
  // The covariance of the refined parameters: the projected normal matrix inverted and scaled by χ²/(N − P).
  // Parameters without any information (a phase whose every intensity came out zero) are left out of the
  // inversion and get no esd, so they do not take the others' with them.
  const covariance = new Map<number, Map<number, number>>();
  if (dof > 0 && normal) {
    const nCols = finalFree.length;
    const matrix = normal;
    let largest = 0;
    for (let j = 0; j < nCols; j++) largest = Math.max(largest, matrix[j * nCols + j]);
    const kept = finalFree.map((_, j) => j).filter((j) => matrix[j * nCols + j] > 1e-12 * largest && Number.isFinite(matrix[j * nCols + j]));
    const reduced = squareMatrix(kept.length);
    kept.forEach((j, a) => {
      kept.forEach((k, b) => {
        reduced.data[a * kept.length + b] = matrix[j * nCols + k];
      });
    });
    const inverse = kept.length > 0 ? invertSymmetric(reduced) : null;
    if (inverse) {
      kept.forEach((j, a) => {
        const row = new Map<number, number>();
        kept.forEach((k, b) => {
          row.set(finalFree[k], (inverse.data[a * kept.length + b] * chi2) / dof);
        });
        covariance.set(finalFree[j], row);
      });
    }
  }

  const calculated = new Float64Array(n);
  for (let i = 0; i < n; i++) calculated[i] = bgTotal[i] + ycNet[i];
  const phaseProfiles = phases.map(() => new Float64Array(n));
  for (let g = 0; g < nGroups; g++) {
    const profile = phaseProfiles[groups[g].phase];
    const seg = gOffset[g] - gFirst[g];
    const end = gOffset[g + 1] - gOffset[g] + gFirst[g];
    for (let i = gFirst[g]; i < end; i++) profile[i] += intensities[g] * values[seg + i];
  }

  const esdOf = (f: number): number | null => {
    const v = covariance.get(f)?.get(f);
    return v === undefined ? null : Math.sqrt(Math.max(v, 0));
  };
  let listed = 0;
  const phaseResults = phases.map((ph) => {
    const p = Array.from(full.subarray(ph.base, ph.base + ph.nFree));
    if (ph.groups.length === 0 || !validCell(ph.input.cell)) return { cell: ph.input.cell, esd: null, reflections: [] };
    let cov: number[][] | undefined;
    const rows = p.map((_, j) => covariance.get(ph.base + j));
    if (rows.every((row) => row !== undefined)) cov = rows.map((row) => p.map((_, k) => row!.get(ph.base + k) ?? 0));
    const { cell, esd } = cellFromMetricParams(ph.input.system, p, cov);
    const reflections: WholePatternReflection[] = [];
    for (const g of ph.groups) {
      const c = g * nLines;
      if (!cValid[c] || cX0[c] < xFirst || cX0[c] > xLast) continue;
      const grp = groups[g];
      let q = 0;
      for (let j = 0; j < grp.row.length; j++) q += grp.row[j] * p[j];
      const totalMultiplicity = grp.members.reduce((s, r) => s + r.multiplicity, 0);
      for (const r of grp.members) {
        reflections.push({
          h: r.h,
          k: r.k,
          l: r.l,
          d: 1 / Math.sqrt(q),
          twoTheta: cX0[c],
          intensity: (intensities[g] * r.multiplicity) / totalMultiplicity,
          multiplicity: r.multiplicity,
        });
      }
    }
    reflections.sort((a, b) => a.twoTheta - b.twoTheta);
    listed += reflections.length;
    return { cell, esd: refineCells ? esd : null, reflections };
  });

  const fit: WholePatternFit = {
    Rwp,
    Rexp,
    GoF,
    Rp,
    points,
    parameters,
    reflections: listed,
    cycles,
    converged,
    elapsedMs: performance.now() - started,
    calculated,
    phaseProfiles,
    phases: phaseResults,
    zeroShift: full[ZERO],
    zeroShiftEsd: esdOf(ZERO),
    displacement: full[DISP],
    displacementEsd: esdOf(DISP),
    profile: { U: full[U], V: full[V], W: full[W], eta: [full[ETA0], full[ETA1]], asymmetry: [full[ASYM1], full[ASYM2]] },
  };
  return { fit, state };

  /** Groups with a profile inside the fitted points (each one free intensity). */
  function countActive(): number {
    let count = 0;
    for (let g = 0; g < nGroups; g++) {
      const seg = gOffset[g] - gFirst[g];
      const end = gOffset[g + 1] - gOffset[g] + gFirst[g];
      for (let i = gFirst[g]; i < end; i++) {
        if (sw[i] > 0 && values[seg + i] > 0) {
          count++;
          break;
        }
      }
    }
    return count;
  }
}

/**
 * A zero among neighbours whose median is above `level`: under counting statistics a zero where tens of counts
 * are expected has a probability below e⁻²⁰, so it is a gap or padding in the file, not a count.
 */
function isGap(y: Float64Array, i: number, level: number): boolean {
  const around: number[] = [];
  for (let j = Math.max(0, i - 10); j <= Math.min(y.length - 1, i + 10); j++) if (j !== i) around.push(y[j]);
  return median(around) > level;
}

function validCell(cell: Cell): boolean {
  return (
    [cell.a, cell.b, cell.c, cell.alpha, cell.beta, cell.gamma].every((v) => Number.isFinite(v) && v > 0) &&
    cell.alpha < 180 &&
    cell.beta < 180 &&
    cell.gamma < 180
  );
}

// ——— A symmetric matrix in envelope (skyline) storage and its Cholesky factor ———

/** Row r holds the columns first[r]…r at data[start[r]…]. */
interface Envelope {
  n: number;
  first: Int32Array;
  start: Int32Array;
  data: Float64Array;
}

/**
 * The envelope of the overlap matrix of windows [lo, hi) sorted by lo: row r reaches back to the first window
 * that still overlaps it (through the running largest end, so the envelope may hold a few zeros).
 */
function buildEnvelope(lo: Int32Array, hi: Int32Array): Envelope {
  const n = lo.length;
  const first = new Int32Array(n);
  const start = new Int32Array(n + 1);
  const maxEnd = new Int32Array(n);
  for (let r = 0; r < n; r++) maxEnd[r] = Math.max(r > 0 ? maxEnd[r - 1] : 0, hi[r]);
  for (let r = 0; r < n; r++) {
    // Smallest h with maxEnd[h] > lo[r] (maxEnd is non-decreasing, and maxEnd[r] > lo[r]).
    let a = 0;
    let b = r;
    while (a < b) {
      const mid = (a + b) >> 1;
      if (maxEnd[mid] > lo[r]) b = mid;
      else a = mid + 1;
    }
    first[r] = a;
    start[r + 1] = start[r] + (r - a + 1);
  }
  return { n, first, start, data: new Float64Array(start[n]) };
}

/**
 * Cholesky factor in place within the envelope. Exactly coincident profiles make the matrix singular; a ridge
 * of 10⁻⁸ of each diagonal keeps the factor finite there (those directions carry no information on the other
 * parameters). False when the matrix is not positive even so.
 */
function envelopeCholesky(e: Envelope): boolean {
  const { n, first, start, data } = e;
  for (let r = 0; r < n; r++) {
    const fr = first[r];
    const row = start[r] - fr;
    for (let c = fr; c <= r; c++) {
      const fc = first[c];
      const rowC = start[c] - fc;
      let sum = data[row + c];
      for (let k = Math.max(fr, fc); k < c; k++) sum -= data[row + k] * data[rowC + k];
      if (c < r) {
        data[row + c] = sum / data[rowC + c];
      } else {
        const diagonal = sum + 1e-8 * Math.abs(data[row + r]);
        if (!(diagonal > 0) || !Number.isFinite(diagonal)) return false;
        data[row + r] = Math.sqrt(diagonal);
      }
    }
  }
  return true;
}

/** Solves L Lᵀ x = b in place with the envelope factor L. */
function envelopeSolve(e: Envelope, b: Float64Array): void {
  const { n, first, start, data } = e;
  for (let r = 0; r < n; r++) {
    const row = start[r] - first[r];
    let s = b[r];
    for (let k = first[r]; k < r; k++) s -= data[row + k] * b[k];
    b[r] = s / data[row + r];
  }
  for (let r = n - 1; r >= 0; r--) {
    const row = start[r] - first[r];
    b[r] /= data[row + r];
    const v = b[r];
    for (let k = first[r]; k < r; k++) b[k] -= data[row + k] * v;
  }
}

/** (N + λ diag N) δ = g with the `frozen` parameters' rows and columns replaced by the identity (their step zero). */
function dampedSolve(matrix: Float64Array, gradient: Float64Array, lambda: number, frozen: Uint8Array | null): Float64Array | null {
  const n = gradient.length;
  const damped = squareMatrix(n);
  const rhs = new Float64Array(n);
  for (let j = 0; j < n; j++) {
    for (let k = 0; k < n; k++) damped.data[j * n + k] = frozen && (frozen[j] || frozen[k]) ? 0 : matrix[j * n + k];
    const d = matrix[j * n + j];
    damped.data[j * n + j] = frozen?.[j] ? 1 : d + lambda * (d > 0 ? d : 1e-12);
    rhs[j] = frozen?.[j] ? 0 : gradient[j];
  }
  const factor = choleskyFactor(damped);
  return factor ? choleskySolve(factor, rhs) : null;
}
