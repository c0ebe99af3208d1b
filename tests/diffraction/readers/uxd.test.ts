// UXD text scans written by the test from the layout xylib's uxd.cpp describes (";" comments, file-wide "_KEY=VALUE"
// lines, per range "_DRIVE", the range's keys and "_COUNTS"/"_CPS" or "_2THETACOUNTS"/"_2THETACPS"); key names as in
// xylib's sample BT86.UXD (docs/scan-formats.md#bruker-uxd). Expected values are the numbers written.
import { describe, expect, it } from "vitest";
import { parseScan } from "~/diffraction/parse-scan";

const N = 240;
const counts = Array.from({ length: N }, (_, i) => Math.round(150 + 3000 * Math.exp(-(((0.02 * i - 2.4) / 0.06) ** 2))));

const FILE_HEADER = [
  "; converted scan",
  "_FILEVERSION=2",
  "_SAMPLE='Fluorite'",
  "_SITE='Lab 2'",
  "_DATEMEASURED='04-Mar-2010 20:59:14'",
  "_WL1=1.540600",
  "_WL2=1.544390",
  "_WL3=1.392220",
  "_WLRATIO=0.500000",
  "_ANODE='Cu'",
  "_FIXED_DIVSLIT=0.300000",
  "_SOLLER_SLITS='Y'",
];

const range = (start: string, keyword: string, data: string[]) => [
  "; (Data for Range number 1)",
  "_DRIVE='COUPLED'",
  "_STEPTIME=1.000000",
  "_STEPSIZE=0.020000",
  "_STEPMODE='S'",
  `_START=${start}`,
  "_KV=40",
  "_MA=30",
  keyword,
  ...data,
];

function read(text: string) {
  const r = parseScan(text);
  if (!r.ok) throw new Error(`expected a scan, got: ${r.error}`);
  expect(r.scan.format).toBe("uxd");
  return r.scan;
}

describe("UXD text scans", () => {
  it("reads _COUNTS (eight intensities a line) on the _START/_STEPSIZE grid, with the metadata", () => {
    const lines: string[] = [];
    for (let i = 0; i < N; i += 8)
      lines.push(
        counts
          .slice(i, i + 8)
          .map((c) => String(c).padStart(10))
          .join(""),
      );
    const scan = read([...FILE_HEADER, ...range("20.000000", "_COUNTS", lines)].join("\r\n"));
    expect(scan.twoTheta.length).toBe(N);
    expect(scan.twoTheta[1]).toBe(20.02);
    expect(scan.twoTheta[N - 1]).toBe(24.78);
    expect(Array.from(scan.intensity)).toEqual(counts);
    expect(scan.metadata).toEqual({
      probe: "x-ray",
      anode: "Cu",
      kAlpha1: 1.5406,
      kAlpha2: 1.54439,
      kBeta: 1.39222,
      kAlpha2Ratio: 0.5,
      tubeVoltageKv: 40,
      tubeCurrentMa: 30,
      scanAxis: "COUPLED",
      scanMode: "step",
      step: 0.02,
      timePerStep: 1,
      sampleName: "Fluorite",
      measuredAt: "2010-03-04T20:59:14",
      instrument: "Lab 2",
      slits: [
        { name: "FIXED_DIVSLIT", value: "0.300000" },
        { name: "SOLLER_SLITS", value: "Y" },
      ],
      intensityUnit: "counts",
    });
  });

  it("reads _2THETACPS pairs, and takes the exact grid when the angle column is printed with fewer decimals", () => {
    // Printed with two decimals although the step is 0.015: 20.015 → "20.02" (rounded), as some converters write.
    const data = counts.map((c, i) => `${(20 + 0.015 * i).toFixed(2)}\t${c}`);
    const text = [...FILE_HEADER, ...range("20.000000", "_2THETACPS", data).map((l) => (l.startsWith("_STEPSIZE") ? "_STEPSIZE=0.015000" : l))].join("\n");
    const scan = read(text);
    expect(scan.metadata.intensityUnit).toBe("counts per second");
    expect(scan.twoTheta[1]).toBe(20.015);
    expect(scan.warnings.join(" ")).toMatch(/_START and _STEPSIZE/);
  });

  it("keeps an angle column that does not match the grid, and reads the first of several ranges", () => {
    const data = counts.map((c, i) => `${(20 + 0.02 * i).toFixed(3)} ${c}`);
    const second = range(
      "30.000000",
      "_2THETACOUNTS",
      counts.map((c, i) => `${(30 + 0.02 * i).toFixed(3)} ${c + 5}`),
    );
    const scan = read([...FILE_HEADER, ...range("19.000000", "_2THETACOUNTS", data), ...second].join("\n"));
    expect(scan.twoTheta[0]).toBe(20);
    expect(scan.metadata).toMatchObject({ scansInFile: 2, scanTaken: 1 });
    expect(scan.warnings.join(" ")).toMatch(/2 ranges; the first/);
  });

  it("refuses intensities without _START, in one sentence", () => {
    const r = parseScan([...FILE_HEADER, "_DRIVE='COUPLED'", "_STEPSIZE=0.02", "_COUNTS", ...counts.map(String)].join("\n"));
    expect(r).toEqual({ ok: false, error: "The UXD range gives intensities without _START and _STEPSIZE, so their angles are unknown." });
  });
});
