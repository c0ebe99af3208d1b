// What text headers and pdCIF blocks state about a measurement, and the pieces that read it (element symbols,
// dates, decoding). Files are written by the test; pdCIF data names from the pdCIF dictionary (cif_pd.dic) and the
// core CIF dictionary (docs/scan-formats.md#pdcif). Expected values are the values written.
import { describe, expect, it } from "vitest";
import { parseScan } from "~/diffraction/parse-scan";
import { decode } from "~/diffraction/readers/source";
import { anodeSymbol, isoDate, splitLines } from "~/diffraction/readers/text";

const N = 200;
const rows = Array.from({ length: N }, (_, i) => `${(10 + 0.02 * i).toFixed(2)}\t${Math.round(100 + 4000 * Math.exp(-(((0.02 * i - 2) / 0.05) ** 2)))}`);

function read(input: string | Uint8Array) {
  const r = parseScan(input);
  if (!r.ok) throw new Error(`expected a scan, got: ${r.error}`);
  return r.scan;
}

describe("header lines of two-column text", () => {
  it("reads common key/value lines, in Windows-1252 with a degree sign and CRLF endings", () => {
    const header = [
      "# Diffractory export",
      "# Sample: Quartz SQ-1",
      "# Anode = Cu",
      "# Wavelength (A): 1.540598",
      "# Ka2 wavelength: 1.544426",
      "# Generator: 40 kV, 30 mA",
      "# Step size: 0.02",
      "# Time per step: 1.5 s",
      "# Divergence slit: 0.5°",
      "# Date: 2024-03-05 10:20:00",
      "# Instrument: bench diffractometer 2",
      "2Theta\tCounts",
    ];
    const text = [...header, ...rows].join("\r\n");
    const latin1 = Uint8Array.from(text, (c) => c.charCodeAt(0));
    const scan = read(latin1);
    expect(scan.format).toBe("csv");
    expect(scan.metadata).toEqual({
      sampleName: "Quartz SQ-1",
      anode: "Cu",
      probe: "x-ray",
      wavelength: 1.540598,
      kAlpha2: 1.544426,
      tubeVoltageKv: 40,
      tubeCurrentMa: 30,
      step: 0.02,
      timePerStep: 1.5,
      slits: [{ name: "Divergence slit", value: "0.5°" }],
      measuredAt: "2024-03-05T10:20:00",
      instrument: "bench diffractometer 2",
    });
    expect(scan.wavelength).toBe(1.540598);
  });

  it("reads tube settings stated under their own keys, in any unit spelling", () => {
    const text = ["Tube voltage: 45 kV", "Tube current = 40", "Target: copper", "Radiation: X-ray", ...rows].join("\n");
    expect(read(text).metadata).toEqual({ tubeVoltageKv: 45, tubeCurrentMa: 40, anode: "Cu", probe: "x-ray" });
  });

  it("reads a file with a UTF-8 byte-order mark, and states nothing it was not told", () => {
    const scan = read(new TextEncoder().encode(`\ufeff${rows.join("\n")}`));
    expect(scan.format).toBe("xy");
    expect(scan.metadata).toEqual({});
    expect(scan.wavelength).toBeUndefined();
  });
});

