// The RD/SD reader on files written here with DataView from the layout listed in
// docs/scan-formats.md#binary-rd-and-sd-files: the offsets as the open xylib library records them from the
// maker's specification (xylib/philips_raw.cpp: codes at 84–86, sample at 146, step/start/end as float64 at
// 214/222/230, 16-bit packed counts from byte 250 in version 3 and 810 in version 5, counts = packed²/100) and
// the wavelengths at 94–117 as the PyXRD parser reads them (pyxrd/file_parsers/xrd_parsers/rd_parser.py).
// Every expected value is a number the test wrote into its own file.
import { describe, expect, it } from "vitest";
import { philipsRdReader } from "~/diffraction/readers/philips-rd";
import type { ReadScan, ScanSource } from "~/diffraction/readers/types";

function sourceOf(bytes: Uint8Array, fileName = "scan.rd"): ScanSource {
  return { bytes, text: () => new TextDecoder().decode(bytes), fileName };
}

function read(bytes: Uint8Array): ReadScan {
  const r = philipsRdReader.read(sourceOf(bytes));
  if ("error" in r) throw new Error(`expected a scan, got: ${r.error}`);
  return r;
}

function refused(bytes: Uint8Array): string {
  const r = philipsRdReader.read(sourceOf(bytes));
  if (!("error" in r)) throw new Error("expected a refusal");
  expect(r.error).toMatch(/^[A-Z].*[.]$/);
  return r.error;
}

/** Packed values: 10·√counts rounded, so that packed²/100 gives the counts back to the packing's precision. */
const PACKED = Array.from({ length: 301 }, (_, i) => Math.round(10 * Math.sqrt(150 + 3000 * Math.exp(-(((i - 120) / 3) ** 2)))));

function rd(version: "V3" | "V5", { start = 10, step = 0.02, packed = PACKED, drop = 0 } = {}): Uint8Array {
  const dataStart = version === "V3" ? 250 : 810;
  const bytes = new Uint8Array(dataStart + 2 * packed.length - drop);
  const view = new DataView(bytes.buffer);
  new TextEncoder().encodeInto(`${version}RD`, bytes);
  bytes[84] = 5; // X'Pert MPD
  bytes[85] = 0; // Cu
  bytes[86] = 3; // LFF
  view.setFloat64(94, 1.54056, true);
  view.setFloat64(102, 1.54439, true);
  view.setFloat64(110, 0.5, true);
  new TextEncoder().encodeInto("SCAN0001", bytes.subarray(138));
  new TextEncoder().encodeInto("Invented rutile", bytes.subarray(146));
  view.setFloat64(214, step, true);
  view.setFloat64(222, start, true);
  view.setFloat64(230, start + step * (packed.length - 1), true);
  for (let i = 0; i < packed.length && dataStart + 2 * i + 2 <= bytes.length; i++) view.setUint16(dataStart + 2 * i, packed[i], true);
  return bytes;
}

describe("RD/SD binary scans", () => {
  it("version 3: 2θ from start and step, counts unpacked as packed²/100, the codes and names of the header", () => {
    const r = read(rd("V3"));
    expect(r.twoTheta.length).toBe(301);
    expect(r.twoTheta[0]).toBe(10);
    expect(r.twoTheta[300]).toBeCloseTo(16, 12);
    expect(r.intensity[120]).toBe((PACKED[120] * PACKED[120]) / 100);
    expect(r.intensity[0]).toBe((PACKED[0] * PACKED[0]) / 100);
    expect(r.metadata).toEqual({
      probe: "x-ray",
      instrument: "X'Pert MPD",
      anode: "Cu",
      kAlpha1: 1.54056,
      kAlpha2: 1.54439,
      kAlpha2Ratio: 0.5,
      sampleName: "Invented rutile",
      step: 0.02,
      intensityUnit: "counts",
      scansInFile: 1,
      scanTaken: 1,
    });
  });

  it("version 5: the counts start at byte 810", () => {
    const r = read(rd("V5", { start: 5, step: 0.05 }));
    expect(r.twoTheta[0]).toBe(5);
    expect(r.intensity[120]).toBe((PACKED[120] * PACKED[120]) / 100);
  });

  it("refuses a cut file and an impossible range in one sentence", () => {
    expect(refused(rd("V3", { drop: 6 }))).toBe(
      "The RD file ends before its data: 10–16° in steps of 0.02° needs 301 counts (602 bytes from byte 250), but the file has 846 bytes.",
    );
    expect(refused(rd("V3").slice(0, 200))).toBe("The RD file ends inside its header (it has 200 bytes, the header needs 250).");
    expect(refused(rd("V3", { step: 0 }))).toMatch(/^The RD file states an impossible range/);
  });

  it("is claimed by its mark only", () => {
    expect(philipsRdReader.sniff(sourceOf(rd("V3"), "x.bin"))).toBe(1);
    expect(philipsRdReader.sniff(sourceOf(rd("V5")))).toBe(1);
    expect(philipsRdReader.sniff(sourceOf(new TextEncoder().encode("V3 scan\n10 100\n")))).toBe(0);
    expect(philipsRdReader.sniff(sourceOf(new TextEncoder().encode("RAW1.01")))).toBe(0);
  });
});
