// Statistical process control for the lots of a material and the calibrations of an instrument
// (docs/design.md#lots-and-trends): control limits from a baseline of points, and the Western Electric rules that
// say when a point is out of control. Pure arithmetic; it runs in the browser and on the server alike.
//
// Limits (common practice; constants as tabulated in ASTM E2587 and the SPC textbooks):
// - individuals chart: centre x̄ of the baseline, σ̂ = MR̄ / d2 with d2 = 1.128 for moving ranges of two, limits
//   x̄ ± 3σ̂ (= x̄ ± 2.66 MR̄); the moving-range chart's upper limit D4·MR̄ = 3.267 MR̄, lower limit 0;
// - X̄/R chart for subgroups of n = 2…10 scans: centre X̿, limits X̿ ± A2·R̄; range chart D3·R̄ … D4·R̄; σ̂ = R̄ / d2.

/** Control-chart constants by subgroup size n (A2, D3, D4, d2), as tabulated for X̄/R charts. */
export const CHART_CONSTANTS: Readonly<Record<number, { A2: number; D3: number; D4: number; d2: number }>> = {
  2: { A2: 1.88, D3: 0, D4: 3.267, d2: 1.128 },
  3: { A2: 1.023, D3: 0, D4: 2.574, d2: 1.693 },
  4: { A2: 0.729, D3: 0, D4: 2.282, d2: 2.059 },
  5: { A2: 0.577, D3: 0, D4: 2.114, d2: 2.326 },
  6: { A2: 0.483, D3: 0, D4: 2.004, d2: 2.534 },
  7: { A2: 0.419, D3: 0.076, D4: 1.924, d2: 2.704 },
  8: { A2: 0.373, D3: 0.136, D4: 1.864, d2: 2.847 },
  9: { A2: 0.337, D3: 0.184, D4: 1.816, d2: 2.97 },
  10: { A2: 0.308, D3: 0.223, D4: 1.777, d2: 3.078 },
};

export interface ControlLimits {
  kind: "individuals" | "xbar_r";
  /** The centre line. */
  center: number;
  /** The estimated process standard deviation σ̂ the zones are drawn with. */
  sigma: number;
  ucl: number;
  lcl: number;
  /** The dispersion chart: moving ranges (individuals) or subgroup ranges (X̄/R). */
  range: { center: number; ucl: number; lcl: number };
  /** Subgroup size (1 for individuals). */
  n: number;
  /** How many points (or subgroups) of the baseline the limits come from. */
  baselinePoints: number;
}

const mean = (xs: number[]) => xs.reduce((s, x) => s + x, 0) / xs.length;

/**
 * Limits of an individuals chart from the baseline points; null with fewer than two points (no moving range).
 * A baseline whose moving ranges are all zero gives σ̂ = 0: every later point that differs breaks rule 1.
 */
export function individualsLimits(baseline: number[]): ControlLimits | null {
  const xs = baseline.filter(Number.isFinite);
  if (xs.length < 2) return null;
  const center = mean(xs);
  const mrBar = mean(xs.slice(1).map((x, i) => Math.abs(x - xs[i])));
  const { d2, D4 } = CHART_CONSTANTS[2];
  const sigma = mrBar / d2;
  return {
    kind: "individuals",
    center,
    sigma,
    ucl: center + 3 * sigma,
    lcl: center - 3 * sigma,
    range: { center: mrBar, ucl: D4 * mrBar, lcl: 0 },
    n: 1,
    baselinePoints: xs.length,
  };
}

/** Limits of an X̄/R chart from baseline subgroups of one size n (2…10); null when sizes differ or there are fewer than two subgroups. */
export function xbarRLimits(baseline: number[][]): ControlLimits | null {
  const groups = baseline.map((g) => g.filter(Number.isFinite)).filter((g) => g.length > 0);
  if (groups.length < 2) return null;
  const n = groups[0].length;
  const k = CHART_CONSTANTS[n];
  if (!k || groups.some((g) => g.length !== n)) return null;
  const center = mean(groups.map(mean));
  const rBar = mean(groups.map((g) => Math.max(...g) - Math.min(...g)));
  return {
    kind: "xbar_r",
    center,
    sigma: rBar / k.d2 / Math.sqrt(n),
    ucl: center + k.A2 * rBar,
    lcl: center - k.A2 * rBar,
    range: { center: rBar, ucl: k.D4 * rBar, lcl: k.D3 * rBar },
    n,
    baselinePoints: groups.length,
  };
}

/** The four Western Electric rules by number, in the words the screens use. */
export const WESTERN_ELECTRIC_RULES: Readonly<Record<1 | 2 | 3 | 4, string>> = {
  1: "one point beyond the 3σ limits",
  2: "two of three points in a row beyond 2σ on the same side",
  3: "four of five points in a row beyond 1σ on the same side",
  4: "eight points in a row on the same side of the centre line",
};
export type RuleNumber = keyof typeof WESTERN_ELECTRIC_RULES;

/**
 * The Western Electric rules each point breaks (Western Electric Co., Statistical Quality Control Handbook, 1956,
 * the tests for unnatural patterns on one side of the centre line), with the zones drawn at 1σ, 2σ and 3σ of
 * the limits. A point is flagged by the rule whose pattern it completes, and only when it is itself one of the
 * points the pattern counts: rule 1 a point beyond 3σ; rule 2 the second (or third) of three in a row beyond 2σ
 * on one side; rule 3 the fourth (or fifth) of five beyond 1σ on one side; rule 4 the eighth in a row on one side.
 * Points exactly on the centre line count on neither side (common practice). At the start of a series a pattern
 * needs no full window: two points beyond 2σ as the first two already make two of any three in a row that hold
 * them, so the second is flagged (as four of the first four beyond 1σ for rule 3).
 */
export function westernElectric(points: number[], limits: Pick<ControlLimits, "center" | "sigma">): RuleNumber[][] {
  const { center, sigma } = limits;
  const z = points.map((x) =>
    Number.isFinite(x) ? (sigma > 0 ? (x - center) / sigma : x === center ? 0 : Math.sign(x - center) * Number.POSITIVE_INFINITY) : Number.NaN,
  );
  const beyond = (v: number, side: 1 | -1, k: number) => (Number.isFinite(v) || Math.abs(v) === Number.POSITIVE_INFINITY ? side * v > k : false);
  return z.map((v, i) => {
    const rules: RuleNumber[] = [];
    if (Number.isNaN(v)) return rules;
    if (Math.abs(v) > 3) rules.push(1);
    const side: 1 | -1 = v > 0 ? 1 : -1;
    if (v === 0) return rules;
    const last = (m: number) => z.slice(Math.max(0, i - m + 1), i + 1);
    const w3 = last(3);
    if (beyond(v, side, 2) && w3.filter((x) => beyond(x, side, 2)).length >= 2) rules.push(2);
    const w5 = last(5);
    if (beyond(v, side, 1) && w5.filter((x) => beyond(x, side, 1)).length >= 4) rules.push(3);
    const w8 = last(8);
    if (w8.length === 8 && w8.every((x) => beyond(x, side, 0))) rules.push(4);
    return rules;
  });
}
