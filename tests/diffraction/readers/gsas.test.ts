// GSAS standard powder data files written by the test from the published layout: A. C. Larson & R. B. Von Dreele,
// GSAS manual LAUR 86-748, "GSAS Standard Powder Data File" (80-character records; title; optional "Instrument
// parameter" line; BANK IBANK NCHAN NREC BINTYP BCOEF1–4 TYPE; CONST start and step in centidegrees; STD fields
// of I2 NCTR + F6 intensity, ten a record; ESD pairs of 8 + 8; FXYE free x y e with x in centidegrees), as the
// sources in docs/scan-formats.md#gsas-standard-powder-data quote it. Expected values are the numbers written.
import { describe, expect, it } from "vitest";
import { parseScan } from "~/diffraction/parse-scan";
import { gsasEsd, gsasFxye, gsasStd } from "./write-formats";

const N = 300;
// Whole counts: a Gaussian peak at 13° on 100 counts, angles 10 + 0.02·i (start 1000, step 2 centidegrees).
const counts = Array.from({ length: N }, (_, i) => Math.round(100 + 9000 * Math.exp(-(((10 + 0.02 * i - 13) / 0.06) ** 2))));
const angles = Array.from({ length: N }, (_, i) => Number((10 + 0.02 * i).toFixed(2)));

function ok(text: string) {
  const r = parseScan(new TextEncoder().encode(text), { fileName: "scan.gsas" });
  if (!r.ok) throw new Error(`expected a scan, got: ${r.error}`);
  expect(r.scan.format).toBe("gsas");
  return r.scan;
}

function refused(text: string): string {
  const r = parseScan(text);
  if (r.ok) throw new Error("expected a refusal");
  expect(r.error).toMatch(/^[A-Z].*\.$/);
  expect(r.error).not.toContain("\n");
  return r.error;
}

describe("STD banks", () => {
  it("reads ten 8-character fields a record on the CONST grid, with the title, instrument line and comments", () => {
    const text = gsasStd(counts, {
      title: "LaB6 test scan",
      instrumentFile: "INST_XRY.PRM",
      comments: ["# Wavelength: 1.540593", "# Anode: Cu", "# Generator 40 kV, 30 mA"],
      start: "1000",
      step: "2",
    });
    const scan = ok(text);
    expect(scan.twoTheta.length).toBe(N);
    // Angles = (BCOEF1 + i·BCOEF2)/100, exactly the decimals 10.00, 10.02, … (docs/scan-formats.md, evenly spaced angles).
    expect(Array.from(scan.twoTheta)).toEqual(angles);
    expect(Array.from(scan.intensity)).toEqual(counts);
    // STD esd: √(I/NCTR) with NCTR blank = 1 (GSAS-II importer's variance I/NCTR).
    expect(scan.esd![150]).toBeCloseTo(Math.sqrt(counts[150]), 12);
    expect(scan.metadata).toMatchObject({
      title: "LaB6 test scan",
      instrumentParameterFile: "INST_XRY.PRM",
      wavelength: 1.540593,
      anode: "Cu",
      tubeVoltageKv: 40,
      tubeCurrentMa: 30,
      step: 0.02,
    });
    expect(scan.wavelength).toBe(1.540593);
    expect(scan.warnings).toEqual([]);
  });

  it("reads fields that touch (a 2-character NCTR, then a 6-digit count) by column, with the esd √(I/NCTR)", () => {
    const big = counts.map((c) => c * 100);
    const text = gsasStd(big, { start: "1000", step: "2", nctr: () => 2 });
    // The layout leaves no blank between NCTR and a six-digit count: " 2900100".
    expect(text).toMatch(/ 2\d{6}/);
    const scan = ok(text);
    expect(Array.from(scan.intensity)).toEqual(big);
    expect(scan.esd![0]).toBeCloseTo(Math.sqrt(big[0] / 2), 12);
  });

  it("reads blank-separated values that do not keep the columns (a converter's STD, the Rietveld-list example)", () => {
    // As in the 1998 Rietveld mailing list example: "BANK 1 7702 771 CONST 400 1" and rows "20 21 26 29 …".
    const rows: string[] = [];
    for (let r = 0; r < N / 10; r++) rows.push(counts.slice(r * 10, r * 10 + 10).join(" "));
    const text = ["free-format STD", `BANK 1 ${N} ${N / 10} CONST 1000 2`, ...rows].join("\n");
    const scan = ok(text);
    expect(Array.from(scan.intensity)).toEqual(counts);
    expect(scan.twoTheta[N - 1]).toBe(angles[N - 1]);
  });

  it("reads non-integer BCOEFs exactly (start 1500.66, step 1.31303 centidegrees)", () => {
    const scan = ok(gsasStd(counts, { start: "1500.66", step: "1.31303" }));
    // 15.0066 + 299 × 0.0131303 = 15.0066 + 3.9259597 = 18.9325597 (decimal arithmetic).
    expect(scan.twoTheta[0]).toBe(15.0066);
    expect(scan.twoTheta[N - 1]).toBe(18.9325597);
    expect(scan.metadata.step).toBeCloseTo(0.0131303, 12);
  });

  it("takes at most NCHAN points and warns when the bank holds another number", () => {
    const text = gsasStd(counts, { start: "1000", step: "2" }).replace(`BANK 1 ${N} `, `BANK 1 ${N + 5} `);
    const scan = ok(text);
    expect(scan.twoTheta.length).toBe(N);
    expect(scan.warnings.join(" ")).toMatch(`announces ${N + 5} points`);
  });
});

