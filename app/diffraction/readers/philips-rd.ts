// The binary ".rd" (version 3, mark "V3RD") and ".sd" (version 5, mark "V5RD") scan files of an older lab
// diffractometer make: one range, 2θ start, end and step as float64, counts packed in 16 bits. The offsets,
// the description they come from and what could not be confirmed are in docs/scan-formats.md#binary-rd-and-sd-files.

import { angle, fixedText, startsWith, stated, statedWavelength } from "./binary";
import type { ReadScan, ScanMetadata, ScanReader, ScanSource } from "./types";

/** Diffractometer and anode codes at bytes 84 and 85, as the layout description lists them. */
const DIFFRACTOMETERS = ["PW1800", "PW1710 based system", "PW1840", "PW3710 based system", undefined, "X'Pert MPD"];
const ANODES = ["Cu", "Mo", "Fe", "Cr"];

export const philipsRdReader: ScanReader = {
  format: "philips-rd",
  label: "Philips RD/SD (binary)",
  sniff(source) {
    const b = source.bytes;
    if (!startsWith(b, "V3RD") && !startsWith(b, "V5RD")) return 0;
    return b.length >= dataStart(b) ? 1 : 0.6;
  },
  read: readRd,
};

function dataStart(bytes: Uint8Array): number {
  return bytes[1] === 53 ? 810 : 250; // "5": version 5 keeps a longer header
}

function readRd(source: ScanSource): ReadScan | { error: string } {
  const bytes = source.bytes;
  if (!startsWith(bytes, "V3RD") && !startsWith(bytes, "V5RD")) return { error: "The file does not start with the mark of an RD scan file." };
  const start = dataStart(bytes);
  if (bytes.length < start) {
    return { error: `The RD file ends inside its header (it has ${bytes.length} bytes, the header needs ${start}).` };
  }
  const view = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength);
  const step = view.getFloat64(214, true);
  const first = view.getFloat64(222, true);
  const last = view.getFloat64(230, true);
  if (!(Number.isFinite(step) && step > 0 && step < 90 && Number.isFinite(first) && Number.isFinite(last) && last > first && Math.abs(last) < 360)) {
    return { error: `The RD file states an impossible range (start ${first}°, end ${last}°, step ${step}°).` };
  }
  const n = Math.round((last - first) / step) + 1;
  const needed = start + 2 * n;
  if (needed > bytes.length) {
    return {
      error: `The RD file ends before its data: ${angle(first)}–${angle(last)}° in steps of ${angle(step)}° needs ${n} counts (${2 * n} bytes from byte ${start}), but the file has ${bytes.length} bytes.`,
    };
  }
  const twoTheta = new Float64Array(n);
  const intensity = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    twoTheta[i] = first + i * step;
    // The layout description gives counts = stored² / 100 (a square-root packing into 16 bits).
    const packed = view.getUint16(start + 2 * i, true);
    intensity[i] = (packed * packed) / 100;
  }
  const metadata: ScanMetadata = {
    probe: "x-ray",
    instrument: DIFFRACTOMETERS[bytes[84]],
    anode: ANODES[bytes[85]],
    kAlpha1: statedWavelength(view.getFloat64(94, true)),
    kAlpha2: statedWavelength(view.getFloat64(102, true)),
    kAlpha2Ratio: stated(view.getFloat64(110, true), 1.5),
    sampleName: fixedText(bytes, 146, 20) || undefined,
    step,
    intensityUnit: "counts",
    scansInFile: 1,
    scanTaken: 1,
  };
  for (const key of Object.keys(metadata) as (keyof ScanMetadata)[]) if (metadata[key] === undefined) delete metadata[key];
  return { twoTheta, intensity, metadata, warnings: [] };
}
