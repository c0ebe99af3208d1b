// The binary ".raw" scan files of one large diffractometer make, in the four versions whose layouts are publicly
// described: 1 ("RAW "), 2 ("RAW2"), 3 ("RAW1.01") and 4 ("RAW4.00"). Every offset used here, the description
// it comes from and what could not be confirmed are in docs/scan-formats.md#binary-raw-files-versions-14.
// All numbers are little-endian; counts are float32. A file that ends early or contradicts itself is refused
// with one sentence.

import { angle, fixedText, float32Value, ordinal, startsWith, stated, statedWavelength } from "./binary";
import { anodeSymbol, isoDate } from "./text";
import type { ReadScan, ScanMetadata, ScanReader, ScanSetting, ScanSource } from "./types";

/** One range (a scan over one angular interval) as its header states it. */
interface Range {
  start: number;
  step: number;
  steps: number;
  /** Byte offset of the first record, and the size of each record (the count is its first four bytes). */
  dataOffset: number;
  recordSize: number;
  /** Offset within a record of a float64 measured 2θ, when the range records one per point. */
  measuredOffset?: number;
  timePerStep?: number;
  tubeVoltageKv?: number;
  tubeCurrentMa?: number;
  /** The range's scan type as the file names it (version 4). */
  scanType?: string;
  sampleName?: string;
  kAlpha1?: number;
  kAlpha2?: number;
}

interface Layout {
  ranges: Range[];
  metadata: ScanMetadata;
}

type Refusal = { error: string };

export const brukerRawReader: ScanReader = {
  format: "bruker-raw",
  label: "Bruker RAW (binary, versions 1–4)",
  sniff(source) {
    const b = source.bytes;
    if (startsWith(b, "RAW1.01") || startsWith(b, "RAW4.00")) return 1;
    if (startsWith(b, "RAW2")) return b.length >= 256 ? 1 : 0.5;
    if (startsWith(b, "RAW ")) return plausibleVersion1(b) ? 0.9 : 0.1;
    if (unknownVersion(b)) return 0.5;
    return 0;
  },
  read: readRaw,
};

/** Version 1 has only "RAW " as its mark, which a text file could also start with: its first range must make sense. */
function plausibleVersion1(b: Uint8Array): boolean {
  if (b.length < 156) return false;
  const view = new DataView(b.buffer, b.byteOffset, b.byteLength);
  const steps = view.getUint32(4, true);
  const step = view.getFloat32(12, true);
  const start = view.getFloat32(24, true);
  return (
    steps > 0 && 156 + 4 * steps <= b.length && Number.isFinite(step) && step !== 0 && Math.abs(step) < 90 && Number.isFinite(start) && Math.abs(start) < 360
  );
}

/** "RAW" followed by a version number this reader has no published layout for ("RAW5.00"). */
function unknownVersion(b: Uint8Array): string | null {
  if (b.length < 8 || !startsWith(b, "RAW")) return null;
  const digit = (c: number) => c >= 48 && c <= 57;
  if (!(digit(b[3]) && b[4] === 46 && digit(b[5]) && digit(b[6]))) return null;
  return String.fromCharCode(...b.subarray(0, 7));
}

