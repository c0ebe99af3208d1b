// Indexing from scratch for cubic lattices (P, I, F): which cell, if any, explains the observed lines.
//
// In a cubic lattice Q = 1/d² = N / a² with N = h² + k² + l², and the centering decides which N occur
// (I: h + k + l even; F: h, k, l all even or all odd). Assigning the first (or second, in case the first
// is an impurity) observed line to each of the first few allowed N gives trial cells; each trial indexes
// the lines, is refined with a zero shift, and is ranked by M20 / (1 + u)², u the unindexed lines among
// the first twenty — Diffractory's own ranking, so that a cell leaving lines unexplained loses to one
// that explains them even if its M20 is a little higher.

import { deWolffM20 } from "./merit";
import { figuresOfMeritLines, type ObservedPeak, type Refinement, refineCell } from "./refine";
import { centeringAllows } from "./reflections";

export type CubicCentering = "P" | "I" | "F";

export interface CubicCandidate {
  centering: CubicCentering;
  a: number;
  aEsd: number | null;
  m20: number | null;
  /** Unindexed lines among the first twenty observed. */
  unindexed: number;
  zeroShift: number;
  refinement: Refinement;
}

export interface CubicIndexing {
  candidates: CubicCandidate[];
  /** True when no cubic cell indexes the pattern well (M20 ≤ 10 or more than two unindexed lines). */
  lowerSymmetryNeeded: boolean;
  message: string;
}

const TRIALS_PER_LINE = 8;
const N_LIMIT = 200;

/** The distinct N = h² + k² + l² a cubic centering allows, ascending, up to N_LIMIT. */
export function allowedSquareSums(centering: CubicCentering): number[] {
  const found = new Set<number>();
  const top = Math.ceil(Math.sqrt(N_LIMIT));
  for (let h = 0; h <= top; h++)
    for (let k = 0; k <= h; k++)
      for (let l = 0; l <= k; l++) {
        const n = h * h + k * k + l * l;
        if (n > 0 && n <= N_LIMIT && centeringAllows(centering, h, k, l)) found.add(n);
      }
  return [...found].sort((x, y) => x - y);
}

export function indexCubic(peaks: readonly ObservedPeak[], options: { wavelength: number; twoThetaMax: number; maxCandidates?: number }): CubicIndexing {
  const { wavelength } = options;
  const strongest = Math.max(0, ...peaks.map((p) => p.intensity));
  // Lines weaker than 1 % of the strongest are too uncertain to steer indexing (common practice).
  const lines = peaks
    .map((p, i) => ({ p, i }))
    .filter(({ p }) => p.intensity >= 0.01 * strongest)
    .sort((x, y) => x.p.twoTheta - y.p.twoTheta)
    .slice(0, 20);
  const q = (twoTheta: number) => ((2 * Math.sin((twoTheta * Math.PI) / 360)) / wavelength) ** 2;
  const trials: { centering: CubicCentering; a: number }[] = [];
  for (const centering of ["P", "I", "F"] as const) {
    const sums = allowedSquareSums(centering).slice(0, TRIALS_PER_LINE);
    for (const base of lines.slice(0, 2)) {
      for (const n of sums) trials.push({ centering, a: Math.sqrt(n / q(base.p.twoTheta)) });
    }
  }
  const subset = lines.map((l) => l.p);
  const seen = new Set<string>();
  const candidates: CubicCandidate[] = [];
  for (const trial of trials) {
    const refinement = refineCell(subset, {
      wavelength,
      system: "cubic",
      centering: trial.centering,
      start: { a: trial.a, b: trial.a, c: trial.a, alpha: 90, beta: 90, gamma: 90 },
      twoThetaMax: options.twoThetaMax,
      searchRange: 0.003,
    });
    if (refinement.used === 0) continue;
    const a = refinement.cell.a;
    const key = `${trial.centering}:${a.toPrecision(5)}`;
    if (seen.has(key)) continue;
    seen.add(key);
    const { lines: indexed, calculatedQ } = figuresOfMeritLines(subset, refinement, wavelength);
    const merit = deWolffM20(indexed, calculatedQ);
    candidates.push({
      centering: trial.centering,
      a,
      aEsd: refinement.esd?.a ?? null,
      m20: merit ? merit.value : null,
      unindexed: refinement.unindexed.length,
      zeroShift: refinement.zeroShift,
      refinement,
    });
  }
  const score = (c: CubicCandidate) => (c.m20 ?? 0) / (1 + c.unindexed) ** 2;
  candidates.sort((x, y) => score(y) - score(x));
  const best = candidates.slice(0, options.maxCandidates ?? 5);
  const top = best[0];
  const lowerSymmetryNeeded = !top || !(top.m20 !== null && top.m20 > 10) || top.unindexed > 2;
  const message = lowerSymmetryNeeded
    ? "No cubic cell indexes this pattern (M20 ≤ 10 or more than two unindexed lines); the sample needs a lower-symmetry cell, which must be declared."
    : `Best cubic cell: ${top.centering} with a = ${top.a.toFixed(5)} Å (M20 = ${top.m20!.toFixed(1)}).`;
  return { candidates: best, lowerSymmetryNeeded, message };
}
