// Real measured files from public repositories (tests/data/real/, provenance in tests/data/real/SOURCES.md): each is
// read by the reader of its format, with the point count, 2θ range and metadata that SOURCES.md records from the
// file's own header. The files are read as they are stored and never changed.
import { readdirSync, readFileSync } from "node:fs";
import { join } from "node:path";
import { describe, expect, it } from "vitest";
import { parseScan } from "~/diffraction/parse-scan";
import type { ScanMetadata } from "~/diffraction/readers/types";

const DIR = join(__dirname, "../../data/real");

interface Expected {
  format: string;
  points: number;
  first: number;
  last: number;
  /** Decimal places to which first and last are stated in SOURCES.md. */
  digits: number;
  metadata?: ScanMetadata;
  strongest?: number;
}

// Values as SOURCES.md states them for each file.
const EXPECTED: Record<string, Expected> = {
  "lab6-srm660c-cu.gsas": {
    format: "gsas",
    points: 8378,
    first: 15.0066,
    last: 124.9991,
    digits: 4,
    metadata: { title: "Sample ID - Anode and Instrument", step: 0.0131303 },
  },
  "fluorapatite-cu.gsas": { format: "gsas", points: 5753, first: 15, last: 130.04, digits: 2, strongest: 19693, metadata: { step: 0.02 } },
  "alpha-si3n4-cu-1990.gsas": { format: "gsas", points: 5500, first: 10, last: 119.98, digits: 2, strongest: 6002, metadata: { step: 0.02 } },
  "bt86-cu.uxd": {
    format: "uxd",
    points: 2374,
    first: 3,
    last: 40,
    digits: 2,
    metadata: {
      anode: "Cu",
      kAlpha1: 1.5406,
      kAlpha2: 1.54439,
      kBeta: 1.39222,
      kAlpha2Ratio: 0.5,
      tubeVoltageKv: 45,
      tubeCurrentMa: 40,
      step: 0.015592,
      timePerStep: 0.5,
      sampleName: "BT86",
      scanAxis: "COUPLED",
      measuredAt: "2010-03-04T20:59:14",
    },
  },
  "na2co2teo6-cu-nifilter.xrdml": {
    format: "xrdml",
    points: 3998,
    first: 15.02343028,
    last: 119.98691,
    digits: 5,
    metadata: { anode: "Cu", kAlpha1: 1.540598, kAlpha2: 1.544426, kBeta: 1.39225, kAlpha2Ratio: 0.5, tubeVoltageKv: 45, tubeCurrentMa: 40 },
  },
  "empyrean-parallel-beam-cu.xrdml": {
    format: "xrdml",
    points: 196,
    first: 30.05,
    last: 41.75,
    digits: 2,
    metadata: { anode: "Cu", kAlpha1: 1.540598, kAlpha2: 1.544426, tubeVoltageKv: 45, tubeCurrentMa: 40, timePerStep: 0.44 },
  },
};

const present = readdirSync(DIR);

describe("real measured files", () => {
  for (const [file, e] of Object.entries(EXPECTED)) {
    it.runIf(present.includes(file))(`${file} is read as ${e.format} with its points, range and header`, () => {
      const r = parseScan(new Uint8Array(readFileSync(join(DIR, file))), { fileName: file });
      if (!r.ok) throw new Error(`${file}: ${r.error}`);
      const s = r.scan;
      expect(s.format).toBe(e.format);
      expect(s.twoTheta.length).toBe(e.points);
      expect(s.twoTheta[0]).toBeCloseTo(e.first, e.digits);
      expect(s.twoTheta[e.points - 1]).toBeCloseTo(e.last, e.digits);
      if (e.metadata) expect(s.metadata).toMatchObject(e.metadata);
      if (e.strongest) expect(Math.max(...s.intensity)).toBe(e.strongest);
    });
  }

  it("the fluorapatite GSAS file keeps its two trailing zero counts (NCHAN 5753)", () => {
    const r = parseScan(new Uint8Array(readFileSync(join(DIR, "fluorapatite-cu.gsas"))));
    expect(r.ok && Array.from(r.scan.intensity.slice(-3))).toEqual([84, 0, 0]);
  });

  it("the GSAS instrument parameter file is named, not read as a scan", () => {
    const r = parseScan(new Uint8Array(readFileSync(join(DIR, "fluorapatite-cu-inst.prm"))));
    expect(r).toEqual({ ok: false, error: expect.stringMatching(/GSAS instrument parameter file/) });
  });

  it("every other scan file placed in tests/data/real is read", () => {
    const others = present.filter((f) => !(f in EXPECTED) && !/\.(md|prm)$/i.test(f));
    for (const file of others) {
      const r = parseScan(new Uint8Array(readFileSync(join(DIR, file))), { fileName: file });
      expect(r.ok ? "read" : r.error, file).toBe("read");
    }
  });
});
