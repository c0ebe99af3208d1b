// The check plot's d-spacing and Q axes: Bragg's law against a tabulated reference pattern, and the axis's round
// labels placed where they belong on the 2θ points.
import { describe, expect, it } from "vitest";
import { axisNumber, axisUnit, dOf, qOf, roundSplits } from "~/components/plot-axis";

// Cu Kα1, docs/reference-values.md#x-ray-wavelengths.
const CU_KA1 = 1.540593;
const CO_KA1 = 1.788996;

describe("d and Q of a 2θ", () => {
  it("matches the silicon reference pattern with Cu Kα1", () => {
    // Silicon with Cu Kα1: 2θ 28.443°, 47.303°, 56.123° for d 3.1355, 1.9201, 1.6375 Å (from memory: the usual
    // silicon reference pattern, ICDD PDF 27-1402).
    for (const [twoTheta, d] of [
      [28.443, 3.1355],
      [47.303, 1.9201],
      [56.123, 1.6375],
    ]) {
      expect(dOf(twoTheta, CU_KA1)).toBeCloseTo(d, 3);
      // Q = 4π sin θ / λ = 2π / d (the definition).
      expect(qOf(twoTheta, CU_KA1)).toBeCloseTo((2 * Math.PI) / d, 3);
      expect(qOf(twoTheta, CU_KA1)).toBeCloseTo((4 * Math.PI * Math.sin((twoTheta * Math.PI) / 360)) / CU_KA1, 10);
    }
  });

  it("converts back to the same 2θ", () => {
    for (const axis of ["d", "q"] as const) {
      const [to, from] = axisUnit(axis, CO_KA1);
      for (const twoTheta of [15, 32.7, 88.1, 140]) expect(from(to(twoTheta))).toBeCloseTo(twoTheta, 9);
    }
  });
});

describe("roundSplits", () => {
  const cases = [
    { axis: "d", wavelength: CU_KA1, min: 5, max: 60 },
    { axis: "d", wavelength: CO_KA1, min: 15, max: 110 },
    { axis: "q", wavelength: CU_KA1, min: 15, max: 120 },
    { axis: "d", wavelength: CU_KA1, min: 28, max: 29 },
  ] as const;

  it.each(cases)("puts round $axis labels inside 2θ $min–$max°, at least the minimum gap apart", ({ axis, wavelength, min, max }) => {
    const [to, from] = axisUnit(axis, wavelength);
    const width = 930;
    const splits = roundSplits(min, max, to, from, width, 56);
    expect(splits.length).toBeGreaterThanOrEqual(5);
    for (const x of splits) {
      expect(x).toBeGreaterThanOrEqual(min);
      expect(x).toBeLessThanOrEqual(max);
      // Each split sits exactly at its label's value, and the label is a round number (at most 3 decimals).
      const label = axisNumber(to(x));
      expect(from(Number(label))).toBeCloseTo(x, 6);
      expect(label).toMatch(/^\d+(\.\d{1,3})?$/);
    }
    const px = splits.map((x) => ((x - min) / (max - min)) * width);
    for (let i = 1; i < px.length; i++) expect(px[i] - px[i - 1]).toBeGreaterThanOrEqual(56);
  });

  it("gives no splits for an empty range", () => {
    const [to, from] = axisUnit("d", CU_KA1);
    expect(roundSplits(20, 20, to, from, 900)).toEqual([]);
  });
});
