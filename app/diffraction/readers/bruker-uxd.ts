// Bruker/Siemens UXD text: `;` comment lines, file-wide `_KEY=VALUE` lines, then per range a `_DRIVE=…` line,
// the range's own `_KEY=VALUE` lines (`_START`, `_STEPSIZE`, `_STEPTIME`, …) and a data keyword: `_COUNTS` or
// `_CPS` (intensities only, angles from _START and _STEPSIZE) or `_2THETACOUNTS`, `_2THETACPS`,
// `_2THETACOUNTSTIME` (angle and intensity a line). Peak lists (`_D-I`, `_2THETA-I`) are not scans
// (docs/scan-formats.md#bruker-uxd).
import { anodeSymbol, evenlySpaced, headLines, isBlankLine, isoDate, numbersOfLine, splitLines, toNumber } from "./text";
import type { ReadScan, ScanMetadata, ScanReader, ScanSetting, ScanSource } from "./types";

interface Range {
  keys: Map<string, string>;
  kind: "counts" | "cps" | "2theta-counts" | "2theta-cps" | null;
  values: number[];
}

const DATA_KEY = /^_(2THETACOUNTSTIME|2THETACOUNTS|2THETACPS|COUNTS|CPS)\b/i;

function sniff(source: ScanSource): number {
  const head = headLines(source.text(), 200);
  const first = head.find((l) => !isBlankLine(l) && !l.trimStart().startsWith(";"));
  if (first && /^\s*_FILEVERSION\b/i.test(first)) return 0.95;
  const keys = head.filter((l) => /^_[A-Z0-9]+\s*=/i.test(l)).length;
  return keys >= 2 && head.some((l) => DATA_KEY.test(l)) ? 0.9 : 0;
}

function unquote(v: string): string {
  const t = v.trim();
  return /^'.*'$|^".*"$/.test(t) ? t.slice(1, -1).trim() : t;
}

function read(source: ScanSource): ReadScan | { error: string } {
  const fileKeys = new Map<string, string>();
  const ranges: Range[] = [];
  let range: Range | null = null;
  let inPeakList = false;
  const scratch: number[] = [];
  const lines = splitLines(source.text());
  for (let i = 0; i < lines.length; i++) {
    const line = lines[i].trim();
    if (line.length === 0 || line.startsWith(";")) continue;
    if (line.startsWith("_")) {
      const data = DATA_KEY.exec(line);
      if (/^_DRIVE\b/i.test(line)) {
        range = { keys: new Map(), kind: null, values: [] };
        ranges.push(range);
      }
      if (data) {
        if (!range) {
          range = { keys: new Map(), kind: null, values: [] };
          ranges.push(range);
        }
        const word = data[1].toUpperCase();
        range.kind = word === "COUNTS" ? "counts" : word === "CPS" ? "cps" : word === "2THETACPS" ? "2theta-cps" : "2theta-counts";
        inPeakList = false;
        continue;
      }
      if (/^_(D-I|2THETA-I)\b/i.test(line)) {
        inPeakList = true;
        continue;
      }
      const eq = line.indexOf("=");
      if (eq > 0) (range ?? { keys: fileKeys }).keys.set(line.slice(1, eq).trim().toUpperCase(), unquote(line.slice(eq + 1)));
      continue;
    }
    if (inPeakList || !range || !range.kind) continue;
    const count = numbersOfLine(line, scratch);
    if (count < 0) return { error: `Line ${i + 1} of the UXD file is neither a keyword nor numbers: "${line.slice(0, 40)}".` };
    if (range.kind.startsWith("2theta")) {
      // Angle and intensity (and, for _2THETACOUNTSTIME, the counting time): the first two numbers.
      if (count >= 2) range.values.push(scratch[0], scratch[1]);
    } else for (let f = 0; f < count; f++) range.values.push(scratch[f]);
  }
  const scans = ranges.filter((r) => r.kind && r.values.length > 0);
  if (scans.length === 0) return { error: "The UXD file has no data range (_COUNTS, _CPS or _2THETACOUNTS)." };
  const taken = scans[0];
  const warnings: string[] = [];
  const key = (k: string) => taken.keys.get(k) ?? fileKeys.get(k);
  const meta = metadataOf(key, [...fileKeys.keys(), ...taken.keys.keys()]);
  if (scans.length > 1) {
    warnings.push(`The UXD file holds ${scans.length} ranges; the first was read.`);
    meta.scansInFile = scans.length;
    meta.scanTaken = 1;
  }
  meta.intensityUnit = /cps/.test(taken.kind!) ? "counts per second" : "counts";
  const start = key("START") ?? key("2THETA");
  const step = key("STEPSIZE");
  if (taken.kind!.startsWith("2theta")) {
    const n = taken.values.length / 2;
    const column = new Float64Array(n);
    const intensity = new Float64Array(n);
    for (let i = 0; i < n; i++) {
      column[i] = taken.values[2 * i];
      intensity[i] = taken.values[2 * i + 1];
    }
    const grid = start !== undefined && step !== undefined ? roundedGrid(column, start, step) : null;
    const twoTheta = grid ?? column;
    if (grid) {
      warnings.push("The 2θ column is printed with fewer decimals than the step; the angles were taken from _START and _STEPSIZE, which it matches.");
    }
    return { twoTheta, intensity, metadata: meta, warnings };
  }
  if (start === undefined || step === undefined || !(toNumber(step) !== 0)) {
    return { error: "The UXD range gives intensities without _START and _STEPSIZE, so their angles are unknown." };
  }
  return {
    twoTheta: evenlySpaced(start, step, taken.values.length),
    intensity: Float64Array.from(taken.values),
    metadata: meta,
    warnings,
  };
}

