// Figures of merit of an indexing: de Wolff's M20 and Smith & Snyder's F_N.

/** An observed line with the reflection it was indexed to. */
export interface IndexedLine {
  /** Q = 1/d² observed (after the zero or displacement correction), Å⁻². */
  qObs: number;
  qCalc: number;
  /** Observed 2θ and the calculated 2θ in the same (observed) frame, degrees. */
  twoThetaObs: number;
  twoThetaCalc: number;
}

export interface DeWolffMerit {
  /** M_N; M20 when twenty lines were available. */
  value: number;
  /** Number of indexed lines used (20, or fewer when the pattern has fewer). */
  lines: number;
  /** Q of the last line used, Å⁻². */
  qLast: number;
  /** Mean |Q_obs − Q_calc| of those lines, Å⁻². */
  meanEpsilon: number;
  /** Distinct calculated Q values up to qLast. */
  calculated: number;
}

export interface SmithSnyderMerit {
  value: number;
  /** N: indexed lines used. */
  lines: number;
  /** ⟨|Δ2θ|⟩ in degrees. */
  meanDelta: number;
  /** N_poss: distinct calculated lines up to the N-th observed one. */
  possible: number;
}

// Calculated values closer than this (relative) are one line: symmetry-equivalent coincidences such as
// cubic 511 and 333 agree to rounding, accidental near-coincidences do not.
const DISTINCT = 1e-9;

function countDistinctUpTo(sortedAscending: readonly number[], limit: number): number {
  let count = 0;
  let last = -Infinity;
  for (const v of sortedAscending) {
    if (v > limit * (1 + DISTINCT)) break;
    if (v - last > DISTINCT * Math.abs(v)) {
      count++;
      last = v;
    }
  }
  return count;
}

/**
 * de Wolff (J. Appl. Cryst. 1968, 1, 108): M20 = Q20 / (2 ⟨ε⟩ N20) over the first twenty indexed lines,
 * Q20 the Q of the twentieth, ⟨ε⟩ the mean |Q_obs − Q_calc|, N20 the number of distinct calculated Q
 * up to Q20. `calculatedQ` is every allowed Q of the cell (any order).
 */
export function deWolffM20(lines: readonly IndexedLine[], calculatedQ: readonly number[], n = 20): DeWolffMerit | null {
  const used = [...lines].sort((a, b) => a.qObs - b.qObs).slice(0, n);
  if (used.length === 0) return null;
  const qLast = used[used.length - 1].qObs;
  let sum = 0;
  for (const line of used) sum += Math.abs(line.qObs - line.qCalc);
  const meanEpsilon = sum / used.length;
  const calculated = countDistinctUpTo(
    [...calculatedQ].sort((a, b) => a - b),
    Math.max(qLast, used[used.length - 1].qCalc),
  );
  if (calculated === 0) return null;
  return { value: qLast / (2 * meanEpsilon * calculated), lines: used.length, qLast, meanEpsilon, calculated };
}

/**
 * Smith & Snyder (J. Appl. Cryst. 1979, 12, 60): F_N = (1/⟨|Δ2θ|⟩) · N / N_poss over the first N indexed
 * lines, N_poss the distinct calculated lines up to the N-th observed one; quoted as F_N(⟨|Δ2θ|⟩, N_poss).
 * `calculatedTwoTheta` is every allowed line of the cell in the observed frame (any order).
 */
export function smithSnyderFN(lines: readonly IndexedLine[], calculatedTwoTheta: readonly number[], n = 30): SmithSnyderMerit | null {
  const used = [...lines].sort((a, b) => a.twoThetaObs - b.twoThetaObs).slice(0, n);
  if (used.length === 0) return null;
  const last = used[used.length - 1];
  let sum = 0;
  for (const line of used) sum += Math.abs(line.twoThetaObs - line.twoThetaCalc);
  const meanDelta = sum / used.length;
  const possible = countDistinctUpTo(
    [...calculatedTwoTheta].filter(Number.isFinite).sort((a, b) => a - b),
    last.twoThetaObs,
  );
  if (possible === 0) return null;
  return { value: used.length / (meanDelta * possible), lines: used.length, meanDelta, possible };
}
