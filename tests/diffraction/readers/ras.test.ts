// RAS text scans written by the test from the layout described in RigakuFiles.jl docs/src/guide/formats.md: section
// marks *RAS_DATA_START, *RAS_HEADER_START … *RAS_HEADER_END, *RAS_INT_START … *RAS_INT_END, several scans in one
// file, `*KEY "VALUE"` header lines, points "angle intensity attenuator", start times month first. Header key names
// as they appear in public example files (docs/scan-formats.md#rigaku-ras). Expected values are the numbers written.
import { describe, expect, it } from "vitest";
import { parseScan } from "~/diffraction/parse-scan";
import { ras } from "./write-formats";

const N = 200;
const rows = (start: number, extra = 0): [number, number, number][] =>
  Array.from({ length: N }, (_, i) => [start + 0.02 * i, Math.round(80 + extra + 5000 * Math.exp(-(((0.02 * i - 2) / 0.05) ** 2))), 1]);

const HEADER = {
  FILE_SAMPLE: "Corundum plate",
  FILE_COMMENT: "acceptance scan",
  HW_XG_TARGET_NAME: "Cu",
  HW_XG_WAVE_LENGTH_ALPHA1: "1.540593",
  HW_XG_WAVE_LENGTH_ALPHA2: "1.544414",
  HW_XG_WAVE_LENGTH_BETA: "1.392250",
  HW_XG_WAVE_LENGTH_UNIT: "Angstrom",
  HW_XG_VOLTAGE_UNIT: "kV",
  HW_XG_CURRENT_UNIT: "mA",
  HW_GONIOMETER_NAME: "Standard",
  "MEAS_COND_AXIS_NAME-0": "IncidentSlitBox",
  "MEAS_COND_AXIS_POSITION-0": "2/3deg",
  "MEAS_COND_AXIS_UNIT-0": "",
  "MEAS_COND_AXIS_NAME-1": "Omega",
  "MEAS_COND_AXIS_POSITION-1": "0.0000",
  MEAS_COND_XG_VOLTAGE: "40",
  MEAS_COND_XG_CURRENT: "30",
  MEAS_DATA_COUNT: String(N),
  MEAS_SCAN_AXIS_X: "TwoThetaTheta",
  MEAS_SCAN_MODE: "CONTINUOUS",
  MEAS_SCAN_SPEED: "2.0000",
  MEAS_SCAN_SPEED_UNIT: "deg/min",
  MEAS_SCAN_START: "30.0000",
  MEAS_SCAN_START_TIME: "11/21/2017 08:32:31",
  MEAS_SCAN_STEP: "0.0200",
  MEAS_SCAN_STOP: "33.9800",
  MEAS_SCAN_UNIT_X: "deg",
  MEAS_SCAN_UNIT_Y: "counts",
};

function read(input: string | Uint8Array) {
  const r = parseScan(input);
  if (!r.ok) throw new Error(`expected a scan, got: ${r.error}`);
  expect(r.scan.format).toBe("ras");
  return r.scan;
}