/** Digits after the decimal point of a number as JavaScript prints it shortest. */
function printedDecimals(x: number): number {
  const t = String(x);
  if (t.includes("e")) return 12;
  const p = t.indexOf(".");
  return p < 0 ? 0 : t.length - p - 1;
}

/**
 * Some converters print the angle column with two decimals above 10° although the step has more: when every angle
 * is _START + n·_STEPSIZE rounded to its printed decimals, and some differ from it, the exact grid is returned.
 */
function roundedGrid(x: Float64Array, start: string, step: string): Float64Array | null {
  const grid = evenlySpaced(start, step, x.length);
  let differs = false;
  for (let i = 0; i < x.length; i++) {
    const d = Math.abs(x[i] - grid[i]);
    if (d > 0.5 * 10 ** -printedDecimals(x[i]) + 1e-9) return null;
    if (d > 1e-9) differs = true;
  }
  return differs ? grid : null;
}

const SLIT_KEYS = /DIVSLIT|ANTISLIT|DETSLIT|SAMPLESLIT|SOLLER|VARDIVERGENCE|DETECTORSLIT|MONOCHROMATOR|BETA_FILTER/;

function metadataOf(key: (k: string) => string | undefined, names: string[]): ScanMetadata {
  const num = (k: string) => {
    const v = toNumber(key(k));
    return Number.isFinite(v) ? v : undefined;
  };
  const positive = (k: string) => {
    const v = num(k);
    return v !== undefined && v > 0 ? v : undefined;
  };
  const meta: ScanMetadata = { probe: "x-ray" };
  meta.anode = anodeSymbol(key("ANODE"));
  meta.kAlpha1 = positive("WL1");
  meta.kAlpha2 = positive("WL2");
  meta.kBeta = positive("WL3");
  meta.kAlpha2Ratio = positive("WLRATIO");
  meta.tubeVoltageKv = positive("KV");
  meta.tubeCurrentMa = positive("MA");
  meta.scanAxis = key("DRIVE");
  const mode = key("STEPMODE");
  if (mode) meta.scanMode = /^c/i.test(mode) ? "continuous" : /^s/i.test(mode) ? "step" : mode;
  meta.step = positive("STEPSIZE");
  meta.timePerStep = positive("STEPTIME");
  meta.sampleName = key("SAMPLE") || undefined;
  meta.measuredAt = isoDate(key("DATEMEASURED"));
  meta.instrument = key("SITE") || key("INSTRUMENT") || undefined;
  const slits: ScanSetting[] = [];
  for (const name of new Set(names)) {
    if (!SLIT_KEYS.test(name)) continue;
    const value = key(name);
    if (value !== undefined && value !== "") slits.push({ name, value });
  }
  if (slits.length > 0) meta.slits = slits;
  for (const k of Object.keys(meta) as (keyof ScanMetadata)[]) if (meta[k] === undefined) delete meta[k];
  return meta;
}

export const brukerUxdReader: ScanReader = {
  format: "uxd",
  label: "UXD text scan",
  sniff,
  read,
};