function readRaw(source: ScanSource): ReadScan | Refusal {
  const bytes = source.bytes;
  const view = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength);
  let layout: Layout | Refusal;
  if (startsWith(bytes, "RAW1.01")) layout = version3(bytes, view);
  else if (startsWith(bytes, "RAW4.00")) layout = version4(bytes, view);
  else if (startsWith(bytes, "RAW2")) layout = version2(bytes, view);
  else if (startsWith(bytes, "RAW ")) layout = version1(bytes, view);
  else {
    const version = unknownVersion(bytes);
    return {
      error: version
        ? `This raw file is of version "${version}", whose layout is not published; export the scan from the instrument software as XRDML, pdCIF or two-column text.`
        : "The file does not start with the mark of a binary raw scan file.",
    };
  }
  if ("error" in layout) return layout;
  const { ranges, metadata } = layout;
  if (ranges.length === 0) return { error: "The raw file holds no ranges." };

  const taken = ranges.findIndex((r) => overTwoTheta(r.scanType));
  if (taken < 0) {
    const types = [...new Set(ranges.map((r) => r.scanType))].join(", ");
    return { error: `The raw file's ranges are not scans over 2θ (${types}); a powder scan over 2θ is needed.` };
  }
  const range = ranges[taken];
  const n = range.steps;
  const twoTheta = new Float64Array(n);
  const intensity = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    const at = range.dataOffset + i * range.recordSize;
    intensity[i] = view.getFloat32(at, true);
    twoTheta[i] = range.start + i * range.step;
  }
  const warnings: string[] = [];
  if (range.measuredOffset !== undefined) {
    // Measured positions replace the nominal ones only when every one lies within a step of its nominal angle.
    const measured = new Float64Array(n);
    let close = true;
    for (let i = 0; i < n && close; i++) {
      measured[i] = view.getFloat64(range.dataOffset + i * range.recordSize + range.measuredOffset, true);
      close = Math.abs(measured[i] - twoTheta[i]) <= Math.abs(range.step);
    }
    if (close) twoTheta.set(measured);
  }
  const first = twoTheta[0];
  const last = twoTheta[n - 1];
  if (ranges.length > 1) {
    const which = taken === 0 ? "the first" : `the ${ordinal(taken + 1)}, the first over 2θ`;
    warnings.push(
      `The raw file holds ${ranges.length} ranges; ${which} (${angle(Math.min(first, last))}–${angle(Math.max(first, last))}° 2θ, ${n} steps) was read.`,
    );
  }
  const result: ScanMetadata = {
    ...metadata,
    kAlpha1: metadata.kAlpha1 ?? range.kAlpha1,
    kAlpha2: metadata.kAlpha2 ?? range.kAlpha2,
    sampleName: metadata.sampleName ?? range.sampleName,
    tubeVoltageKv: range.tubeVoltageKv,
    tubeCurrentMa: range.tubeCurrentMa,
    scanAxis: range.scanType,
    step: Math.abs(range.step),
    timePerStep: range.timePerStep,
    scansInFile: ranges.length,
    scanTaken: taken + 1,
  };
  for (const key of Object.keys(result) as (keyof ScanMetadata)[]) if (result[key] === undefined || result[key] === "") delete result[key];
  return { twoTheta, intensity, metadata: result, warnings };
}

/** Version 4 names each range's scan type; coupled and detector scans run over 2θ. Versions 1–3 state none. */
function overTwoTheta(scanType: string | undefined): boolean {
  if (!scanType) return true;
  const t = scanType.toLowerCase();
  return t.includes("coupled") || t.includes("detector") || t.includes("2theta") || t.includes("2-theta") || t.includes("two theta");
}

// ——— Checks every version shares ———

function endsEarly(bytes: Uint8Array, needed: number, what: string): Refusal | null {
  return needed > bytes.length ? { error: `The raw file ends inside its ${what}: it has ${bytes.length} bytes, ${needed} are needed.` } : null;
}

/** Steps, start and step of a range must describe a scan; the data must lie inside the file. */
function checkRange(bytes: Uint8Array, r: Range, k: number): Refusal | null {
  const nth = ordinal(k + 1);
  if (!(r.steps > 0)) return { error: `The raw file's ${nth} range has no data points.` };
  if (!(Number.isFinite(r.step) && r.step !== 0 && Math.abs(r.step) < 90)) {
    return { error: `The raw file's ${nth} range states an impossible step of ${r.step}° 2θ.` };
  }
  if (!(Number.isFinite(r.start) && Math.abs(r.start) < 360)) {
    return { error: `The raw file's ${nth} range states an impossible start angle of ${r.start}°.` };
  }
  const end = r.dataOffset + r.steps * r.recordSize;
  if (end > bytes.length) {
    return {
      error: `The raw file ends before its ${nth} range's data: the range needs ${r.steps * r.recordSize} bytes from byte ${r.dataOffset}, but the file has ${bytes.length} bytes.`,
    };
  }
  return null;
}

/** At most this many ranges are walked (a damaged "more ranges follow" flag must not loop forever). */
const MAX_RANGES = 10_000;

// ——— Version 1: "RAW ", ranges of 152-byte headers, each followed by its counts ———

function version1(bytes: Uint8Array, view: DataView): Layout | Refusal {
  const ranges: Range[] = [];
  const rawMark = view.getUint32(0, true); // "RAW " read as a number; later ranges may repeat it
  let p = 4;
  let more = true;
  while (more && ranges.length < MAX_RANGES) {
    const k = ranges.length;
    if (k > 0 && p + 4 <= bytes.length && view.getUint32(p, true) === rawMark) p += 4;
    const short = endsEarly(bytes, p + 152, `${ordinal(k + 1)} range's header`);
    if (short) return short;
    const range: Range = {
      steps: view.getUint32(p, true),
      timePerStep: stated(float32Value(view, p + 4)),
      step: float32Value(view, p + 8),
      start: float32Value(view, p + 20),
      sampleName: fixedText(bytes, p + 36, 32) || undefined,
      kAlpha1: statedWavelength(float32Value(view, p + 68)),
      kAlpha2: statedWavelength(float32Value(view, p + 72)),
      dataOffset: p + 152,
      recordSize: 4,
    };
    const bad = checkRange(bytes, range, k);
    if (bad) return bad;
    ranges.push(range);
    more = view.getUint32(p + 148, true) !== 0;
    p = range.dataOffset + 4 * range.steps;
  }
  return { ranges, metadata: { probe: "x-ray" } };
}

