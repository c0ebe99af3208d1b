// Control limits and the Western Electric rules (app/domain/spc.ts).
//
// Rules: Western Electric Co., Statistical Quality Control Handbook (1956), the tests for unnatural patterns on
// one side of the centre line, with zones at 1σ, 2σ and 3σ: (1) one point beyond 3σ; (2) two of three successive
// points beyond 2σ on the same side; (3) four of five successive points beyond 1σ on the same side; (4) eight
// successive points on the same side of the centre line. Each series below is built so that a rule's pattern is
// completed at one known point, and checks that the point before it is not flagged.
//
// Limits: the worked examples of the SAS/QC User's Guide, SHEWHART procedure (SAS Institute):
// - X̄/R: RCHART statement, "Creating Range Charts from Raw Data" (data set Disks: 25 lots of 6 disk-drive test
//   times) and "Saving Control Limits" (the listing of Disklim: _LCLX_ 7.94314, _MEAN_ 8.00307, _UCLX_ 8.06299,
//   _LCLR_ 0, _R_ 0.124, _UCLR_ 0.24847, _STDDEV_ 0.048927, _LIMITN_ 6). SAS computes the limits with d2 to more
//   digits than the tabulated A2 = 0.483, D4 = 2.004 used in app/domain/spc.ts, so they agree
//   to about 5·10⁻⁵.
// - Individuals: IRCHART statement, "Creating Individual Measurements and Moving Range Charts" (data set Jets:
//   inner diameters of 20 jet engines, cm), limits worked by hand with the formulas of the same guide's
//   "Constructing Charts for Individual Measurements and Moving Ranges" (x̄ ± 3·MR̄/d2, d2(2) = 1.128; MR chart
//   D4·MR̄): x̄ = 1607.8/20 = 80.39 cm; the 19 moving ranges sum to 101.2 cm, MR̄ = 5.32632 cm; σ̂ = 4.72192 cm;
//   UCL = 94.5557 cm, LCL = 66.2243 cm; MR chart upper limit 3.267 × 5.32632 = 17.4011 cm.
import { describe, expect, it } from "vitest";
import { CHART_CONSTANTS, individualsLimits, type RuleNumber, westernElectric, xbarRLimits } from "~/domain/spc";

const unit = { center: 0, sigma: 1 };
/** The index of each point that breaks `rule`. */
const flaggedBy = (series: number[], rule: RuleNumber, limits = unit) =>
  westernElectric(series, limits)
    .map((rules, i) => (rules.includes(rule) ? i : -1))
    .filter((i) => i >= 0);