describe("ESD, FXY and FXYE banks", () => {
  it("reads ESD pairs of 8-character value and esd", () => {
    const esd = counts.map((c) => Math.sqrt(c));
    const scan = ok(gsasEsd(counts, esd, "1000", "2"));
    expect(Array.from(scan.intensity)).toEqual(counts);
    expect(scan.esd![10]).toBeCloseTo(Number(esd[10].toFixed(2)), 12);
    expect(Array.from(scan.twoTheta)).toEqual(angles);
  });

  it("reads FXYE with x in centidegrees", () => {
    const esd = counts.map((c) => Math.sqrt(c));
    const scan = ok(gsasFxye(angles, counts, esd));
    expect(scan.twoTheta[0]).toBe(10);
    expect(scan.twoTheta[N - 1]).toBeCloseTo(15.98, 12);
    expect(scan.esd![5]).toBeCloseTo(esd[5], 6);
    expect(scan.warnings).toEqual([]);
  });

  it("reads FXY (no esd column)", () => {
    const scan = ok(gsasFxye(angles, counts, null));
    expect(scan.esd).toBeUndefined();
    expect(Array.from(scan.intensity)).toEqual(counts);
  });

  it("reads x written in degrees when BCOEF1 says the start is in degrees, and warns", () => {
    const lines = angles.map((t, i) => `${t.toFixed(2)} ${counts[i]} ${Math.sqrt(counts[i]).toFixed(3)}`);
    const text = ["degrees by mistake", `BANK 1 ${N} ${N} CONST 1000 2 0 0 FXYE`, ...lines].join("\n");
    const scan = ok(text);
    expect(scan.twoTheta[0]).toBe(10);
    expect(scan.warnings.join(" ")).toMatch(/read as degrees/);
  });
});

describe("banks and bin types", () => {
  it("takes the first 2θ bank of several and says so", () => {
    const one = gsasStd(counts, { title: "two banks", start: "1000", step: "2" });
    const second = gsasStd(
      counts.map((c) => c + 1),
      { start: "2000", step: "2" },
    )
      .split("\r\n")
      .slice(1)
      .join("\r\n")
      .replace("BANK 1", "BANK 2");
    const scan = ok(one + second);
    expect(scan.intensity[0]).toBe(counts[0]);
    expect(scan.twoTheta[0]).toBe(10);
    expect(scan.metadata).toMatchObject({ scansInFile: 2, scanTaken: 1 });
    expect(scan.warnings.join(" ")).toMatch(/2 banks/);
  });

  it("refuses time-of-flight banks (RALF, SLOG) in one sentence", () => {
    // BINTYP RALF: ISIS time-of-flight (the manual as quoted in the Mantid SaveGSS documentation).
    const rows = Array.from({ length: 60 }, (_, i) => `${1500 + 2 * i} ${20 + i} 0.3`);
    expect(refused(["PEARL bank", `BANK 1 60 60 RALF 48008 64 64331 0.0010 FXYE`, ...rows].join("\n"))).toMatch(/time-of-flight.*2θ/);
    expect(refused(["SLOG bank", `BANK 1 60 60 SLOG 1000 20000 0.001 0 FXYE`, ...rows].join("\n"))).toMatch(/time-of-flight/);
  });

  it("refuses a CONST STD bank without start and step", () => {
    expect(refused(["no coefficients", "BANK 1 60 6 CONST", ...Array.from({ length: 6 }, () => "     100".repeat(10))].join("\n"))).toMatch(/start and step/);
  });

  it("tolerates LF endings, missing padding and a trailing end-of-file mark", () => {
    const text = gsasStd(counts, { start: "1000", step: "2", newline: "\n" })
      .split("\n")
      .map((l) => l.trimEnd())
      .join("\n");
    const scan = ok(`${text}\u001a`);
    expect(Array.from(scan.intensity)).toEqual(counts);
  });
});
