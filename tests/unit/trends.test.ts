// A material's trend (app/domain/trends.ts) on constructed lot records. The limits themselves are checked against
// published worked examples in tests/unit/spc.test.ts; here: which parameters, which lots make the baseline, which
// chart, which lot breaks which rule (Western Electric Co., Statistical Quality Control Handbook, 1956), and the
// acceptance window's band (declared ± half-width, Å/° or % of the declared value, as app/diffraction/window.ts
// and docs/decisions/012-phases-and-window.md define it).
import { describe, expect, it } from "vitest";
import { individualsLimits, xbarRLimits } from "~/domain/spc";
import {
  baselineRange,
  groupLots,
  type LotScan,
  materialTrend,
  rulesWords,
  type TrendMaterial,
  trendParameters,
  trendSummary,
  windowBand,
} from "~/domain/trends";

const DAY = 86_400_000;
const T0 = Date.UTC(2026, 0, 5);
let seq = 0;
function scan(
  lotCode: string,
  day: number,
  cell: Partial<Record<"a" | "b" | "c" | "alpha" | "beta" | "gamma", number>>,
  extra: Partial<LotScan> = {},
): LotScan {
  seq += 1;
  return {
    id: `00000000-0000-4000-8000-${String(seq).padStart(12, "0")}`,
    lotCode,
    measuredAt: new Date(T0 + day * DAY),
    cell,
    esd: Object.fromEntries(Object.keys(cell).map((k) => [k, 0.0002])),
    verdict: "consistent",
    withinWindow: true,
    ...extra,
  };
}

const cubic: TrendMaterial = { crystalSystem: "cubic", declared: { a: 4.1569 }, acceptanceWindow: null, baselineFirstLot: null, baselineLastLot: null };
/** A fixed, patternless wobble of ±0.0003 Å around 4.1569 Å (no two in a row beyond 1σ on one side by construction). */
const WOBBLE = [
  0.0001, -0.0002, 0.0003, -0.0001, 0.0, 0.0002, -0.0003, 0.0001, -0.0002, 0.0002, -0.0001, 0.0, 0.0003, -0.0003, 0.0001, -0.0001, 0.0002, -0.0002, 0.0, 0.0001,
];

describe("trend parameters", () => {
  it("are the free parameters of the crystal system (common practice: the cell's independent parameters)", () => {
    expect(trendParameters("cubic", [])).toEqual(["a"]);
    expect(trendParameters("hexagonal", [])).toEqual(["a", "c"]);
    expect(trendParameters("orthorhombic", [])).toEqual(["a", "b", "c"]);
    expect(trendParameters("monoclinic", [])).toEqual(["a", "b", "c", "beta"]);
    expect(trendParameters("triclinic", [])).toHaveLength(6);
  });
  it("without a known system, are those some lot has a value for", () => {
    expect(trendParameters(null, [scan("L1", 0, { a: 5, c: 7 })])).toEqual(["a", "c"]);
    expect(trendParameters("no such system", [scan("L1", 0, { b: 5 })])).toEqual(["b"]);
  });
});

describe("lots from scans", () => {
  it("groups scans by lot code, orders lots by their first scan, and averages a lot's scans", () => {
    const lots = groupLots([
      scan("B-2", 3, { a: 4.157 }),
      scan("A-1", 1, { a: 4.1568 }),
      scan(" b-2 ", 4, { a: 4.1574 }, { verdict: "review", withinWindow: false }),
    ]);
    expect(lots.map((l) => [l.order, l.lotCode, l.scans.length])).toEqual([
      [1, "A-1", 1],
      [2, "B-2", 2],
    ]);
    expect(lots[1].cell.a).toBeCloseTo(4.1572, 10);
    // The esd of a mean of n scans: √(Σ esd²) / n.
    expect(lots[1].esd.a).toBeCloseTo(Math.sqrt(2 * 0.0002 ** 2) / 2, 12);
    expect(lots[1].verdict).toBe("review");
    expect(lots[1].withinWindow).toBe(false);
    expect(lots[0].withinWindow).toBe(true);
  });
});

describe("the baseline", () => {
  it("is the first 20 lots by default, all when fewer, the chosen range (clamped) otherwise", () => {
    expect(baselineRange(25, null, null)).toEqual({ first: 1, last: 20, chosen: false });
    expect(baselineRange(6, null, null)).toEqual({ first: 1, last: 6, chosen: false });
    expect(baselineRange(30, 5, 12)).toEqual({ first: 5, last: 12, chosen: true });
    expect(baselineRange(10, 5, 40)).toEqual({ first: 5, last: 10, chosen: true });
  });

  it("needs two lots with a value, else there are no limits yet, said in a sentence", () => {
    const t = materialTrend(cubic, [scan("L1", 0, { a: 4.1569 })]);
    expect(t.byParameter.a!.limits).toBeNull();
    expect(t.byParameter.a!.limitsProblem).toMatch(/^Not enough lots for limits yet/);
    expect(t.lots[0].rulesBroken).toEqual({});
  });
});

