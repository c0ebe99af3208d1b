// Peaks that are not the sample's reflections: the same reflections diffracting a tube's stray lines (Kβ
// that leaks through a filter, tungsten L lines of an aged tube) and the sample holder's own lines.
//
// A stray line of a strong peak's reflection lies at the same d-spacing with the stray line's wavelength,
// so it is predicted from the OBSERVED peak alone, with or without a cell. A fitted peak is taken for it
// when it lies in the predicted window and is weak enough against that peak (wavelengths.ts,
// STRAY_LINE_LIMITS). Holder lines are predicted from the holder phase's cell (holders.ts). The check
// keeps such peaks out of indexing, refinement and the verdict (docs/reference-values.md#lines-that-are-not-the-samples).

import { braggAngleOf, type RefinedCorrection, refinedLineShift } from "./line-shifts";
import { type HolderLine, holderLines, type SampleHolder } from "./holders";
import { lowerBound } from "./sorted";
import type { StrayLine } from "./wavelengths";

const RAD = Math.PI / 180;
const DEG = 180 / Math.PI;

/** Where a fitted peak comes from. */
export type PeakOrigin = "sample" | "kbeta" | "tungsten_l" | "holder";

/** A fitted peak as the matching needs it. */
export interface PeakForMatching {
  twoTheta: number;
  twoThetaEsd: number;
  fwhm: number;
  /** Integrated intensity of the Kα1 (single-line) component. */
  intensity: number;
}

/** A peak taken for a stray line of another peak's reflection. */
export interface StrayMatch {
  origin: "kbeta" | "tungsten_l";
  lineId: string;
  /** e.g. "Cu Kβ", "W Lα1". */
  label: string;
  /** Index of the peak whose reflection diffracts the stray line. */
  parent: number;
  /** Predicted position, degrees 2θ. */
  expectedTwoTheta: number;
  /** Integrated intensity over the parent's. */
  ratio: number;
  /** Whether the ratio is at most the usual leak-through (then it wins over a coinciding weak reflection of the sample). */
  faint: boolean;
  /** Miss over the window, 0 (on the prediction) … 1 (at its edge). */
  distance: number;
}

/** A peak taken for a line of the sample holder. */
export interface HolderMatch {
  origin: "holder";
  phase: string;
  hkl: [number, number, number];
  expectedTwoTheta: number;
  distance: number;
}

export interface StrayLineOptions {
  /** Kα1 (or single) wavelength, Å. */
  wavelength: number;
  /** The Kα2 line when the profile fits model every peak as a Kα doublet, with its weight relative to Kα1. */
  kAlpha2?: { wavelength: number; weight: number };
  /** The refined zero shift / displacement / transparency; without it the window widens for an unknown zero. */
  correction?: RefinedCorrection;
  /** Peaks that may not be parents (e.g. already taken for stray or holder lines). */
  notParents?: ReadonlySet<number>;
}

// An instrument's zero error is typically within ±0.05° 2θ (common practice); before the refinement the
// prediction from an observed parent carries (1 − ∂2θ_line/∂2θ_parent) of it.
const UNKNOWN_ZERO = 0.05;

const NO_CORRECTION: RefinedCorrection = { zeroShift: 0, displacement: 0, radiusMm: 240 };

/** The window half-width for a peak's position, degrees 2θ: its resolution and its uncertainty (as the indexing takes them). */
function baseWindow(fwhm: number, sigma: number): number {
  return Math.min(0.5 * fwhm, Math.max(0.25 * fwhm, 3 * sigma));
}

// A floor of 0.5 % of the FWHM on a position's uncertainty, as in the refinement (common practice).
function sigmaOf(p: PeakForMatching): number {
  const esd = Number.isFinite(p.twoThetaEsd) ? p.twoThetaEsd : 0.1 * p.fwhm;
  return Math.hypot(esd, 0.005 * p.fwhm);
}

/**
 * Where a line of wavelength `lambda` of the reflection seen at `twoTheta` with `wavelength` appears, and
 * ∂(its 2θ)/∂(parent 2θ); NaN beyond the Bragg limit.
 */
function strayPosition(twoTheta: number, wavelength: number, lambda: number, correction: RefinedCorrection): { x: number; slope: number } {
  const bragg = braggAngleOf(twoTheta, correction);
  const s = (lambda / wavelength) * Math.sin((bragg * RAD) / 2);
  if (!(s < 1)) return { x: NaN, slope: 0 };
  const braggLine = 2 * Math.asin(s) * DEG;
  const slope = ((lambda / wavelength) * Math.cos((bragg * RAD) / 2)) / Math.cos((braggLine * RAD) / 2);
  return { x: braggLine + refinedLineShift(braggLine, correction), slope };
}

/**
 * The stray-line matches among `peaks` (index → match): for every candidate the best-fitting parent and line.
 *
 * The profile fit models each peak as a Kα doublet; a single stray line fitted so sits up to a third of the
 * doublet's split below its true place (the doublet's centroid lands on the line), so the window reaches
 * that much further down.
 */
