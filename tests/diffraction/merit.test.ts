// Figures of merit against a worked example: hand calculation from the published definitions
// (de Wolff, J. Appl. Cryst. 1968, 1, 108; Smith & Snyder, J. Appl. Cryst. 1979, 12, 60; as stated in docs/reference-values.md#figures-of-merit).
import { describe, expect, it } from "vitest";
import { deWolffM20, smithSnyderFN, type IndexedLine } from "~/diffraction/merit";

// A primitive cubic cell a = 4 Å: Q_calc = N / 16 Å⁻² for N = 1, 2, 3, 4, 5.
const qCalc = [0.0625, 0.125, 0.1875, 0.25, 0.3125];
const qObs = [0.0626, 0.1249, 0.1877, 0.25, 0.3127];
const twoThetaObs = [22.2, 31.6, 39.0, 45.3, 50.92];
const twoThetaCalc = [22.21, 31.58, 39.0, 45.33, 50.9];
const lines: IndexedLine[] = qCalc.map((q, i) => ({ qObs: qObs[i], qCalc: q, twoThetaObs: twoThetaObs[i], twoThetaCalc: twoThetaCalc[i] }));

describe("de Wolff M20 (hand calculation from the published definition)", () => {
  it("M_5 = Q5 / (2 ⟨ε⟩ N5) with |ε| = 1, 1, 2, 0, 2 × 10⁻⁴ and five distinct calculated Q up to Q5", () => {
    // ⟨ε⟩ = 6e-4 / 5 = 1.2e-4; N5 = 5 (0.25 listed twice counts once; 0.375 lies above Q5 = 0.3127);
    // M5 = 0.3127 / (2 × 1.2e-4 × 5) = 260.5833…
    const m = deWolffM20(lines, [0.0625, 0.125, 0.1875, 0.25, 0.25, 0.3125, 0.375]);
    expect(m).not.toBeNull();
    expect(m!.lines).toBe(5);
    expect(m!.calculated).toBe(5);
    expect(m!.meanEpsilon).toBeCloseTo(1.2e-4, 12);
    expect(m!.value).toBeCloseTo(260.5833, 3);
  });

  it("uses only the first twenty lines in order of Q", () => {
    // 25 lines of a = 4 Å, N = 1…25 (sums of three squares only), each off by +1e-4 in Q.
    const sums = [1, 2, 3, 4, 5, 6, 8, 9, 10, 11, 12, 13, 14, 16, 17, 18, 19, 20, 21, 22, 24, 25, 26, 27, 29];
    const many = sums.map((n) => ({ qObs: n / 16 + 1e-4, qCalc: n / 16, twoThetaObs: n, twoThetaCalc: n }));
    const m = deWolffM20(
      [...many].reverse(),
      sums.map((n) => n / 16),
    );
    // Q20 = 22/16 + 1e-4 = 1.3751; N20 = 20 distinct N up to 22; ⟨ε⟩ = 1e-4 → M20 = 1.3751 / (2e-4 × 20) = 343.775.
    expect(m!.lines).toBe(20);
    expect(m!.calculated).toBe(20);
    expect(m!.value).toBeCloseTo(343.775, 2);
  });
});

describe("Smith–Snyder F_N (hand calculation from the published definition)", () => {
  it("F_5 = (1/⟨|Δ2θ|⟩) · N / N_poss with |Δ2θ| = 0.01, 0.02, 0, 0.03, 0.02°", () => {
    // ⟨|Δ2θ|⟩ = 0.08 / 5 = 0.016°; N_poss = 5 distinct lines up to 50.92° (45.33 twice counts once);
    // F_5 = 62.5 × 5 / 5 = 62.5, quoted F_5 = 62.5 (0.016, 5).
    const f = smithSnyderFN(lines, [22.21, 31.58, 39.0, 45.33, 45.33, 50.9, 56.3]);
    expect(f!.lines).toBe(5);
    expect(f!.possible).toBe(5);
    expect(f!.meanDelta).toBeCloseTo(0.016, 12);
    expect(f!.value).toBeCloseTo(62.5, 9);
  });

  it("counts possible lines the pattern did not show", () => {
    // Two extra calculated lines below the last observed one: N_poss = 7, F_5 = 62.5 × 5 / 7.
    const f = smithSnyderFN(lines, [20.0, 22.21, 31.58, 35.0, 39.0, 45.33, 50.9]);
    expect(f!.possible).toBe(7);
    expect(f!.value).toBeCloseTo((62.5 * 5) / 7, 9);
  });

  it("returns null without indexed lines", () => {
    expect(smithSnyderFN([], [10, 20])).toBeNull();
    expect(deWolffM20([], [0.1])).toBeNull();
  });
});
