// Reads a delivered powder scan into arrays: files that are plainly not scans are named first, then every reader of
// the registry (readers/index.ts) says how sure it is of the file and the surest reads it, then the checks every
// scan must pass. Formats, their marks and the sources of their layouts: docs/scan-formats.md.
//
// Every refusal is one plain sentence, because it is shown as-is to the lab that uploaded the file.

import { foreignFile, unknownBinary } from "./readers/foreign";
import { chooseReader, READERS } from "./readers/index";
import { scanSource } from "./readers/source";
import type { ReadScan, ScanMetadata } from "./readers/types";

export { cifNumber } from "./readers/pdcif";
export type { ScanMetadata } from "./readers/types";

export interface Scan {
  /** Degrees 2θ, strictly ascending. */
  twoTheta: Float64Array;
  intensity: Float64Array;
  /** Standard uncertainty of each intensity, when the file gives one. */
  esd?: Float64Array;
  /** Å, when the file states it: its single wavelength, or Kα1. */
  wavelength?: number;
  /** Id of the reader that read the file ("xy", "pdcif", "gsas", …). */
  format: string;
  /** The format as people read it ("GSAS standard powder data"). */
  formatLabel: string;
  /** What the file states about the measurement. */
  metadata: ScanMetadata;
  warnings: string[];
}

/** A scan as the check takes it: what parseScan returns, or arrays made in code (format and metadata optional). */
export type CheckableScan = Omit<Scan, "format" | "formatLabel" | "metadata"> & Partial<Pick<Scan, "format" | "formatLabel" | "metadata">>;

export type ParseScanResult = { ok: true; scan: Scan } | { ok: false; error: string };

export interface ParseScanOptions {
  /** The uploaded file's name, for messages only (and as a last tie-breaker between readers). */
  fileName?: string;
  /** Size limit in bytes (for a string, its length in characters: one byte per character for ASCII). */
  maxBytes?: number;
}

export const DEFAULT_MAX_BYTES = 50 * 1024 * 1024;
/** Fewer points than this cannot hold a handful of peaks with five points across each (common practice). */
export const MIN_POINTS = 50;
/** Points with a number that is not finite beyond this share make the file unusable rather than patchy. */
const MAX_MISSING_SHARE = 0.2;

export function parseScan(input: string | Uint8Array, options: ParseScanOptions = {}): ParseScanResult {
  const maxBytes = options.maxBytes ?? DEFAULT_MAX_BYTES;
  if (input.length > maxBytes) {
    return fail(`The file is larger than the ${formatSize(maxBytes)} limit for a scan.`);
  }
  if (isEmpty(input)) return fail("The file is empty.");
  const source = scanSource(input, options.fileName);
  const foreign = foreignFile(source);
  if (foreign) return fail(foreign);
  const reader = chooseReader(source);
  if (!reader) return fail(unknownBinary(READERS.map((r) => r.label)));
  let read: ReadScan | { error: string };
  try {
    read = reader.read(source);
  } catch {
    return fail(`The file looks like ${reader.label} but could not be read.`);
  }
  if ("error" in read) return fail(read.error);
  return finishScan(read, reader.format, reader.label);
}

function fail(error: string): ParseScanResult {
  return { ok: false, error };
}

function formatSize(bytes: number): string {
  const mb = bytes / (1024 * 1024);
  return mb >= 1 ? `${+mb.toFixed(1)} MB` : `${Math.round(bytes / 1024)} kB`;
}

/** Nothing but blanks, line ends, NULs and byte-order marks (checked without decoding a large file). */
function isEmpty(input: string | Uint8Array): boolean {
  if (typeof input === "string") return input.trim().length === 0;
  for (let i = 0; i < input.length; i++) {
    const b = input[i];
    if (b !== 32 && b !== 9 && b !== 10 && b !== 13 && b !== 0 && b !== 0xef && b !== 0xbb && b !== 0xbf && b !== 0xff && b !== 0xfe) return false;
  }
  return true;
}

// ——— Checks common to every format ———