describe("the chart and the rules per lot", () => {
  const steady = WOBBLE.map((d, i) => scan(`C-${100 + i}`, i * 7, { a: 4.1569 + d }));

  it("charts individuals with moving-range limits from the baseline when lots have one scan", () => {
    const shifted = scan("C-200", 200, { a: 4.1569 + 0.003 });
    const t = materialTrend(cubic, [...steady, shifted]);
    const a = t.byParameter.a!;
    expect(a.chart).toBe("individuals");
    expect(a.limits).toEqual(individualsLimits(WOBBLE.map((d) => 4.1569 + d)));
    expect(t.baseline).toEqual({ first: 1, last: 20, chosen: false });
    // No baseline lot breaks a rule; the lot 0.003 Å above the centre is beyond 3σ (rule 1).
    expect(t.lots.slice(0, 20).every((l) => Object.keys(l.rulesBroken).length === 0)).toBe(true);
    expect(t.lots[20].rulesBroken).toEqual({ a: [1] });
    expect(a.points[20].range).toBeCloseTo(Math.abs(0.003 - WOBBLE[19]), 10);
    expect(a.points[0].range).toBeNull();
    expect(rulesWords(t.lots[20].rulesBroken)).toBe("a: rule 1 (one point beyond the 3σ limits)");
    expect(trendSummary(a)).toMatch(/1 lot breaks a rule: C-200 \(rule 1\)/);
  });

  it("flags a slow drift by rule 4 at its eighth lot above the centre, not the seventh", () => {
    const centre = 4.1569 + WOBBLE.reduce((s, d) => s + d, 0) / WOBBLE.length;
    // A lot just below the centre ends whatever run the baseline left; then eight lots creep upwards.
    const below = scan("D-start", 290, { a: centre - 0.0001 });
    const drift = Array.from({ length: 8 }, (_, i) => scan(`D-${i}`, 300 + i * 7, { a: centre + 0.00005 * (i + 1) }));
    const t = materialTrend(cubic, [...steady, below, ...drift]);
    const flagged = t.lots.filter((l) => l.rulesBroken.a?.includes(4)).map((l) => l.lotCode);
    expect(flagged).toEqual(["D-7"]);
  });

  it("moves the limits with a chosen baseline", () => {
    const later = WOBBLE.map((d, i) => scan(`E-${i}`, 400 + i, { a: 4.16 + d }));
    const t = materialTrend({ ...cubic, baselineFirstLot: 21, baselineLastLot: 40 }, [...steady, ...later]);
    expect(t.byParameter.a!.limits!.center).toBeCloseTo(4.16, 4);
    // Against the later baseline, every one of the first 20 lots is far below: rule 1.
    expect(t.lots.slice(0, 20).every((l) => l.rulesBroken.a?.includes(1))).toBe(true);
    expect(t.lots.slice(20).every((l) => !l.rulesBroken.a)).toBe(true);
  });

  it("charts X̄/R when every baseline lot has the same number of scans (2…10)", () => {
    const pairs = WOBBLE.slice(0, 10).flatMap((d, i) => [scan(`P-${i}`, i * 7, { a: 4.1569 + d }), scan(`P-${i}`, i * 7 + 1, { a: 4.1569 + d + 0.0001 })]);
    const t = materialTrend(cubic, pairs);
    const a = t.byParameter.a!;
    expect(a.chart).toBe("xbar_r");
    expect(a.chartWords).toMatch(/X̄\/R/);
    expect(a.limits).toEqual(xbarRLimits(WOBBLE.slice(0, 10).map((d) => [4.1569 + d, 4.1569 + d + 0.0001])));
    expect(a.points[0].range).toBeCloseTo(0.0001, 10);
    // One lot of the baseline with a third scan: no common size, so individuals of each lot's mean.
    const mixed = materialTrend(cubic, [...pairs, scan("P-0", 2, { a: 4.157 })]);
    expect(mixed.byParameter.a!.chart).toBe("individuals");
  });

  it("charts only the system's free parameters, each on its own", () => {
    const hex: TrendMaterial = { ...cubic, crystalSystem: "hexagonal", declared: { a: 2.87, c: 14.2 } };
    const lots = WOBBLE.map((d, i) => scan(`H-${i}`, i, { a: 2.87 + d, b: 2.87 + d, c: 14.2 - d * 10 }));
    const t = materialTrend(hex, lots);
    expect(t.parameters).toEqual(["a", "c"]);
    expect(Object.keys(t.byParameter)).toEqual(["a", "c"]);
  });
});

describe("the acceptance window's band", () => {
  it("is declared ± the half-width in Å or degrees, or ± a percentage of the declared value", () => {
    const abs = windowBand({ a: { plusMinus: 0.002, unit: "absolute" } }, 4.1569, "a")!;
    expect(abs.lower).toBeCloseTo(4.1549, 12);
    expect(abs.upper).toBeCloseTo(4.1589, 12);
    const pct = windowBand({ c: { plusMinus: 0.1, unit: "percent" } }, 14.2, "c")!;
    expect(pct.lower).toBeCloseTo(14.1858, 10);
    expect(pct.upper).toBeCloseTo(14.2142, 10);
    expect(pct.words).toBe("c 14.2 ± 0.1 %");
    expect(windowBand({ a: { plusMinus: 0.002, unit: "absolute" } }, null, "a")).toBeNull();
    expect(windowBand(null, 4.1569, "a")).toBeNull();
  });
});
