// The verdict of a lattice check — consistent, review or inconsistent — by a fixed, documented rule.
//
// The rule (also in docs/decisions/012-phases-and-window.md, which supersedes 007). "Strong peaks" are the ten observed peaks
// of largest integrated intensity (all of them when there are fewer).
//
// inconsistent, when any of:
//   1. the refinement could not be made (fewer indexed peaks than free parameters + 2);
//   2. at most half of the strong peaks are indexed;
//   3. fewer than 80 % of the strong peaks are indexed, and either M20 ≤ 10 or the indexed lines miss
//      their reflections by more than a tenth of a FWHM on average (⟨|Δ2θ|⟩ of F_N over the median
//      FWHM): the declared cell explains neither the whole pattern nor, convincingly, a part of it. An
//      impurity beside a well-indexed phase keeps a high M20 and lines on their reflections to a few
//      hundredths of a FWHM, and is a matter for review; chance matches of another phase scatter across
//      the window;
//   4. a cell length differs from the declared one by more than 2 %, or an angle by more than 2°;
//   4a. with further phases declared, the main phase itself explains fewer than 80 % of the strong peaks and
//      either explains none of them or indexes its lines poorly (as in 3): the other phases explain the scan,
//      the main phase does not.
// consistent, when all of:
//   5. at least 80 % of the strong peaks are indexed (by the main phase or a declared expected phase);
//   6. M20 > 10 with at most two unindexed lines among the twenty strongest (International Tables
//      Vol. H §3.4.2.1: the usual threshold for trusting an indexing);
//   7. no unexplained peak is stronger than 10 % of the strongest peak (a possible undeclared phase);
//   8. (no longer a condition) a cell that moved from its declaration within the indexing window (±2 %, ±2°)
//      does not by itself make a scan review: the move is reported as a note, and whether the cell is where
//      the client's specification wants it is the acceptance window's separate answer (window.ts);
//   9. every refined length has a relative standard uncertainty below 10⁻³ (the refinement is precise
//      enough to judge 8; lab instruments reproduce cells to about ±0.001 Å, docs/reference-values.md#facts-of-the-trade).
// review otherwise. Each reason is one plain sentence. Thresholds other than M20's are Diffractory's own
// choices (common practice for routine phase checks), not published values.

import type { Cell } from "./cell";

export type Verdict = "consistent" | "review" | "inconsistent";

export interface VerdictInput {
  refined: boolean;
  /**
   * Observed peaks sorted by descending intensity, each marked indexed (by any declared phase) or not, with its
   * relative height; `byMain` says whether the main phase indexes it (absent: the same as `indexed`).
   */
  strongest: { indexed: boolean; byMain?: boolean; relativeIntensity: number; twoTheta: number }[];
  /** All unindexed peaks with intensity relative to the strongest peak (0…1). */
  unindexed: { twoTheta: number; relativeIntensity: number }[];
  m20: number | null;
  /** ⟨|Δ2θ|⟩ of the indexed lines divided by their median FWHM, or null without indexed lines. */
  meanMissInFwhm: number | null;
  declared: Cell | null;
  refinedCell: Cell | null;
  esd: Cell | null;
  /** Further declared phases present beside the main one (their names, for the sentences). */
  otherPhases?: string[];
}

export interface VerdictResult {
  verdict: Verdict;
  reasons: string[];
}

export const VERDICT_RULE = {
  strongPeaks: 10,
  inconsistentIndexedShare: 0.5,
  consistentIndexedShare: 0.8,
  m20Trusted: 10,
  maxUnindexedAmongTwenty: 2,
  impurityRelativeIntensity: 0.1,
  consistentLengthDeviation: 0.005,
  consistentAngleDeviation: 0.5,
  inconsistentLengthDeviation: 0.02,
  inconsistentAngleDeviation: 2,
  maxRelativeEsd: 1e-3,
  partialIndexingMeanMiss: 0.1,
} as const;