function finishScan(read: ReadScan, format: string, formatLabel: string): ParseScanResult {
  const warnings = [...read.warnings];
  // Readers that return typed arrays hand them over as they are (each reader's arrays are its own).
  let twoTheta = read.twoTheta instanceof Float64Array ? read.twoTheta : Float64Array.from(read.twoTheta);
  let intensity = read.intensity instanceof Float64Array ? read.intensity : Float64Array.from(read.intensity);
  let esd = read.esd === undefined ? undefined : read.esd instanceof Float64Array ? read.esd : Float64Array.from(read.esd);
  if (intensity.length !== twoTheta.length || (esd && esd.length !== twoTheta.length)) {
    return fail("The file's angles and intensities differ in number, so they cannot be paired.");
  }
  if (twoTheta.length === 0) return fail("The file has no numeric columns of 2θ and intensity.");
  let missing = 0;
  for (let i = 0; i < twoTheta.length; i++) if (!Number.isFinite(twoTheta[i]) || !Number.isFinite(intensity[i])) missing++;
  if (missing > 0) {
    if (missing > twoTheta.length * MAX_MISSING_SHARE) {
      return fail(`${Math.round((100 * missing) / twoTheta.length)}% of the points have no number; the scan is unusable.`);
    }
    const keep = twoTheta.map((t, i) => (Number.isFinite(t) && Number.isFinite(intensity[i]) ? 1 : 0));
    twoTheta = twoTheta.filter((_, i) => keep[i]);
    intensity = intensity.filter((_, i) => keep[i]);
    esd = esd?.filter((_, i) => keep[i]);
    warnings.push(`${missing} points without a number were dropped.`);
  }
  if (twoTheta.length < MIN_POINTS) {
    return fail(`The scan has ${twoTheta.length} points; at least ${MIN_POINTS} are needed.`);
  }
  if (twoTheta[0] > twoTheta[twoTheta.length - 1]) {
    twoTheta.reverse();
    intensity.reverse();
    esd?.reverse();
    warnings.push("The scan ran from high to low 2θ and was reversed.");
  }
  for (let i = 1; i < twoTheta.length; i++) {
    if (twoTheta[i] === twoTheta[i - 1]) {
      return fail(`The 2θ value ${twoTheta[i]}° appears twice; every angle must appear once.`);
    }
    if (twoTheta[i] < twoTheta[i - 1]) {
      return fail(`The 2θ values are out of order at row ${i + 1} (${twoTheta[i]}° after ${twoTheta[i - 1]}°); a scan must run in one direction.`);
    }
  }
  if (twoTheta[twoTheta.length - 1] >= 180 || twoTheta[twoTheta.length - 1] <= 0) {
    return fail("The first column is not 2θ in degrees: its values must lie between 0° and 180°.");
  }
  let start = 0;
  while (start < twoTheta.length && twoTheta[start] <= 0) start++;
  if (start > 0) {
    warnings.push(`${start} points at 2θ ≤ 0° were dropped.`);
    twoTheta = twoTheta.slice(start);
    intensity = intensity.slice(start);
    esd = esd?.slice(start);
    if (twoTheta.length < MIN_POINTS) {
      return fail(`The scan has ${twoTheta.length} points above 0° 2θ; at least ${MIN_POINTS} are needed.`);
    }
  }
  let min = Infinity;
  let max = -Infinity;
  let negative = 0;
  for (const y of intensity) {
    if (y < min) min = y;
    if (y > max) max = y;
    if (y < 0) negative++;
  }
  if (!(max > min)) return fail(`The intensity is the same (${max}) at every angle; the scan has no peaks.`);
  if (negative > intensity.length * 0.05) {
    warnings.push("More than 5% of the intensities are negative; the scan may be background-subtracted.");
  }
  const metadata = read.metadata;
  return {
    ok: true,
    scan: {
      twoTheta,
      intensity,
      esd,
      wavelength: metadata.wavelength ?? metadata.kAlpha1,
      format,
      formatLabel,
      metadata,
      warnings,
    },
  };
}
