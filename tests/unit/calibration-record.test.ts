// The rules of the lab's accuracy on record (app/domain/calibration-record.ts): the judgement of a calibration,
// the profile width, the public figures' words and the withdrawal from matching.
import { describe, expect, it } from "vitest";
import {
  accuracyText,
  calibrationCharts,
  countsForMatching,
  judgeCalibration,
  nextDueAt,
  onTimeText,
  profileWidth,
  signedAngstrom,
  withdrawalReason,
} from "~/domain/calibration-record";
import { evaluateInstrument } from "~/domain/matching";

const pass = (deviationA: number) => ({ deviationA, passed: true });

describe("judging a calibration", () => {
  it("passes a first scan within the tolerance with no control rules (fewer than two baseline scans)", () => {
    const j = judgeCalibration([], 0.0004);
    expect(j).toMatchObject({ passed: true, withinTolerance: true, rulesBroken: [], limits: null });
    expect(judgeCalibration([pass(0.0001)], 0.0004).limits).toBeNull();
  });

  it("fails a scan outside ±0.0005 Å (the vetting tolerance, app/domain/vetting.ts) in one sentence", () => {
    const j = judgeCalibration([], -0.0007);
    expect(j.passed).toBe(false);
    expect(j.withinTolerance).toBe(false);
    expect(j.problems).toEqual(["The deviation −0.00070 Å is outside the tolerance of ±0.0005 Å."]);
  });

  it("fails a scan within tolerance that breaks rule 1 of the limits from the first passing scans", () => {
    // Baseline 0.00010, 0.00012, 0.00008, 0.00010, 0.00010: x̄ = 0.0001, MR̄ = (2+4+2+0)/4 ×10⁻⁵ = 2×10⁻⁵,
    // σ̂ = MR̄/1.128 = 1.773×10⁻⁵, UCL = 0.0001 + 3σ̂ = 0.0001532 (individuals chart, common practice; ASTM E2587 d2).
    const prior = [pass(0.0001), pass(0.00012), pass(0.00008), pass(0.0001), pass(0.0001)];
    const j = judgeCalibration(prior, 0.0003);
    expect(j.withinTolerance).toBe(true);
    expect(j.limits!.ucl).toBeCloseTo(0.0001 + (3 * 0.00002) / 1.128, 10);
    expect(j.rulesBroken).toEqual([1]);
    expect(j.passed).toBe(false);
    expect(j.problems[0]).toMatch(/^Western Electric rule 1: one point beyond the 3σ limits\.$/);
    // Just inside the upper limit: passes.
    expect(judgeCalibration(prior, 0.00015).passed).toBe(true);
    // With four passing scans there are no limits yet, so only the tolerance judges.
    const four = judgeCalibration(prior.slice(0, 4), 0.0003);
    expect(four.limits).toBeNull();
    expect(four.passed).toBe(true);
  });

  it("takes the limits from passing scans only, at most twelve, and flags a run of eight on one side (rule 4)", () => {
    const baseline = Array.from({ length: 14 }, (_, i) => pass(i % 2 ? 0.0001 : -0.0001));
    // A failed scan is not part of the baseline.
    const withFailure = [{ deviationA: 0.0004, passed: false }, ...baseline];
    expect(judgeCalibration(withFailure, 0).limits!.baselinePoints).toBe(12);
    expect(judgeCalibration(withFailure, 0).limits!.center).toBeCloseTo(0, 12);
    // Seven small positive deviations then an eighth: eight in a row above the centre line.
    const drift = [...baseline.slice(0, 12), ...Array.from({ length: 7 }, () => pass(0.00001))];
    expect(judgeCalibration(drift, 0.00001).rulesBroken).toEqual([4]);
  });

  it("fails a scan whose standard could not be refined", () => {
    expect(judgeCalibration([], null)).toMatchObject({ passed: false, problems: ["The standard's cell could not be refined from the scan."] });
  });
});

