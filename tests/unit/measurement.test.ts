// What a scan file states, in words, and the radiation the check takes from it: the anode a stated wavelength
// names, when a file's source differs from the quote's instrument, and the conditions a file states.
import { describe, expect, it } from "vitest";
import {
  anodeOfWavelength,
  ASSUMED_RADIATION,
  chooseRadiation,
  measurementConditions,
  measurementSummary,
  radiationStatedBy,
  sameSource,
} from "~/domain/measurement";
import type { Radiation } from "~/diffraction/wavelengths";

const CU: Radiation = { kind: "anode", anode: "Cu", monochromation: "k_alpha1_only" };
const SYNCHROTRON: Radiation = { kind: "custom", wavelength: 0.459 };

describe("anodeOfWavelength", () => {
  it("names the anode of a stated Kα1 or weighted Kα wavelength, and no anode for other wavelengths", () => {
    // Kα1 values as tabulated in docs/reference-values.md#x-ray-wavelengths (NIST, Deslattes et al. 2003).
    expect(anodeOfWavelength(1.540593)).toBe("Cu");
    expect(anodeOfWavelength(1.788996)).toBe("Co");
    expect(anodeOfWavelength(0.709317)).toBe("Mo");
    // Older and rounded values files carry: Cu Kα1 1.54056 Å (Bearden 1967), the weighted Cu Kα 1.5418 Å and
    // Mo Kα 0.71073 Å, Co Kα 1.7902 Å (from memory: the values instrument software commonly writes).
    expect(anodeOfWavelength(1.54056)).toBe("Cu");
    expect(anodeOfWavelength(1.5418)).toBe("Cu");
    expect(anodeOfWavelength(0.71073)).toBe("Mo");
    expect(anodeOfWavelength(1.7902)).toBe("Co");
    // A synchrotron wavelength and gallium Kα1 of a metal-jet source (1.3414 Å, from memory) are no tube anode of the table.
    expect(anodeOfWavelength(0.459)).toBeNull();
    expect(anodeOfWavelength(1.3414)).toBeNull();
    // Cu Kβ (1.392234 Å, docs/reference-values.md#x-ray-wavelengths) is not copper's Kα.
    expect(anodeOfWavelength(1.392234)).toBeNull();
  });
});

describe("radiationStatedBy", () => {
  it("takes the file's anode with the instrument's monochromation", () => {
    expect(radiationStatedBy({ anode: "Co" }, CU)).toEqual({ kind: "anode", anode: "Co", monochromation: "k_alpha1_only" });
    // Without an instrument tube the usual doublet is assumed.
    expect(radiationStatedBy({ kAlpha1: 1.788996, kAlpha2: 1.792835 }, SYNCHROTRON)).toEqual({ kind: "anode", anode: "Co", monochromation: "k_alpha_doublet" });
  });

  it("keeps a wavelength that is no tube line, any neutron wavelength, and nothing when the file states nothing", () => {
    expect(radiationStatedBy({ wavelength: 0.459 }, CU)).toEqual({ kind: "custom", wavelength: 0.459 });
    expect(radiationStatedBy({ probe: "neutron", wavelength: 1.5406 }, CU)).toEqual({ kind: "custom", wavelength: 1.5406 });
    expect(radiationStatedBy({ anode: "W" }, CU)).toBeNull();
    expect(radiationStatedBy({ anode: "Ga", kAlpha1: 1.3414 }, null)).toEqual({ kind: "custom", wavelength: 1.3414 });
    expect(radiationStatedBy({ sampleName: "lot 7" }, CU)).toBeNull();
    expect(radiationStatedBy(null, CU)).toBeNull();
    expect(radiationStatedBy({ wavelength: -1 }, CU)).toBeNull();
  });
});

describe("sameSource", () => {
  it("compares anodes by element and wavelengths within 0.1 %", () => {
    expect(sameSource(CU, { kind: "anode", anode: "Cu", monochromation: "k_alpha_doublet" })).toBe(true);
    expect(sameSource(CU, { kind: "custom", wavelength: 1.5406 })).toBe(true);
    expect(sameSource(SYNCHROTRON, { kind: "custom", wavelength: 0.4592 })).toBe(true);
    expect(sameSource(SYNCHROTRON, { kind: "custom", wavelength: 0.62 })).toBe(false);
    expect(sameSource(CU, { kind: "anode", anode: "Co", monochromation: "k_alpha1_only" })).toBe(false);
  });
});

