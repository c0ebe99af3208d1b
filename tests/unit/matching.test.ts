// The matching rules against published values: Kα1 energies (docs/reference-values.md#x-ray-wavelengths) and K edges (docs/reference-values.md#k-absorption-edges), Bragg's law.
import { describe, expect, it } from "vitest";
import { ANODE_LINES, photonEnergyKeV } from "~/diffraction/wavelengths";
import { dSpacingCoverage, qMax, twoThetaForD } from "~/domain/coverage";
import { estimatePrice, evaluateInstrument, fluorescingElements, matchLab, requestedDRange, type MatchLab } from "~/domain/matching";
import { cuAndCo, IRON_RICH } from "./match-fixtures";

const { cu, co } = cuAndCo({ cu: "Cu reflection", co: "Co reflection" });
const lab: MatchLab = {
  id: "lab",
  name: "Test Lab",
  slug: "test-lab",
  instruments: [cu, co],
  acceptance: { pictograms: ["GHS06", "GHS07"], specialCategories: ["nanomaterial"] },
  priceList: {
    currency: "EUR",
    perSampleMinor: { powder_reflection: 18000 },
    perExtraTemperaturePointMinor: 4500,
    hazardousHandlingMinor: 6000,
    samplePreparationMinor: 1500,
    turnaroundDays: 8,
  },
};
const lfp = IRON_RICH;

describe("fluorescence (K edges: docs/reference-values.md#k-absorption-edges, lib xraylib EdgeEnergy)", () => {
  it("flags Cr, Mn, Fe and Co under Cu Kα1 (8.048 keV) but not Ni, Cu or Zn", () => {
    // Cu Kα1 energy: 12398.41857 / 1.540593 eV = 8.0478 keV (International Tables Vol. C §4.2.2.14)
    expect(photonEnergyKeV(ANODE_LINES.Cu.kAlpha1)).toBeCloseTo(8.0478, 3);
    expect(fluorescingElements(["Cr", "Mn", "Fe", "Co", "Ni", "Cu", "Zn"], ANODE_LINES.Cu.kAlpha1)).toEqual(["Co", "Cr", "Fe", "Mn"]);
  });
  it("does not flag Fe under Co Kα1 (6.930 keV, below the Fe edge at 7.112 keV), but flags Mn (6.539 keV)", () => {
    expect(fluorescingElements(["Fe"], ANODE_LINES.Co.kAlpha1)).toEqual([]);
    expect(fluorescingElements(["Mn"], ANODE_LINES.Co.kAlpha1)).toEqual(["Mn"]);
  });
  it("under Mo Kα1 (17.48 keV) flags Y and Sr but not Zr (edge 17.998 keV, above the line)", () => {
    expect(fluorescingElements(["Y", "Sr", "Zr"], ANODE_LINES.Mo.kAlpha1)).toEqual(["Sr", "Y"]);
  });
});

describe("d coverage by Bragg's law (hand calculation)", () => {
  it("Cu Kα1 over 5–150° reaches d from 0.7975 Å to 17.66 Å", () => {
    // 1.540593 / (2 sin 2.5°) = 1.540593 / 0.0872388 = 17.6595 Å
    const c = dSpacingCoverage(1.540593, 5, 150);
    expect(c.dMin).toBeCloseTo(1.540593 / (2 * Math.sin((75 * Math.PI) / 180)), 10);
    expect(c.dMin).toBeCloseTo(0.79747, 5);
    expect(c.dMax).toBeCloseTo(17.6595, 3);
  });
  it("Si 111 (d = 3.1356 Å) appears at 2θ = 28.442° under Cu Kα1 (docs/reference-values.md#silicon-reflections)", () => {
    expect(twoThetaForD(1.5405929, 3.1356)).toBeCloseTo(28.442, 2);
  });
  it("Q_max = 4π sin θmax / λ: Mo Kα1 to 145° gives 16.90 Å⁻¹", () => {
    expect(qMax(0.709317, 145)).toBeCloseTo((4 * Math.PI * Math.sin((72.5 * Math.PI) / 180)) / 0.709317, 10);
    expect(qMax(0.709317, 145)).toBeCloseTo(16.896, 2);
  });
  it("reads a request's 2θ range for Cu when the source is any", () => {
    const r = requestedDRange(lfp)!;
    expect(r.dMin).toBeCloseTo(1.540593 / (2 * Math.sin((45 * Math.PI) / 180)), 10);
  });
});

describe("matching a request to a lab", () => {
  it("fits the iron phosphate, warns on the Cu instrument and names the Co one as better", () => {
    const m = matchLab(lfp, lab);
    expect(m.fits).toBe(true);
    expect(m.bestInstrumentId).toBe("co");
    const cuFit = m.instruments.find((i) => i.instrumentId === "cu")!;
    expect(cuFit.warnings[0]).toMatch(/Fe has its K edge just below the Cu Kα energy/);
    expect(cuFit.warnings[1]).toMatch(/Better: Test Lab's Co reflection \(Co Kα\)/);
    expect(m.warnings.some((w) => w.startsWith("Cu reflection: Fluorescence"))).toBe(true);
  });
  it("no warning when the detector discriminates energy", () => {
    expect(evaluateInstrument(lfp, { ...cu, energyDiscrimination: true }).warnings).toEqual([]);
  });
  it("checks temperature points against a stage's range and atmosphere", () => {
    expect(evaluateInstrument({ ...lfp, temperaturePointsK: [298, 1300], atmosphere: "nitrogen" }, cu).fits).toBe(true);
    const argon = evaluateInstrument({ ...lfp, temperaturePointsK: [1300], atmosphere: "argon" }, cu);
    expect(argon.fits).toBe(false);
    expect(argon.reasons.find((r) => !r.ok)!.text).toMatch(/No stage reaches 1300 K in argon/);
    expect(evaluateInstrument({ ...lfp, temperaturePointsK: [1500], atmosphere: "air" }, cu).fits).toBe(false);
  });
  it("refuses a d range the instrument cannot reach and a source the client did not want", () => {
    expect(evaluateInstrument({ ...lfp, rangeKind: "d_spacing", rangeMin: 0.5, rangeMax: 5 }, cu).fits).toBe(false);
    expect(evaluateInstrument({ ...lfp, preferredSource: "Mo" }, cu).fits).toBe(false);
  });
  it("requires every declared hazard to be accepted", () => {
    const toxic = { ...lfp, samples: [{ ...lfp.samples[0], ghsPictograms: ["GHS06"], specialHazards: [] }] };
    expect(matchLab(toxic, lab).fits).toBe(true);
    const hot = { ...lfp, samples: [{ ...lfp.samples[0], ghsPictograms: ["GHS06"], specialHazards: [{ category: "radioactive" }] }] };
    const m = matchLab(hot, lab);
    expect(m.fits).toBe(false);
    expect(m.reasons.at(-1)!.text).toBe("Does not accept radioactive");
  });
  it("estimates the price from the price list", () => {
    const two = { ...lfp, temperaturePointsK: [298, 600, 900], samples: [lfp.samples[0], { ...lfp.samples[0], ghsPictograms: ["GHS07"] }] };
    // 2 × (18000 + 1500 preparation + 2 extra points × 4500) + 6000 hazardous handling
    expect(estimatePrice(two, lab.priceList)).toBe(2 * (18000 + 1500 + 2 * 4500) + 6000);
    expect(estimatePrice({ ...lfp, technique: "thin_film" }, lab.priceList)).toBeNull();
  });
});