describe("Western Electric rules (Western Electric Co., Statistical Quality Control Handbook, 1956)", () => {
  it("rule 1: a point beyond 3σ, on either side; a point exactly on 3σ is not beyond it", () => {
    expect(flaggedBy([0, 3, 3.0001, -0.5, -3.2, 2.99], 1)).toEqual([2, 4]);
  });

  it("rule 2: the second of two points beyond 2σ within three in a row on the same side — not before", () => {
    // Point 1 is the first beyond 2σ; point 2 is inside; point 3 is the second beyond 2σ within points 1–3.
    expect(flaggedBy([0, 2.5, 0.3, 2.1], 2)).toEqual([3]);
    // Two at once at the start of the record: the second already completes the pattern.
    expect(flaggedBy([2.2, 2.4, 0], 2)).toEqual([1]);
    // Three apart (points 0 and 3): never two within three in a row.
    expect(flaggedBy([2.5, 0, 0, 2.5, 0], 2)).toEqual([]);
    // Opposite sides do not add up.
    expect(flaggedBy([2.5, -2.5, 0.2], 2)).toEqual([]);
    // Exactly 2σ is not beyond it.
    expect(flaggedBy([2, 2.5, 2], 2)).toEqual([]);
    // Below the centre line likewise.
    expect(flaggedBy([0, -2.6, -1, -2.05], 2)).toEqual([3]);
  });

  it("rule 3: the fourth of four points beyond 1σ within five in a row on the same side — not before", () => {
    const series = [0, 1.5, 1.2, 0.4, 1.7, 1.1, 0];
    // Points 1, 2, 4 are beyond 1σ (three of points 0–4); point 5 makes four of points 1–5.
    expect(flaggedBy(series, 3)).toEqual([5]);
    expect(flaggedBy(series.slice(0, 5), 3)).toEqual([]);
    // None of these is beyond 2σ, so rule 2 stays silent.
    expect(flaggedBy(series, 2)).toEqual([]);
    // A point on the other side breaks the count within its window.
    expect(flaggedBy([1.5, 1.5, -1.5, 1.5, 0.2, 1.5], 3)).toEqual([]);
    // Below the centre line.
    expect(flaggedBy([-1.1, -1.3, -1.2, -1.4], 3)).toEqual([3]);
  });

  it("rule 4: the eighth point in a row on the same side of the centre line — not the seventh", () => {
    const seven = [0.2, 0.5, 0.1, 0.9, 0.3, 0.4, 0.6];
    expect(flaggedBy(seven, 4)).toEqual([]);
    expect(flaggedBy([...seven, 0.2], 4)).toEqual([7]);
    // Every further point on that side stays flagged; a point on the centre line ends the run.
    expect(flaggedBy([...seven, 0.2, 0.3, 0, 0.3], 4)).toEqual([7, 8]);
    // A point on the other side ends the run too.
    expect(flaggedBy([...seven, -0.1, 0.3], 4)).toEqual([]);
    expect(flaggedBy(seven.map((x) => -x).concat([-0.05]), 4)).toEqual([7]);
  });

  it("flags a point with every rule it completes, against the limits' own centre and σ", () => {
    // Centre 10, σ 0.5: eight points above 10, the last beyond 3σ (11.5), the previous beyond 2σ (11).
    const rules = westernElectric([10.1, 10.2, 10.1, 10.3, 10.2, 10.1, 11.2, 11.6], { center: 10, sigma: 0.5 });
    expect(rules[7]).toEqual([1, 2, 4]);
    expect(rules[6]).toEqual([]);
  });

  it("with σ̂ = 0 every point off the centre breaks rule 1; points that are not numbers break nothing", () => {
    expect(westernElectric([1, 1, 1.0001], { center: 1, sigma: 0 })[2]).toContain(1);
    expect(westernElectric([Number.NaN, 5], unit)[0]).toEqual([]);
  });
});