describe("chooseRadiation", () => {
  it("uses the file's Co source on a Cu instrument and says so in one sentence", () => {
    const choice = chooseRadiation({ anode: "Co" }, CU, "Bench diffractometer");
    expect(choice.source).toBe("file");
    expect(choice.radiation).toEqual({ kind: "anode", anode: "Co", monochromation: "k_alpha1_only" });
    // Co Kα1 1.788996 Å and Cu Kα1 1.540593 Å (docs/reference-values.md#x-ray-wavelengths), rounded to 3 decimals.
    expect(choice.mismatch).toBe(
      "This file was measured with Co Kα (1.789 Å) but the quote names the Cu Kα (1.541 Å) instrument “Bench diffractometer”; the check used the file's radiation.",
    );
  });

  it("keeps the instrument's radiation when the file agrees, and uses it when the file states none", () => {
    expect(chooseRadiation({ kAlpha1: 1.540598 }, CU, "Bench")).toEqual({ radiation: CU, source: "instrument", mismatch: null, notes: [] });
    expect(chooseRadiation({}, CU, "Bench")).toEqual({ radiation: CU, source: "instrument", mismatch: null, notes: [] });
  });

  it("uses the file's source without a warning of mismatch when the quote names no instrument, and assumes Cu Kα when neither says", () => {
    const fileOnly = chooseRadiation({ wavelength: 0.459 }, null, null);
    expect(fileOnly).toMatchObject({ radiation: { kind: "custom", wavelength: 0.459 }, source: "file", mismatch: null });
    expect(fileOnly.notes[0]).toMatch(/used the radiation the file states: a wavelength of 0\.459 Å/);
    const neither = chooseRadiation(undefined, null, null);
    expect(neither).toMatchObject({ radiation: ASSUMED_RADIATION, source: "assumed", mismatch: null });
    expect(neither.notes[0]).toMatch(/assumed Cu Kα/);
  });

  it("never takes neutrons for a tube's radiation, even at a tube line's wavelength", () => {
    // 1.5406 Å is Cu Kα1's wavelength (docs/reference-values.md#x-ray-wavelengths), but a neutron scan has no Kα2.
    const choice = chooseRadiation({ probe: "neutron", wavelength: 1.5406 }, CU, "Bench");
    expect(choice.radiation).toEqual({ kind: "custom", wavelength: 1.5406 });
    expect(choice.mismatch).toMatch(/^This file was measured with neutrons of 1\.5406 Å but the quote names the Cu Kα \(1\.541 Å\) instrument “Bench”/);
  });

  it("names a single-wavelength instrument by its wavelength", () => {
    const choice = chooseRadiation({ anode: "Mo" }, SYNCHROTRON, "Beamline 7");
    expect(choice.mismatch).toMatch(/^This file was measured with Mo Kα \(0\.709 Å\) but the quote names the 0\.459 Å instrument “Beamline 7”/);
  });
});

describe("measurementConditions", () => {
  it("puts every stated condition in words and leaves out what the file does not state", () => {
    const rows = measurementConditions({
      formatLabel: "XRDML (XML)",
      metadata: {
        anode: "Cu",
        kAlpha1: 1.540598,
        kAlpha2: 1.544426,
        kAlpha2Ratio: 0.5,
        tubeVoltageKv: 45,
        tubeCurrentMa: 40,
        scanAxis: "Gonio",
        scanMode: "continuous",
        step: 0.0167,
        timePerStep: 1.5,
        slits: [
          { name: "divergence slit", value: "1/8°" },
          { name: "receiving slit", value: "0.1 mm" },
        ],
        sampleName: "Invented corundum",
        measuredAt: "2024-05-06T07:08:09+02:00",
        instrument: "0000000012345678",
      },
      points: 4801,
      twoThetaMin: 10,
      twoThetaMax: 90.0167,
    });
    expect(Object.fromEntries(rows.map((r) => [r.label, r.value]))).toEqual({
      "File format": "XRDML (XML)",
      Radiation: "Cu anode · Kα1 1.540598 Å, Kα2 1.544426 Å",
      "Kα2/Kα1 ratio": "0.5",
      Tube: "45 kV, 40 mA",
      Scan: "Gonio axis, continuous scan",
      "Range and step": "10°–90.017° 2θ, step 0.0167°, 4801 points",
      "Time per step": "1.5 s",
      "Slits and optics": "divergence slit 1/8°; receiving slit 0.1 mm",
      "Sample (as in the file)": "Invented corundum",
      Measured: "2024-05-06 07:08 (UTC+02:00)",
      "Instrument (as in the file)": "0000000012345678",
    });
  });

  it("gives only the format and range for a bare two-column file, and a one-line summary", () => {
    const info = { formatLabel: "Two-column text", metadata: {}, points: 3501, twoThetaMin: 20, twoThetaMax: 90 };
    expect(measurementConditions(info).map((r) => r.label)).toEqual(["File format", "Range and step"]);
    expect(measurementSummary(info)).toBe("Two-column text · 20°–90° 2θ, 3501 points");
    expect(measurementConditions({ metadata: { scansInFile: 3, scanTaken: 2, probe: "neutron", wavelength: 1.5943 } })).toEqual([
      { label: "Radiation", value: "Neutrons · λ 1.5943 Å" },
      { label: "Scans in the file", value: "3; the 2nd was read" },
    ]);
  });
});
