// The stored result's labels and corrections in words, and results stored before version 2 still read.
// Sources: the wording is Diffractory's own; Kβ and tungsten L lines as in
// docs/reference-values.md#lines-that-are-not-the-samples; LaB6 a = 4.156826 Å (NIST SRM 660c certificate).
import { describe, expect, it } from "vitest";
import type { CheckedPeak } from "~/diffraction";
import { runLatticeCheck } from "~/diffraction/check";
import { simulatePattern } from "~/diffraction/simulate";
import { STRUCTURES } from "~/diffraction/structures";
import { ANODE_LINES, type Radiation } from "~/diffraction/wavelengths";
import {
  correctionRows,
  foreignMarks,
  peakOriginWords,
  peaksTable,
  readStoredResult,
  STORED_RESULT_VERSION,
  type StoredCheckResult,
} from "~/domain/check-result";

const base: CheckedPeak = {
  twoTheta: 27.36,
  twoThetaEsd: 0.003,
  d: 3.257,
  intensity: 20,
  relativeIntensity: 0.2,
  height: 100,
  fwhm: 0.05,
  eta: 0.5,
  hkl: null,
  usedInRefinement: false,
  crystalliteSizeNm: null,
};

describe("peak labels in words", () => {
  it("Kβ, tungsten L and holder lines name what they belong to", () => {
    const kb = {
      ...base,
      origin: "kbeta" as const,
      foreign: {
        origin: "kbeta" as const,
        line: "Cu Kβ",
        parentPeak: 2,
        parentHkl: [1, 1, 0] as [number, number, number],
        ratioToParent: 0.002,
        holderHkl: null,
        expectedTwoTheta: 27.36,
      },
    };
    expect(peakOriginWords(kb)).toBe("Cu Kβ of (1 1 0)");
    const w = { ...kb, origin: "tungsten_l" as const, foreign: { ...kb.foreign, origin: "tungsten_l" as const, line: "W Lα1", parentHkl: null } };
    expect(peakOriginWords(w)).toBe("W Lα1 of peak 3");
    const al = {
      ...base,
      origin: "holder" as const,
      foreign: {
        origin: "holder" as const,
        line: "Al",
        parentPeak: null,
        parentHkl: null,
        ratioToParent: null,
        holderHkl: [1, 1, 1] as [number, number, number],
        expectedTwoTheta: 38.47,
      },
    };
    expect(peakOriginWords(al)).toBe("holder (Al 1 1 1)");
    expect(peakOriginWords(base)).toBeNull();
    expect(foreignMarks([base, kb, al]).map((m) => m.label)).toEqual(["Cu Kβ of (1 1 0)", "holder (Al 1 1 1)"]);
  });

  it("the peaks CSV carries the origin and its words", () => {
    const kb = {
      ...base,
      origin: "kbeta" as const,
      foreign: {
        origin: "kbeta" as const,
        line: "Cu Kβ",
        parentPeak: 0,
        parentHkl: [1, 1, 0] as [number, number, number],
        ratioToParent: 0.002,
        holderHkl: null,
        expectedTwoTheta: 27.36,
      },
    };
    const table = peaksTable({ peaks: [base, kb] });
    expect(table[0].slice(-2)).toEqual(["origin", "origin_note"]);
    expect(table[1].slice(-2)).toEqual(["sample", ""]);
    expect(table[2].slice(-2)).toEqual(["kbeta", "Cu Kβ of (1 1 0)"]);
  });
});

describe("stored results across versions", () => {
  const v1 = {
    version: 1,
    verdict: "consistent",
    reasons: [],
    correction: "zero_shift",
    zeroShift: 0.0312,
    zeroShiftEsd: 0.0011,
    displacement: 0,
    displacementEsd: null,
    peaks: [base],
  } as unknown as StoredCheckResult;

  it("a version 1 result reads as its check meant it: every peak the sample's, the zero shift alone", () => {
    const r = readStoredResult(v1);
    expect(r.peaks[0].origin).toBe("sample");
    expect(r.peaks[0].foreign).toBeNull();
    expect(r.correctionRequested).toBe("zero_shift");
    expect(r.zeroDisplacementCorrelation).toBeNull();
    expect(r.transparency).toBe("none");
    expect(r.foreignPeaks).toEqual({ kbeta: 0, tungstenL: 0, holder: 0 });
    expect(correctionRows(v1)).toEqual([{ name: "Zero shift", value: "+0.0312° ± 0.0011° 2θ" }]);
    // No labelled peaks: the table keeps its former columns.
    expect(peaksTable(v1)[0].at(-1)).toBe("crystallite_size_nm");
  });

  it("a current result lists both corrections, their correlation, and the labelled lines", () => {
    const radiation: Radiation = { kind: "anode", anode: "Cu", monochromation: "k_beta_filtered" };
    const sim = simulatePattern({
      structure: STRUCTURES.lanthanumHexaboride,
      radiation,
      twoThetaMin: 15,
      twoThetaMax: 145,
      step: 0.01,
      scale: 50_000,
      zeroShift: 0.04,
      specimenDisplacement: 0.15,
      background: { constant: 200 },
      noise: { seed: 3 },
      strayLines: [{ wavelength: ANODE_LINES.Cu.kBeta, weight: 0.003 }],
    });
    const a = 4.1569;
    const result = runLatticeCheck({ twoTheta: sim.twoTheta, intensity: sim.intensity, format: "xy", warnings: [] } as never, {
      radiation,
      system: "cubic",
      centering: "P",
      cell: { a, b: a, c: a, alpha: 90, beta: 90, gamma: 90 },
    });
    const { twoTheta: _t, observed: _o, background: _b, fittedProfile: _f, unindexed: _u, ...rest } = result;
    const stored = JSON.parse(JSON.stringify({ ...rest, version: STORED_RESULT_VERSION })) as StoredCheckResult;
    const rows = correctionRows(stored);
    expect(rows.map((r) => r.name)).toEqual(["Zero shift", "Specimen displacement", "Correlation of zero shift and displacement"]);
    expect(rows[1].value).toMatch(/^\+0\.1\d\d mm ± 0\.0\d\d mm/);
    expect(readStoredResult(stored).foreignPeaks.kbeta).toBeGreaterThan(0);
    expect(foreignMarks(stored.peaks).some((m) => /^Cu Kβ of \(/.test(m.label))).toBe(true);
  });
});