describe("the profile width from Caglioti U, V, W", () => {
  it("is √(U tan²θ + V tanθ + W) at 2θ = 60° (Caglioti, Paoletti & Ricci 1958; worked by hand)", () => {
    // tan 30° = 0.577350; 0.004 × 0.333333 − 0.002 × 0.577350 + 0.003 = 0.0031786; √ = 0.056379
    expect(profileWidth(0.004, -0.002, 0.003)).toBeCloseTo(0.056379, 6);
    expect(profileWidth(0, 0, 0.0025, 90)).toBeCloseTo(0.05, 12);
    expect(profileWidth(null, 0, 0.003)).toBeNull();
    expect(profileWidth(0, 0, -0.001)).toBeNull();
  });
});

describe("the public figures in words", () => {
  it("writes deviations with their sign and five decimals, zero without a sign", () => {
    expect(signedAngstrom(0.00012)).toBe("+0.00012 Å");
    expect(signedAngstrom(-0.000314)).toBe("−0.00031 Å");
    expect(signedAngstrom(-0.000001)).toBe("0.00000 Å");
    expect(accuracyText({ standard: "lab6_srm660c", meanDeviationA: 0.00012, scans: 14 })).toBe("LaB6: +0.00012 Å, 14 scans in 12 months");
    expect(accuracyText({ standard: "si_srm640c", meanDeviationA: -0.0002, scans: 1 })).toBe("Si: −0.00020 Å, 1 scan in 12 months");
    expect(accuracyText({ standard: "si_srm640c", meanDeviationA: null, scans: 0 })).toBe("No calibration scans in 12 months");
  });

  it("counts on-time delivery as delivered by the due date of all delivered", () => {
    expect(onTimeText({ onTime: 18, delivered: 19 })).toBe("On time: 18 of 19 orders in 12 months");
    expect(onTimeText({ onTime: 1, delivered: 1 })).toBe("On time: 1 of 1 order in 12 months");
    expect(onTimeText({ onTime: 0, delivered: 0 })).toBe("No orders delivered in 12 months");
  });

  it("is due the interval after the scan", () => {
    expect(nextDueAt(new Date("2026-01-31T10:00:00Z"), 30).toISOString()).toBe("2026-03-02T10:00:00.000Z");
  });
});

describe("the charts", () => {
  it("draw deviation, zero shift and width with their own limits and flags", () => {
    const rows = [0.0001, 0.00012, 0.00008, 0.0001, 0.0001, 0.0003].map((d, i) => ({
      measuredAt: `2026-0${i + 1}-15T09:00:00Z`,
      deviationA: d,
      zeroShift: 0.01,
      width: null,
      passed: i < 5,
    }));
    const [deviation, zero, width] = calibrationCharts(rows);
    expect(deviation.values).toHaveLength(6);
    expect(deviation.flags[5]).toEqual([1]);
    expect(deviation.limits!.baselinePoints).toBe(5);
    expect(zero.flags.every((f) => f.length === 0)).toBe(true);
    expect(width.values).toEqual([]);
    expect(width.limits).toBeNull();
  });
});

describe("withdrawal from matching", () => {
  it("takes overdue and out-of-control instruments out, with the reason first", () => {
    expect(countsForMatching("ok")).toBe(true);
    expect(countsForMatching("none")).toBe(true);
    expect(countsForMatching("overdue")).toBe(false);
    expect(countsForMatching("out_of_control")).toBe(false);
    expect(withdrawalReason("ok")).toBeNull();
    const instrument = {
      id: "i1",
      name: "Reflection diffractometer",
      technique: "powder_reflection",
      anode: "Cu" as const,
      customWavelength: null,
      twoThetaMin: 5,
      twoThetaMax: 140,
      energyDiscrimination: true,
      sampleForms: ["powder"],
      stages: [],
    };
    const request = {
      technique: "powder_reflection",
      rangeKind: "two_theta",
      rangeMin: 10,
      rangeMax: 80,
      preferredSource: "any",
      temperaturePointsK: [],
      atmosphere: "air",
      samples: [{ label: "S1", elements: ["Si"], form: "powder", ghsPictograms: [], specialHazards: [] }],
    };
    expect(evaluateInstrument(request, { ...instrument, calibrationState: "ok" }).fits).toBe(true);
    const overdue = evaluateInstrument(request, { ...instrument, calibrationState: "overdue" });
    expect(overdue.fits).toBe(false);
    expect(overdue.reasons[0]).toEqual({ ok: false, text: "Withdrawn from matching: its calibration scan is overdue" });
  });
});