// ——— Version 2: "RAW2", a 256-byte file header, ranges with their own header length ———

function version2(bytes: Uint8Array, view: DataView): Layout | Refusal {
  const short = endsEarly(bytes, 256, "file header");
  if (short) return short;
  const count = view.getUint16(4, true);
  const metadata: ScanMetadata = {
    probe: "x-ray",
    measuredAt: isoDate(fixedText(bytes, 168, 20), "mdy"),
    anode: anodeSymbol(fixedText(bytes, 188, 2)),
    kAlpha1: statedWavelength(float32Value(view, 190)),
    kAlpha2: statedWavelength(float32Value(view, 194)),
    kAlpha2Ratio: stated(float32Value(view, 198), 1.5),
    kBeta: statedWavelength(float32Value(view, 206)),
  };
  const ranges: Range[] = [];
  let p = 256;
  for (let k = 0; k < count; k++) {
    const head = endsEarly(bytes, p + 48, `${ordinal(k + 1)} range's header`);
    if (head) return head;
    const headerLength = view.getUint16(p, true);
    if (headerLength < 48) {
      return { error: `The raw file's ${ordinal(k + 1)} range gives a header length of ${headerLength} bytes, less than the 48 its layout needs.` };
    }
    const range: Range = {
      steps: view.getUint16(p + 2, true),
      timePerStep: stated(float32Value(view, p + 8)),
      step: float32Value(view, p + 12),
      start: float32Value(view, p + 16),
      dataOffset: p + headerLength,
      recordSize: 4,
    };
    const bad = checkRange(bytes, range, k);
    if (bad) return bad;
    ranges.push(range);
    p = range.dataOffset + 4 * range.steps;
  }
  return { ranges, metadata };
}

// ——— Version 3: "RAW1.01", a 712-byte file header, ranges of at least 260-byte headers ———

function version3(bytes: Uint8Array, view: DataView): Layout | Refusal {
  const short = endsEarly(bytes, 712, "file header");
  if (short) return short;
  const count = view.getUint32(12, true);
  if (count > MAX_RANGES) return { error: `The raw file states ${count} ranges, which cannot be.` };
  const slits: ScanSetting[] = [];
  for (const [offset, name] of [
    [568, "fixed divergence slit"],
    [584, "fixed anti-scatter slit"],
    [588, "fixed detector slit"],
  ] as const) {
    const value = stated(float32Value(view, offset), 1000);
    if (value !== undefined) slits.push({ name, value: `${value} (the file gives no unit)` });
  }
  const metadata: ScanMetadata = {
    probe: "x-ray",
    measuredAt: isoDate(`${fixedText(bytes, 16, 10)} ${fixedText(bytes, 26, 10)}`, "mdy"),
    sampleName: fixedText(bytes, 326, 60) || undefined,
    anode: anodeSymbol(fixedText(bytes, 608, 4)),
    kAlpha1: statedWavelength(view.getFloat64(624, true)),
    kAlpha2: statedWavelength(view.getFloat64(632, true)),
    kBeta: statedWavelength(view.getFloat64(640, true)),
    kAlpha2Ratio: stated(view.getFloat64(648, true), 1.5),
    slits: slits.length > 0 ? slits : undefined,
  };
  const ranges: Range[] = [];
  let p = 712;
  for (let k = 0; k < count; k++) {
    const nth = ordinal(k + 1);
    const head = endsEarly(bytes, p + 260, `${nth} range's header`);
    if (head) return head;
    const headerLength = view.getUint32(p, true);
    if (headerLength < 260) {
      return { error: `The raw file's ${nth} range gives a header length of ${headerLength} bytes, less than the 260 its layout needs.` };
    }
    const varying = view.getUint32(p + 248, true);
    const stored = view.getUint32(p + 252, true);
    const extra = view.getUint32(p + 256, true);
    // A record is the float32 count, followed by a float64 measured 2θ when the range says 2θ varies per point.
    const recordSize = stored >= 4 && stored % 4 === 0 && stored <= 64 ? stored : 4;
    const range: Range = {
      steps: view.getUint32(p + 4, true),
      start: view.getFloat64(p + 16, true),
      step: view.getFloat64(p + 176, true),
      timePerStep: stated(float32Value(view, p + 192)),
      tubeVoltageKv: stated(view.getUint32(p + 224, true), 1000),
      tubeCurrentMa: stated(view.getUint32(p + 228, true), 10_000),
      dataOffset: p + headerLength + extra,
      recordSize,
      measuredOffset: (varying & 1) === 1 && recordSize >= 12 ? 4 : undefined,
    };
    if (extra > bytes.length) {
      return { error: `The raw file's ${nth} range states a supplementary header of ${extra} bytes, longer than the file.` };
    }
    const bad = checkRange(bytes, range, k);
    if (bad) return bad;
    ranges.push(range);
    p = range.dataOffset + range.steps * range.recordSize;
  }
  return { ranges, metadata };
}