export function matchStrayLines(
  peaks: readonly PeakForMatching[],
  lines: readonly (StrayLine & { limit: number; faint: number })[],
  options: StrayLineOptions,
): Map<number, StrayMatch> {
  const out = new Map<number, StrayMatch>();
  if (lines.length === 0 || peaks.length < 2) return out;
  const correction = options.correction ?? NO_CORRECTION;
  const widest = Math.max(...lines.map((l) => l.limit));
  const order = [...peaks.keys()].sort((a, b) => peaks[a].twoTheta - peaks[b].twoTheta);
  const xs = Float64Array.from(order.map((i) => peaks[i].twoTheta));
  const strongest = Math.max(...peaks.map((p) => p.intensity));
  for (let parent = 0; parent < peaks.length; parent++) {
    const p = peaks[parent];
    // Only a peak whose stray lines could be above nothing at all: a candidate must be at most `widest` of it.
    if (options.notParents?.has(parent) || !(p.intensity > 0) || p.intensity * widest < 1e-4 * strongest) continue;
    const sigmaParent = sigmaOf(p);
    for (const line of lines) {
      const { x, slope } = strayPosition(p.twoTheta, options.wavelength, line.wavelength, correction);
      if (!Number.isFinite(x)) continue;
      const bias = options.kAlpha2 ? doubletBias(x, options.wavelength, options.kAlpha2) : 0;
      const unknown = options.correction ? 0 : Math.abs(1 - slope) * UNKNOWN_ZERO;
      const reachUp = 0.5 * p.fwhm + unknown;
      for (let j = lowerBound(xs, x - bias - reachUp); j < xs.length && xs[j] <= x + reachUp; j++) {
        const i = order[j];
        if (i === parent) continue;
        const candidate = peaks[i];
        const ratio = candidate.intensity / p.intensity;
        if (!(ratio <= line.limit)) continue;
        // The stray line is as wide as the parent's reflection at about its angle; the candidate's own fitted
        // width is poorly known when it is faint.
        const window = baseWindow(p.fwhm, Math.hypot(sigmaOf(candidate), slope * sigmaParent)) + unknown;
        const miss = candidate.twoTheta - x;
        const distance = miss > 0 ? miss / window : miss < -bias ? (-miss - bias) / window : 0;
        if (distance > 1) continue;
        const previous = out.get(i);
        if (!previous || distance < previous.distance) {
          out.set(i, {
            origin: line.origin,
            lineId: line.id,
            label: line.label,
            parent,
            expectedTwoTheta: x,
            ratio,
            faint: ratio <= line.faint,
            distance,
          });
        }
      }
    }
  }
  return out;
}

/** How far below a single line the Kα1 position of a doublet fitted to it lands: w2/(1 + w2) of the split. */
function doubletBias(x: number, wavelength: number, kAlpha2: { wavelength: number; weight: number }): number {
  const s = (kAlpha2.wavelength / wavelength) * Math.sin((x * RAD) / 2);
  if (!(s < 1)) return 0;
  const split = 2 * Math.asin(s) * DEG - x;
  return (kAlpha2.weight / (1 + kAlpha2.weight)) * Math.max(split, 0);
}

/**
 * The holder-line matches among the `candidates` peaks (index → match). Lines are placed with the
 * refined correction when given (the holder's surface is flush with the specimen's), else with a window
 * widened for an unknown zero.
 */
export function matchHolderLines(
  peaks: readonly PeakForMatching[],
  candidates: Iterable<number>,
  holder: SampleHolder,
  options: { wavelength: number; twoThetaMax: number; correction?: RefinedCorrection },
): Map<number, HolderMatch> {
  const out = new Map<number, HolderMatch>();
  const lines = holderLines(holder, options.wavelength, options.twoThetaMax);
  if (lines.length === 0) return out;
  const correction = options.correction ?? NO_CORRECTION;
  const placed = lines.map((l): HolderLine & { x: number } => ({ ...l, x: l.twoTheta + refinedLineShift(l.twoTheta, correction) })).sort((a, b) => a.x - b.x);
  const xs = Float64Array.from(placed.map((l) => l.x));
  const unknown = options.correction ? 0 : UNKNOWN_ZERO;
  const widestTolerance = Math.max(...placed.map((l) => l.positionTolerance));
  for (const i of candidates) {
    const p = peaks[i];
    const reach = 0.5 * p.fwhm + unknown + widestTolerance;
    for (let j = lowerBound(xs, p.twoTheta - reach); j < xs.length && xs[j] <= p.twoTheta + reach; j++) {
      const line = placed[j];
      const window = baseWindow(p.fwhm, sigmaOf(p)) + line.positionTolerance + unknown;
      const distance = Math.abs(p.twoTheta - line.x) / window;
      if (distance > 1) continue;
      const previous = out.get(i);
      if (!previous || distance < previous.distance) {
        out.set(i, { origin: "holder", phase: line.phase, hkl: line.hkl, expectedTwoTheta: line.x, distance });
      }
    }
  }
  return out;
}

/** A window on a peak's position as the refinement's indexing draws it (for comparing with a stray line's). */
export function indexingWindow(p: PeakForMatching): number {
  return baseWindow(p.fwhm, sigmaOf(p));
}