const LENGTHS = ["a", "b", "c"] as const;
const ANGLES = ["alpha", "beta", "gamma"] as const;

const pct = (x: number) => `${(100 * x).toFixed(2)} %`;

export function decideVerdict(input: VerdictInput): VerdictResult {
  const rule = VERDICT_RULE;
  const fatal: string[] = [];
  const doubts: string[] = [];
  const notes: string[] = [];
  const strong = input.strongest.slice(0, rule.strongPeaks);
  const indexedStrong = strong.filter((p) => p.indexed).length;
  const share = strong.length > 0 ? indexedStrong / strong.length : 0;

  if (!input.refined) {
    fatal.push("Too few peaks match reflections of the declared cell to refine it.");
  }
  if (strong.length === 0) {
    fatal.push("No peaks were found in the scan.");
  } else if (share <= rule.inconsistentIndexedShare) {
    const of = input.otherPhases?.length ? "a declared phase" : "the declared cell";
    fatal.push(`Only ${indexedStrong} of the ${strong.length} strongest peaks match reflections of ${of}.`);
  } else if (share < rule.consistentIndexedShare) {
    doubts.push(`${strong.length - indexedStrong} of the ${strong.length} strongest peaks match no reflection of the cell.`);
  } else {
    notes.push(`${indexedStrong} of the ${strong.length} strongest peaks are indexed.`);
  }

  if (input.refined && input.declared && input.refinedCell) {
    let worstLength = { key: "a", rel: 0 };
    for (const key of LENGTHS) {
      const rel = Math.abs(input.refinedCell[key] - input.declared[key]) / input.declared[key];
      if (rel > worstLength.rel) worstLength = { key, rel };
    }
    let worstAngle = { key: "alpha", diff: 0 };
    for (const key of ANGLES) {
      const diff = Math.abs(input.refinedCell[key] - input.declared[key]);
      if (diff > worstAngle.diff) worstAngle = { key, diff };
    }
    const lengthText = `The refined ${worstLength.key} differs from the declared value by ${pct(worstLength.rel)}`;
    const angleText = `The refined ${worstAngle.key} differs from the declared value by ${worstAngle.diff.toFixed(2)}°`;
    if (worstLength.rel > rule.inconsistentLengthDeviation) fatal.push(`${lengthText}, more than ${pct(rule.inconsistentLengthDeviation)}.`);
    else if (worstLength.rel > rule.consistentLengthDeviation) {
      notes.push(
        `${lengthText}, within the indexing window of ${pct(rule.inconsistentLengthDeviation)}; the acceptance window judges whether that is within specification.`,
      );
    }
    if (worstAngle.diff > rule.inconsistentAngleDeviation) fatal.push(`${angleText}, more than ${rule.inconsistentAngleDeviation}°.`);
    else if (worstAngle.diff > rule.consistentAngleDeviation) {
      notes.push(
        `${angleText}, within the indexing window of ${rule.inconsistentAngleDeviation}°; the acceptance window judges whether that is within specification.`,
      );
    }
    if (worstLength.rel <= rule.consistentLengthDeviation && worstAngle.diff <= rule.consistentAngleDeviation) {
      notes.push(
        `The refined cell is within ${pct(rule.consistentLengthDeviation)} of the declared one (largest change: ${worstLength.key}, ${pct(worstLength.rel)}).`,
      );
    }
  } else if (input.refined && !input.declared) {
    doubts.push("No cell was declared, so the refined cell cannot be compared with the sample's declaration.");
  }

  if (input.refined) {
    const twenty = input.strongest.slice(0, 20);
    const unindexedTwenty = twenty.filter((p) => !p.indexed).length;
    const trusted = input.m20 !== null && input.m20 > rule.m20Trusted;
    const onTheirLines = input.meanMissInFwhm !== null && input.meanMissInFwhm <= rule.partialIndexingMeanMiss;
    if (share < rule.consistentIndexedShare && share > rule.inconsistentIndexedShare && !(trusted && onTheirLines)) {
      const how = !trusted
        ? `M20 ${input.m20 === null ? "not defined" : input.m20.toFixed(1)}, at most ${rule.m20Trusted}`
        : `its lines miss their reflections by ${input.meanMissInFwhm!.toFixed(2)} FWHM on average, more than ${rule.partialIndexingMeanMiss}`;
      fatal.push(
        `The declared cell leaves ${strong.length - indexedStrong} of the ${strong.length} strongest peaks unexplained and indexes the rest poorly (${how}).`,
      );
    }
    if (input.m20 === null || !(input.m20 > rule.m20Trusted)) {
      doubts.push(`M20 is ${input.m20 === null ? "not defined" : input.m20.toFixed(1)}; an indexing is trusted above ${rule.m20Trusted}.`);
    } else if (unindexedTwenty > rule.maxUnindexedAmongTwenty) {
      doubts.push(
        `${unindexedTwenty} of the ${twenty.length} strongest peaks are unindexed; at most ${rule.maxUnindexedAmongTwenty} are allowed for a trusted indexing.`,
      );
    } else {
      notes.push(`M20 is ${input.m20 > 1000 ? "above 1000" : input.m20.toFixed(1)}, above the threshold of ${rule.m20Trusted}.`);
    }
    if (input.otherPhases && input.otherPhases.length > 0) {
      const byMain = strong.filter((p) => p.byMain ?? p.indexed).length;
      const mainShare = strong.length > 0 ? byMain / strong.length : 0;
      if (byMain === 0) {
        fatal.push(
          `The declared main phase explains none of the ${strong.length} strongest peaks; ${input.otherPhases.join(", ")} explain${input.otherPhases.length > 1 ? "" : "s"} the rest.`,
        );
      } else if (mainShare < rule.consistentIndexedShare && !(trusted && onTheirLines)) {
        const how = !trusted
          ? `M20 ${input.m20 === null ? "not defined" : input.m20.toFixed(1)}, at most ${rule.m20Trusted}`
          : `its lines miss their reflections by ${input.meanMissInFwhm!.toFixed(2)} FWHM on average, more than ${rule.partialIndexingMeanMiss}`;
        fatal.push(`The declared main phase explains only ${byMain} of the ${strong.length} strongest peaks and indexes them poorly (${how}).`);
      } else if (mainShare < rule.consistentIndexedShare) {
        notes.push(`The main phase explains ${byMain} of the ${strong.length} strongest peaks; ${input.otherPhases.join(", ")} the others.`);
      }
    }
    const impurities = input.unindexed.filter((p) => p.relativeIntensity >= rule.impurityRelativeIntensity);
    if (impurities.length > 0) {
      const where = impurities
        .slice(0, 5)
        .map((p) => `${p.twoTheta.toFixed(2)}°`)
        .join(", ");
      doubts.push(
        `${impurities.length} unindexed peak${impurities.length > 1 ? "s" : ""} stronger than ${pct(rule.impurityRelativeIntensity)} of the strongest (at ${where} 2θ) match no declared phase and may belong to another phase.`,
      );
    } else if (input.unindexed.length > 0) {
      notes.push(`${input.unindexed.length} weak peak${input.unindexed.length > 1 ? "s are" : " is"} unindexed.`);
    }
    if (input.esd && input.refinedCell) {
      const worst = Math.max(...LENGTHS.map((k) => input.esd![k] / input.refinedCell![k]));
      if (!(worst < rule.maxRelativeEsd)) {
        doubts.push(`The refined cell is imprecise (relative standard uncertainty ${worst.toExponential(1)}, above ${rule.maxRelativeEsd}).`);
      }
    } else {
      doubts.push("The refinement has no degrees of freedom left for standard uncertainties.");
    }
  }

  if (fatal.length > 0) return { verdict: "inconsistent", reasons: [...fatal, ...doubts] };
  if (doubts.length > 0) return { verdict: "review", reasons: [...doubts, ...notes] };
  return { verdict: "consistent", reasons: notes };
}
