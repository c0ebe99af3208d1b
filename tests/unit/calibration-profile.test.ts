// The vetting calibration check fits the instrument profile (Caglioti U, V, W) to the standard's peak widths, and
// takes a file's own radiation as the delivered-scan check does. The scans are simulated here from SRM 640c's
// certified cell with widths we chose, so the fit must give those widths back.
import { describe, expect, it } from "vitest";
import { checkCalibrationScan } from "~/domain/calibration-check";
import { instrumentFwhm } from "~/diffraction/scherrer";
import { formatScanAsXy, simulatePattern } from "~/diffraction/simulate";
import { SILICON } from "~/diffraction/structures";

// Certified lattice parameter of silicon, NIST SRM 640c: a = 5.4311946 Å (docs/reference-values.md#certified-lattice-parameters).
const SI_A = 5.4311946;
const FORM = { standard: "si_srm640c", instrumentName: "Bench diffractometer", anode: "Cu", monochromation: "k_alpha_doublet", fileName: "si.xy" } as const;

function siliconScan(anode: "Cu" | "Co", shape = { U: 0.006, V: -0.004, W: 0.003, eta: 0.4 }) {
  return simulatePattern({
    structure: SILICON,
    cell: { a: SI_A, b: SI_A, c: SI_A, alpha: 90, beta: 90, gamma: 90 },
    radiation: { kind: "anode", anode, monochromation: "k_alpha_doublet" },
    twoThetaMin: 20,
    twoThetaMax: 140,
    step: 0.01,
    peakShape: shape,
    background: { constant: 60 },
    noise: { seed: 640 },
  });
}

describe("the calibration check's instrument profile", () => {
  it("gives back the widths the scan was simulated with, to within 5 % of the FWHM over the standard's range", () => {
    // The scan's own widths: U 0.006, V −0.004, W 0.003 degrees² (chosen here, the order of a lab instrument's).
    const outcome = checkCalibrationScan(formatScanAsXy(siliconScan("Cu")), FORM);
    expect(outcome.ok).toBe(true);
    if (!outcome.ok) return;
    const fit = outcome.check.instrumentProfile!;
    expect(fit).not.toBeNull();
    expect(fit.peaks).toBeGreaterThanOrEqual(8);
    const truth = { U: 0.006, V: -0.004, W: 0.003 };
    // U, V, W trade off against each other, so the widths they give are compared, not the three numbers.
    for (const twoTheta of [28.4, 47.3, 56.1, 76.4, 95, 114.1, 136.9]) {
      expect(Math.abs(instrumentFwhm(fit, twoTheta) / instrumentFwhm(truth, twoTheta) - 1), `${twoTheta}°`).toBeLessThan(0.05);
    }
    expect(outcome.check.instrumentProfileNote).toBeNull();
    expect(outcome.check.scanFormatLabel).toEqual(expect.any(String));
  });

  it("checks a Co scan with Co when the file says so and the form says Cu, and warns", () => {
    const outcome = checkCalibrationScan(`# Anode: Co\n${formatScanAsXy(siliconScan("Co"))}`, FORM);
    expect(outcome.ok).toBe(true);
    if (!outcome.ok) return;
    const stated = outcome.check;
    expect(stated.instrument.anode).toBe("Co");
    // Co Kα1 1.788996 Å (docs/reference-values.md#x-ray-wavelengths); the certified a comes back with it.
    expect(stated.instrument.wavelength).toBeCloseTo(1.788996, 6);
    expect(Math.abs(stated.deviationA!)).toBeLessThan(1e-3);
    expect(stated.warnings[0]).toMatch(
      /^This file was measured with Co Kα \(1\.789 Å\) but the quote names the Cu Kα \(1\.541 Å\) instrument “Bench diffractometer”/,
    );
    // Without a stated source the form's Cu is used.
    const plain = checkCalibrationScan(formatScanAsXy(siliconScan("Co")), FORM);
    expect(plain.ok && plain.check.instrument.anode).toBe("Cu");
  });
});
