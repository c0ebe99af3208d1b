// d-spacing coverage of an instrument, checked against hand calculations with Bragg's law (λ = 2 d sin θ).
import { describe, expect, it } from "vitest";
import { dSpacingCoverage } from "~/domain/coverage";

describe("dSpacingCoverage", () => {
  it("gives d 0.7975–17.66 Å for Cu Kα1 over 2θ 5–150°", () => {
    // Hand calculation, Bragg's law: λ = 1.540593 Å (Cu Kα1, docs/reference-values.md#x-ray-wavelengths);
    // θmax = 75°, sin 75° = 0.9659258 → d = 1.540593 / 1.9318517 = 0.797470 Å;
    // θmin = 2.5°, sin 2.5° = 0.0436194 → d = 1.540593 / 0.0872388 = 17.6597 Å.
    const { dMin, dMax } = dSpacingCoverage(1.540593, 5, 150);
    expect(dMin).toBeCloseTo(0.79747, 5);
    expect(dMax).toBeCloseTo(17.6597, 3);
  });

  it("gives d from 0.3719 Å for Mo Kα1 over 2θ 2–145°", () => {
    // Hand calculation, Bragg's law: λ = 0.709317 Å (Mo Kα1, docs/reference-values.md#x-ray-wavelengths); sin 72.5° = 0.9537170 → d = 0.709317 / 1.907434 = 0.371870 Å;
    // sin 1° = 0.0174524 → d = 0.709317 / 0.0349048 = 20.3215 Å.
    const { dMin, dMax } = dSpacingCoverage(0.709317, 2, 145);
    expect(dMin).toBeCloseTo(0.37187, 5);
    expect(dMax).toBeCloseTo(20.3215, 3);
  });

  it("reaches the shortest d, λ/2, at 2θ = 180° and unbounded d at 2θ = 0°", () => {
    // Hand calculation: sin 90° = 1 → d = λ / 2; sin 0° = 0 → no upper bound.
    const { dMin, dMax } = dSpacingCoverage(1.540593, 0, 180);
    expect(dMin).toBeCloseTo(0.7702965, 7);
    expect(dMax).toBe(Infinity);
  });
});