describe("pdCIF metadata", () => {
  it("reads radiation, tube, scan method, step, time, sample, date, instrument and optics", () => {
    const text = [
      "data_meas",
      "_pd_block_id  2024-03-05|QZ|lab",
      "_diffrn_radiation_probe  x-ray",
      "_diffrn_radiation_type  'Cu K\\a'",
      "_diffrn_source_voltage  45",
      "_diffrn_source_current  40",
      "_diffrn_measurement_device_type  'Bench diffractometer'",
      "_diffrn_radiation_monochromator  'graphite, diffracted beam'",
      "_pd_instr_divg_eq_src/spec  0.5",
      "_pd_meas_scan_method  step",
      "_pd_meas_step_count_time  2.0",
      "_pd_meas_datetime_initiated  2024-03-05T10:20:00",
      "_pd_spec_description  'quartz powder'",
      "loop_",
      "_diffrn_radiation_wavelength_id",
      "_diffrn_radiation_wavelength",
      "_diffrn_radiation_wavelength_wt",
      "1 1.540593 1.0",
      "2 1.544414 0.5",
      "_pd_meas_2theta_range_min 10.00",
      `_pd_meas_2theta_range_max ${(10 + 0.02 * (N - 1)).toFixed(2)}`,
      "_pd_meas_2theta_range_inc 0.02",
      "loop_",
      "_pd_meas_counts_total",
      ...rows.map((r) => r.split("\t")[1]),
    ].join("\n");
    const scan = read(text);
    expect(scan.format).toBe("pdcif");
    expect(scan.metadata).toEqual({
      kAlpha1: 1.540593,
      kAlpha2: 1.544414,
      kAlpha2Ratio: 0.5,
      probe: "x-ray",
      anode: "Cu",
      tubeVoltageKv: 45,
      tubeCurrentMa: 40,
      scanMode: "step",
      step: 0.02,
      timePerStep: 2,
      sampleName: "quartz powder",
      measuredAt: "2024-03-05T10:20:00",
      instrument: "Bench diffractometer",
      slits: [
        { name: "_diffrn_radiation_monochromator", value: "graphite, diffracted beam" },
        { name: "_pd_instr_divg_eq_src/spec", value: "0.5" },
      ],
    });
    // The scan's wavelength is Kα1 when the file gives a doublet.
    expect(scan.wavelength).toBe(1.540593);
  });
});

describe("reading pieces", () => {
  it("names anodes as files write them", () => {
    expect(anodeSymbol("Cu")).toBe("Cu");
    expect(anodeSymbol("COPPER")).toBe("Cu");
    expect(anodeSymbol("Cu K-alpha")).toBe("Cu");
    expect(anodeSymbol("CuKa1")).toBe("Cu");
    expect(anodeSymbol("Mo")).toBe("Mo");
    expect(anodeSymbol("sealed tube")).toBeUndefined();
  });

  it("reads dates in the orders files use, and refuses ambiguous ones", () => {
    expect(isoDate("04-Mar-2010 20:59:14")).toBe("2010-03-04T20:59:14");
    expect(isoDate("11/21/2017 08:32:31", "mdy")).toBe("2017-11-21T08:32:31");
    expect(isoDate("25/03/19", "dmy")).toBe("2019-03-25");
    expect(isoDate("2024-03-05")).toBe("2024-03-05");
    expect(isoDate("03/04/2020")).toBeUndefined();
    expect(isoDate("24/03/2020")).toBe("2020-03-24");
  });

  it("splits LF, CRLF, CR and mixed line ends alike", () => {
    expect(splitLines("a\nb")).toEqual(["a", "b"]);
    expect(splitLines("a\r\nb\r\n")).toEqual(["a", "b", ""]);
    expect(splitLines("a\rb")).toEqual(["a", "b"]);
    expect(splitLines("a\r\nb\nc\rd")).toEqual(["a", "b", "c", "d"]);
  });

  it("decodes UTF-8, UTF-16 with a mark or without one, and Latin-1", () => {
    expect(decode(new TextEncoder().encode("2θ 10°"))).toBe("2θ 10°");
    expect(decode(Uint8Array.from([0xff, 0xfe, 0x31, 0, 0x30, 0]))).toBe("10");
    expect(decode(Uint8Array.from([0x31, 0, 0x30, 0, 0x2e, 0, 0x35, 0, 0x20, 0, 0x39, 0, 0x0a, 0, 0x32, 0]))).toBe("10.5 9\n2");
    expect(decode(Uint8Array.from([0x31, 0x30, 0xb0]))).toBe("10°");
  });
});
