// One value per line under a start/step header: the Sietronics CPI file (layout: xylib cpi.cpp's header example and
// PyXRD's cpi_parser.py — first line "SIETRONICS XRD SCAN", then start, end, step, anode, wavelength, date d/m/y,
// time per step, description, "SCANDATA", one intensity a line) and the general START/STEP/END form (common
// practice). Files are written by the test; expected values are the numbers written.
import { describe, expect, it } from "vitest";
import { parseScan } from "~/diffraction/parse-scan";
import { cpi } from "./write-formats";

const N = 301;
const counts = Array.from({ length: N }, (_, i) => Math.round(50 + 4000 * Math.exp(-(((20 + 0.01 * i - 21.5) / 0.05) ** 2))));

function read(text: string | Uint8Array) {
  const r = parseScan(text);
  if (!r.ok) throw new Error(`expected a scan, got: ${r.error}`);
  return r.scan;
}

function refused(text: string): string {
  const r = parseScan(text);
  if (r.ok) throw new Error("expected a refusal");
  expect(r.error).toMatch(/^[A-Z].*\.$/);
  expect(r.error).not.toContain("\n");
  return r.error;
}

const header = {
  start: "20.00",
  end: "23.00",
  step: "0.010",
  anode: "Cu",
  wavelength: "1.54056",
  date: "25/03/2019 14:02:11",
  time: "0.600",
  description: "Quartz, sieved",
};

describe("Sietronics CPI", () => {
  it("reads the header lines, SCANDATA and one intensity a line", () => {
    const scan = read(cpi(counts, header));
    expect(scan.format).toBe("cpi");
    expect(scan.twoTheta.length).toBe(N);
    expect(scan.twoTheta[0]).toBe(20);
    expect(scan.twoTheta[150]).toBe(21.5);
    expect(scan.twoTheta[N - 1]).toBe(23);
    expect(Array.from(scan.intensity)).toEqual(counts);
    expect(scan.metadata).toEqual({
      anode: "Cu",
      probe: "x-ray",
      kAlpha1: 1.54056,
      measuredAt: "2019-03-25T14:02:11",
      timePerStep: 0.6,
      sampleName: "Quartz, sieved",
      step: 0.01,
    });
    expect(scan.wavelength).toBe(1.54056);
  });

  it("tolerates decimal commas, a byte-order mark and a placeholder date", () => {
    const text = `\ufeff${cpi(counts.map((c) => `${c},0`) as unknown as number[], {
      ...header,
      start: "20,00",
      end: "23,00",
      step: "0,010",
      date: "1-1-1900",
    })}`;
    const scan = read(new TextEncoder().encode(text));
    expect(scan.twoTheta[1]).toBe(20.01);
    expect(scan.intensity[5]).toBe(counts[5]);
    expect(scan.metadata.measuredAt).toBeUndefined();
  });

  it("accepts one value more or less than the range implies, and refuses more", () => {
    // (23 − 20)/0.01 + 1 = 301 points; 300 is within one.
    const short = read(cpi(counts.slice(0, N - 1), header));
    expect(short.twoTheta.length).toBe(N - 1);
    expect(short.warnings.join(" ")).toMatch(/implies 301 points/);
    expect(refused(cpi(counts.slice(0, N - 20), header))).toMatch(/implies 301 points, but the file holds 281 values/);
  });

  it("refuses a CPI file without SCANDATA", () => {
    expect(refused(cpi(counts, header).replace("SCANDATA", "DATA"))).toMatch(/SCANDATA/);
  });
});

describe("a general start/step header", () => {
  it("reads START=, STEP, END/STOP lines and metadata lines, then one number a line", () => {
    const text = [
      "# exported scan",
      "START=20.00",
      "STEP 0.01",
      "STOP: 23.00",
      "Wavelength = 1.540593",
      "Anode: Cu",
      "Sample: quartz",
      ...counts.map(String),
    ].join("\n");
    const scan = read(text);
    expect(scan.format).toBe("step-list");
    expect(scan.twoTheta[N - 1]).toBe(23);
    expect(Array.from(scan.intensity)).toEqual(counts);
    expect(scan.metadata).toMatchObject({ wavelength: 1.540593, anode: "Cu", sampleName: "quartz", step: 0.01 });
  });

  it("reads a start and step with a point count", () => {
    const text = ["Start angle: 20", "Step size: 0.01", `Points: ${N}`, ...counts.map(String)].join("\r\n");
    const scan = read(text);
    expect(scan.twoTheta[100]).toBe(21);
  });

  it("refuses a count that does not match the header's range", () => {
    const text = ["START=20", "STEP=0.01", "END=30", ...counts.map(String)].join("\n");
    expect(refused(text)).toMatch(/range 20–30° in steps of 0.01° implies 1001 points, but the file holds 301 values/);
  });

  it("is not taken for two-column text with a header", () => {
    const text = ["START=20", "STEP=0.01", ...counts.map((c, i) => `${(20 + i * 0.01).toFixed(2)} ${c}`)].join("\n");
    expect(read(text).format).toBe("xy");
  });
});