describe("RAS text scans", () => {
  it("reads the points and the header's radiation, tube, scan, sample, date and optics", () => {
    const data = rows(30);
    const scan = read(ras([{ header: HEADER, rows: data }]));
    expect(scan.twoTheta.length).toBe(N);
    expect(scan.twoTheta[100]).toBe(32);
    expect(Array.from(scan.intensity)).toEqual(data.map((r) => r[1]));
    expect(scan.metadata).toEqual({
      probe: "x-ray",
      anode: "Cu",
      kAlpha1: 1.540593,
      kAlpha2: 1.544414,
      kBeta: 1.39225,
      tubeVoltageKv: 40,
      tubeCurrentMa: 30,
      scanAxis: "TwoThetaTheta",
      scanMode: "continuous",
      step: 0.02,
      // 0.02° at 2°/min: 0.6 s a step.
      timePerStep: 0.6,
      intensityUnit: "counts",
      sampleName: "Corundum plate",
      title: "acceptance scan",
      measuredAt: "2017-11-21T08:32:31",
      slits: [{ name: "IncidentSlitBox", value: "2/3deg" }],
    });
    expect(scan.wavelength).toBe(1.540593);
    expect(scan.warnings).toEqual([]);
  });

  it("multiplies the intensity by the attenuator factor in the third column", () => {
    const data = rows(30).map(([x, y], i): [number, number, number] => (i >= 95 && i <= 105 ? [x, y / 10, 10] : [x, y, 1]));
    const scan = read(ras([{ header: HEADER, rows: data }]));
    expect(scan.intensity[100]).toBeCloseTo(rows(30)[100][1], 9);
    expect(scan.intensity[0]).toBe(data[0][1]);
  });

  it("takes the first of several scans and fills scansInFile", () => {
    const scan = read(
      ras([
        { header: HEADER, rows: rows(30) },
        { header: { ...HEADER, MEAS_SCAN_START: "40.0000" }, rows: rows(40, 7) },
      ]),
    );
    expect(scan.twoTheta[0]).toBe(30);
    expect(scan.metadata).toMatchObject({ scansInFile: 2, scanTaken: 1 });
    expect(scan.warnings.join(" ")).toMatch(/2 scans; scan 1/);
  });

  it("passes over a scan over omega and reads the 2θ scan after it", () => {
    const scan = read(
      ras([
        { header: { ...HEADER, MEAS_SCAN_AXIS_X: "Omega" }, rows: rows(10) },
        { header: HEADER, rows: rows(30) },
      ]),
    );
    expect(scan.twoTheta[0]).toBe(30);
    expect(scan.metadata.scanTaken).toBe(2);
  });

  it("refuses a file whose only scan runs over omega, in one sentence", () => {
    const r = parseScan(ras([{ header: { ...HEADER, MEAS_SCAN_AXIS_X: "Omega" }, rows: rows(10) }]));
    expect(r.ok).toBe(false);
    if (!r.ok) expect(r.error).toBe("The RAS file's scans run over Omega, not 2θ; the check needs a 2θ scan.");
  });

  it("skips other blocks after a scan, reads English names after a '|' and internal optics names", () => {
    // Shapes seen in a SmartLab file: a temperature block after *RAS_INT_END, bilingual hardware names, localised
    // condition-axis names with English *_INTERNAL twins.
    const header = {
      ...HEADER,
      HW_GONIOMETER_NAME: "スマートラボ|SmartLab",
      "MEAS_COND_AXIS_NAME-0": "入射スリット",
      "MEAS_COND_AXIS_NAME_INTERNAL-0": "IncidentSlitBox",
      MEAS_COND_XG_WAVE_TYPE: "Ka1",
    };
    const text = ras([{ header, rows: rows(30) }]).replace(
      "*RAS_INT_END",
      ["*RAS_INT_END", "*RAS_TEMPERATURE_START", ...rows(30).map(([x]) => `${x.toFixed(4)} 23.000 `), "*RAS_TEMPERATURE_END"].join("\r\n"),
    );
    const scan = read(new TextEncoder().encode(text));
    expect(scan.twoTheta.length).toBe(N);
    expect(scan.metadata.instrument).toBe("SmartLab");
    expect(scan.metadata.slits).toEqual([
      { name: "IncidentSlitBox", value: "2/3deg" },
      { name: "X-ray line selected", value: "Ka1" },
    ]);
  });

  it("reads Windows-1252 bytes (a degree sign in the sample name) and the simplified export without section marks", () => {
    const marked = ras([{ header: { ...HEADER, FILE_SAMPLE: "Probe 25 °C" }, rows: rows(30) }]);
    const latin1 = Uint8Array.from(marked, (c) => c.charCodeAt(0));
    expect(read(latin1).metadata.sampleName).toBe("Probe 25 °C");
    const simplified = [
      '*FILE_SAMPLE "Plain"',
      '*HW_XG_TARGET_NAME "Co"',
      '*HW_XG_WAVE_LENGTH_ALPHA1 "1.788965"',
      '*MEAS_SCAN_UNIT_Y "cps"',
      "#Intensity_unit=cps",
      ...rows(30).map(([x, y]) => `${x.toFixed(4)} ${y}`),
    ].join("\n");
    const scan = read(simplified);
    expect(scan.metadata).toMatchObject({ anode: "Co", kAlpha1: 1.788965, intensityUnit: "counts per second", sampleName: "Plain" });
    expect(scan.twoTheta.length).toBe(N);
  });
});