describe("control limits against the SAS/QC User's Guide worked examples", () => {
  it("X̄/R chart of the Disks data (25 lots of n = 6): the Disklim listing", () => {
    const disks = [
      [8.05, 7.9, 8.04, 8.06, 8.01, 7.99],
      [8.03, 8.06, 8.02, 8.02, 7.97, 8.03],
      [8.0, 7.94, 7.97, 7.95, 8.0, 8.01],
      [8.0, 8.06, 8.06, 7.99, 7.97, 7.96],
      [7.93, 8.01, 8.0, 8.09, 8.06, 8.02],
      [7.98, 7.99, 8.01, 8.09, 8.0, 7.97],
      [8.0, 7.94, 7.93, 8.03, 7.93, 8.08],
      [8.01, 7.98, 7.98, 8.07, 8.05, 8.09],
      [7.97, 7.96, 8.01, 8.11, 8.06, 8.07],
      [7.93, 8.03, 8.03, 8.0, 7.93, 8.03],
      [8.0, 8.0, 8.02, 7.92, 7.98, 8.01],
      [7.98, 7.93, 8.01, 7.97, 8.02, 8.0],
      [8.06, 7.93, 7.98, 7.98, 8.02, 7.96],
      [8.05, 7.98, 8.05, 7.99, 7.95, 7.99],
      [7.94, 8.01, 7.97, 8.04, 7.91, 8.03],
      [8.03, 8.03, 8.02, 8.06, 8.0, 7.97],
      [8.03, 7.94, 8.05, 8.05, 8.04, 7.94],
      [7.99, 7.99, 7.86, 7.99, 8.06, 8.03],
      [7.95, 7.96, 7.99, 7.96, 7.94, 8.12],
      [8.03, 8.07, 7.98, 7.97, 8.0, 8.04],
      [8.04, 7.9, 8.03, 8.02, 7.98, 7.97],
      [7.95, 8.05, 7.98, 8.01, 7.97, 8.15],
      [8.06, 8.0, 8.03, 8.02, 7.99, 7.95],
      [7.97, 8.02, 8.0, 7.96, 7.96, 8.0],
      [8.12, 7.97, 7.99, 8.09, 8.05, 8.0],
    ];
    const limits = xbarRLimits(disks)!;
    expect(limits.kind).toBe("xbar_r");
    expect(limits.n).toBe(6);
    expect(limits.baselinePoints).toBe(25);
    expect(limits.center).toBeCloseTo(8.00307, 5); // _MEAN_
    expect(limits.range.center).toBeCloseTo(0.124, 6); // _R_
    expect(limits.ucl).toBeCloseTo(8.06299, 4); // _UCLX_
    expect(limits.lcl).toBeCloseTo(7.94314, 4); // _LCLX_
    expect(limits.range.ucl).toBeCloseTo(0.24847, 3); // _UCLR_
    expect(limits.range.lcl).toBe(0); // _LCLR_ (D3 = 0 for n = 6)
    // σ̂ of one scan (_STDDEV_) = R̄ / d2; the limits' sigma is that of a subgroup mean, σ̂ / √n.
    expect(limits.sigma * Math.sqrt(6)).toBeCloseTo(0.048927, 4);
  });

  it("individuals chart of the Jets data (20 engines): limits worked by hand", () => {
    const jets = [78.4, 80.1, 84.4, 79.1, 80.4, 83.5, 73.8, 83.5, 75.0, 76.8, 70.5, 80.3, 82.4, 79.4, 86.4, 90.5, 77.7, 82.5, 79.9, 83.2];
    const limits = individualsLimits(jets)!;
    expect(limits.kind).toBe("individuals");
    expect(limits.center).toBeCloseTo(80.39, 6);
    expect(limits.range.center).toBeCloseTo(101.2 / 19, 6);
    expect(limits.sigma).toBeCloseTo(4.72192, 4);
    expect(limits.ucl).toBeCloseTo(94.5557, 3);
    expect(limits.lcl).toBeCloseTo(66.2243, 3);
    expect(limits.range.ucl).toBeCloseTo(17.4011, 3);
    expect(limits.range.lcl).toBe(0);
    // The guide's chart shows no point beyond the limits for these engines.
    expect(westernElectric(jets, limits).filter((r) => r.includes(1))).toEqual([]);
  });

  it("needs two baseline points (or two equal-size subgroups of 2…10)", () => {
    expect(individualsLimits([5.4])).toBeNull();
    expect(individualsLimits([5.4, Number.NaN])).toBeNull();
    expect(xbarRLimits([[1, 2]])).toBeNull();
    expect(
      xbarRLimits([
        [1, 2],
        [1, 2, 3],
      ]),
    ).toBeNull();
    expect(xbarRLimits([[1], [2]])).toBeNull();
  });

  it("has the tabulated constants for n = 2…10 (common practice; A2 checked against its definition 3 / (d2·√n))", () => {
    expect(Object.keys(CHART_CONSTANTS).map(Number)).toEqual([2, 3, 4, 5, 6, 7, 8, 9, 10]);
    // A2 = 3 / (d2 √n), to the tables' three digits.
    for (const [n, k] of Object.entries(CHART_CONSTANTS)) expect(k.A2).toBeCloseTo(3 / (k.d2 * Math.sqrt(Number(n))), 2);
  });
});