// ——— Version 4: "RAW4.00", a 61-byte header, typed records, then ranges of 160-byte headers ———

function version4(bytes: Uint8Array, view: DataView): Layout | Refusal {
  const short = endsEarly(bytes, 61, "file header");
  if (short) return short;
  const metadata: ScanMetadata = {
    probe: "x-ray",
    measuredAt: isoDate(`${fixedText(bytes, 12, 12)} ${fixedText(bytes, 24, 10)}`, "mdy"),
  };
  const texts = new Map<string, string>();
  let p = 61;
  // Header records: kind, length, content. Kind 0 or 160 starts the first range.
  for (;;) {
    const head = endsEarly(bytes, p + 4, "header records");
    if (head) return head;
    const kind = view.getUint32(p, true);
    if (kind === 0 || kind === 160) break;
    const more = endsEarly(bytes, p + 8, "header records");
    if (more) return more;
    const length = view.getUint32(p + 4, true);
    if (length < 8) return { error: `The raw file's header has a record of ${length} bytes, which cannot be.` };
    const inside = endsEarly(bytes, p + length, "header records");
    if (inside) return inside;
    if (kind === 10 && length >= 36) {
      texts.set(fixedText(bytes, p + 12, 24).toUpperCase(), fixedText(bytes, p + 36, length - 36));
    } else if (kind === 30 && length >= 120) {
      metadata.kAlpha1 = statedWavelength(view.getFloat64(p + 80, true));
      metadata.kAlpha2 = statedWavelength(view.getFloat64(p + 88, true));
      metadata.kBeta = statedWavelength(view.getFloat64(p + 96, true));
      metadata.kAlpha2Ratio = stated(view.getFloat64(p + 104, true), 1.5);
      metadata.anode = anodeSymbol(fixedText(bytes, p + 116, 4));
    }
    p += length;
  }
  metadata.sampleName = texts.get("SAMPLEID") || texts.get("SAMPLE_ID") || texts.get("SAMPLENAME") || undefined;

  const ranges: Range[] = [];
  while (ranges.length < MAX_RANGES) {
    const k = ranges.length;
    const nth = ordinal(k + 1);
    const head = endsEarly(bytes, p + 160, `${nth} range's header`);
    if (head) return head;
    const datum = view.getUint32(p + 136, true);
    const extra = view.getUint32(p + 140, true);
    if (extra > bytes.length) {
      return { error: `The raw file's ${nth} range states a header extension of ${extra} bytes, longer than the file.` };
    }
    const range: Range = {
      scanType: fixedText(bytes, p + 32, 24) || undefined,
      start: view.getFloat64(p + 72, true),
      step: view.getFloat64(p + 80, true),
      steps: view.getUint32(p + 88, true),
      timePerStep: stated(float32Value(view, p + 92)),
      tubeVoltageKv: stated(float32Value(view, p + 100), 1000),
      tubeCurrentMa: stated(float32Value(view, p + 104), 10_000),
      dataOffset: p + 160 + extra,
      recordSize: datum >= 4 && datum % 4 === 0 && datum <= 64 ? datum : 4,
    };
    const bad = checkRange(bytes, range, k);
    if (bad) return bad;
    ranges.push(range);
    p = range.dataOffset + range.steps * range.recordSize;
    if (p + 4 > bytes.length) break;
    const next = view.getUint32(p, true);
    if (next !== 0 && next !== 160) break;
  }
  return { ranges, metadata };
}
