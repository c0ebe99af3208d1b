// The instrument form's sample holder and Caglioti U, V, W: all three or none, in degrees², and a real peak width
// (FWHM² = U tan²θ + V tanθ + W > 0, Caglioti, Paoletti & Ricci 1958 — from memory) over the instrument's range.
import { describe, expect, it } from "vitest";
import { cagliotiFwhmSquared, InstrumentSchema, profileFailsAt } from "~/domain/capabilities";

const BASE = {
  name: "Bench reflection diffractometer",
  technique: "powder_reflection",
  sourceKind: "anode",
  anode: "Cu",
  monochromation: "k_alpha_doublet",
  twoThetaMin: 5,
  twoThetaMax: 150,
  smallestStep: 0.01,
  detector: "strip_1d",
  sampleForms: ["powder"],
};

const issues = (input: Record<string, unknown>) => {
  const r = InstrumentSchema.safeParse({ ...BASE, ...input });
  return r.success ? {} : Object.fromEntries(r.error.issues.map((i) => [i.path.join("."), i.message]));
};

describe("instrument profile", () => {
  it("accepts a usual laboratory profile and a holder from the engine's list, or neither", () => {
    // U 0.004, V −0.003, W 0.002 degrees²: the order of magnitude of a laboratory Bragg–Brentano instrument on a
    // line-profile standard (common practice); V² − 4UW < 0, so the width is real at every angle.
    expect(
      InstrumentSchema.safeParse({ ...BASE, cagliotiU: 0.004, cagliotiV: -0.003, cagliotiW: 0.002, sampleHolder: "silicon_zero_background" }).success,
    ).toBe(true);
    expect(InstrumentSchema.safeParse(BASE).success).toBe(true);
  });

  it("wants all three of U, V, W", () => {
    expect(issues({ cagliotiU: 0.004 })).toEqual({
      cagliotiV: "Give all three of U, V and W, or leave all three empty.",
      cagliotiW: "Give all three of U, V and W, or leave all three empty.",
    });
  });

  it("refuses values in centidegrees² (a profile program's unit) with a sentence on the units", () => {
    expect(issues({ cagliotiU: 2, cagliotiV: -2, cagliotiW: 5 })).toMatchObject({
      cagliotiU: expect.stringMatching(/check the units/),
      cagliotiW: expect.stringMatching(/check the units/),
    });
  });

  it("refuses a profile whose width is not real inside the range, naming where", () => {
    // Hand calculation: 0.004 t² − 0.02 t + 0.003 = 0 at t = tanθ = (0.02 − √(0.0004 − 0.000048)) / 0.008 = 0.15476,
    // θ = 8.797°, 2θ = 17.59°; the grid of 361 angles over 5–150° (0.403° apart) finds it within one step.
    const p = { U: 0.004, V: -0.02, W: 0.003 };
    const at = profileFailsAt(p, 5, 150)!;
    expect(at).toBeGreaterThanOrEqual(17.59);
    expect(at).toBeLessThan(17.59 + 0.41);
    expect(cagliotiFwhmSquared(p, 17.59)).toBeCloseTo(0, 5);
    expect(issues({ cagliotiU: p.U, cagliotiV: p.V, cagliotiW: p.W }).cagliotiW).toMatch(
      /^With these U, V and W the peak width would not be real at 1[78]\.\d° 2θ/,
    );
    // The same profile is fine on an instrument that stops below that angle.
    expect(profileFailsAt(p, 5, 15)).toBeNull();
  });

  it("refuses a holder outside the engine's list", () => {
    expect(issues({ sampleHolder: "cardboard" }).sampleHolder).toBe("Choose a sample holder from the list.");
  });
});
