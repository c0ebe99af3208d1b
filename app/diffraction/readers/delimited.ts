// Two- and three-column text (2θ, intensity, optional esd) and CSV with a header row naming the columns: blank,
// tab, comma or semicolon separated, decimal points or decimal commas, comment and title lines before the data.
// One reading serves both; the two readers differ only in how the file is labelled (docs/scan-formats.md).
import { metadataFromHeader } from "./header-metadata";
import { headLines, type NumberLayout, numberLayout, scanNumbers, splitLines } from "./text";
import type { ReadScan, ScanReader, ScanSource } from "./types";

/** Rows with a missing number beyond this share make the file unusable rather than patchy. */
const MAX_MISSING_SHARE = 0.2;

const NUMBER = /^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$/;
const MISSING = /^([+-]?nan|[+-]?inf(inity)?|null|none|na|n\/a|-+|\?)$/i;
const COMMENT = /^\s*(#|!|;|\/\/|%|\*)/;

type Token = number | "missing" | "text";

interface Dialect {
  split: RegExp;
  decimalComma: boolean;
  /** The same reading for scanNumbers: semicolons and tabs separate in every dialect, blanks where split says. */
  layout: NumberLayout;
}

// Tried in order; the first that reads the data lines into a steady column count wins. A comma followed
// by digits and then a space or semicolon is a decimal comma ("12,5 340", "12,5;340"); otherwise commas
// separate fields.
const DIALECTS: Dialect[] = [
  { split: /\s*;\s*|\t+/, decimalComma: true, layout: numberLayout(";\t", ",", MISSING) },
  { split: /\s*[,;]\s*|\s+/, decimalComma: false, layout: numberLayout(" \t,;", ".", MISSING) },
  { split: /\s*;\s*|\s+/, decimalComma: true, layout: numberLayout(" \t;", ",", MISSING) },
];

function tokenize(line: string, dialect: Dialect): Token[] {
  // A plain loop (no callbacks): the dialect is chosen by tokenising a few hundred lines in each dialect, twice.
  const fields = line.trim().split(dialect.split);
  const tokens: Token[] = [];
  for (const f of fields) {
    if (f.length === 0) continue;
    const s = dialect.decimalComma ? f.replace(",", ".") : f;
    tokens.push(NUMBER.test(s) ? Number(s) : MISSING.test(s) ? "missing" : "text");
  }
  return tokens;
}

function isDataLine(tokens: Token[]): boolean {
  return tokens.length >= 2 && tokens.every((t) => t !== "text") && tokens.some((t) => typeof t === "number");
}

/** Not blank and not a comment; a line that starts with a digit is data, decided without a regex. */
function isContentLine(line: string): boolean {
  const c = line.charCodeAt(0);
  if (c >= 48 && c <= 57) return true;
  return line.trim().length > 0 && !COMMENT.test(line);
}

function readDelimited(text: string): ReadScan | { error: string } {
  const all = splitLines(text);
  const lines = all.filter(isContentLine);
  if (lines.length === 0) return { error: "The file has only comments and no data rows." };
  const dialect = chooseDialect(lines);
  if (!dialect) return { error: "The file has no numeric columns of 2θ and intensity." };
  const warnings: string[] = [];
  // Rows are kept flat: up to MAX_FIELDS numbers per row, with their field count.
  const MAX_FIELDS = 8;
  const values = new Float64Array(lines.length * MAX_FIELDS);
  const widths = new Int16Array(lines.length);
  // One line's fields (NaN for a missing value); scanNumbers returns below zero when a field is text.
  const fields: number[] = new Array(64);
  let nRows = 0;
  let headerLine: string | null = null;
  let textLines = 0;
  for (const line of lines) {
    const count = scanNumbers(line, 0, line.length, dialect.layout, fields);
    let numbers = false;
    for (let f = 0; f < count && !numbers; f++) numbers = !Number.isNaN(fields[f]);
    numbers &&= count >= 2;
    if (numbers && count <= MAX_FIELDS) {
      for (let f = 0; f < count; f++) values[nRows * MAX_FIELDS + f] = fields[f];
      widths[nRows++] = count;
    } else {
      if (nRows === 0) headerLine = line;
      textLines++;
    }
  }
  const width = mostCommonWidth(widths.subarray(0, nRows));
  const mapping = headerLine ? columnsFromHeader(headerLine, width) : null;
  const iTheta = mapping?.twoTheta ?? 0;
  const iIntensity = mapping?.intensity ?? 1;
  let iEsd = mapping ? mapping.esd : width >= 3 ? 2 : null;
  if (!mapping && width > 3) warnings.push(`Columns after the third were ignored (${width} columns found).`);
  let kept = 0;
  for (let r = 0; r < nRows; r++) if (widths[r] === width) kept++;
  if (nRows - kept > 0) warnings.push(`${nRows - kept} rows with a different number of columns were skipped.`);
  if (textLines > 0 && nRows > 0 && textLines > nRows) {
    return { error: "Most lines of the file are text, not numeric columns of 2θ and intensity." };
  }
  // Straight into typed arrays: the finishing checks take them without another copy of 100 000 numbers.
  const twoTheta = new Float64Array(kept);
  const intensity = new Float64Array(kept);
  const esd = new Float64Array(kept);
  let m = 0;
  let missing = 0;
  for (let r = 0; r < nRows; r++) {
    if (widths[r] !== width) continue;
    const o = r * MAX_FIELDS;
    const t = values[o + iTheta];
    const y = values[o + iIntensity];
    const s = iEsd === null ? 1 : values[o + iEsd];
    if (Number.isNaN(t) || Number.isNaN(y) || Number.isNaN(s)) {
      missing++;
      continue;
    }
    twoTheta[m] = t;
    intensity[m] = y;
    esd[m++] = s;
  }
  if (kept > 0 && missing > kept * MAX_MISSING_SHARE) {
    return { error: `${Math.round((100 * missing) / kept)}% of the rows have a missing number (NaN); the scan is unusable.` };
  }
  if (missing > 0) warnings.push(`${missing} rows with a missing number were dropped.`);
  let esdUsable = iEsd !== null;
  for (let r = 0; r < m && esdUsable; r++) esdUsable = esd[r] > 0 && Number.isFinite(esd[r]);
  if (iEsd !== null && !esdUsable) {
    warnings.push("The third column is not a positive uncertainty in every row and was ignored.");
    iEsd = null;
  }
  return {
    twoTheta: twoTheta.subarray(0, m),
    intensity: intensity.subarray(0, m),
    esd: iEsd === null ? undefined : esd.subarray(0, m),
    metadata: metadataFromHeader(headerLines(all)),
    warnings,
  };
}

/** The lines before the first data row (comments, a title, "key: value" lines), at most a few hundred. */
function headerLines(lines: string[]): string[] {
  const out: string[] = [];
  for (let i = 0; i < lines.length && i < 500; i++) {
    const c = lines[i].trimStart().charCodeAt(0);
    if ((c >= 48 && c <= 57) || c === 45 || c === 43 || c === 46) break;
    out.push(lines[i]);
  }
  return out;
}

function dialectSeparatesByComma(lines: string[], dialect: Dialect): boolean {
  const sample = lines.slice(0, 50).join("\n");
  return /;/.test(sample) || (!dialect.decimalComma && /,/.test(sample));
}

function chooseDialect(lines: string[]): Dialect | null {
  const sample = sampleLines(lines, 200);
  let best: { dialect: Dialect; score: number } | null = null;
  for (const dialect of DIALECTS) {
    const rows = sample.map((l) => tokenize(l, dialect)).filter(isDataLine);
    if (rows.length === 0) continue;
    const width = mostCommonWidth(rows.map((r) => r.length));
    const steady = rows.filter((r) => r.length === width).length;
    // A reading that splits "12,5" into two numbers repeats the integer part as 2θ; penalise it.
    const firsts = rows.filter((r) => r.length === width).map((r) => r[0]);
    let repeats = 0;
    for (let i = 1; i < firsts.length; i++) if (firsts[i] === firsts[i - 1]) repeats++;
    const score = steady - repeats - (width > 3 ? 0.5 * steady : 0);
    if (!best || score > best.score) best = { dialect, score };
  }
  return best && best.score > 0 ? best.dialect : null;
}

function sampleLines(lines: string[], n: number): string[] {
  if (lines.length <= n) return lines;
  const head = lines.slice(0, n / 2);
  const step = Math.floor(lines.length / (n / 2));
  const spread: string[] = [];
  for (let i = 0; i < lines.length && spread.length < n / 2; i += step) spread.push(lines[i]);
  return head.concat(spread);
}

/** The most frequent field count, the smallest of equally frequent ones (0 for none). */
function mostCommonWidth(widths: ArrayLike<number>): number {
  // Field counts are small whole numbers: counted in an array, not a map (one look-up per row of the scan).
  const counts: number[] = [];
  for (let i = 0; i < widths.length; i++) {
    const w = widths[i];
    if (!(Number.isInteger(w) && w >= 0 && w < 1024)) return mostCommonWidthOfAny(widths);
    while (counts.length <= w) counts.push(0);
    counts[w]++;
  }
  let width = 0;
  let most = -1;
  for (let w = 0; w < counts.length; w++) if (counts[w] > 0 && counts[w] > most) [width, most] = [w, counts[w]];
  return width;
}

function mostCommonWidthOfAny(widths: ArrayLike<number>): number {
  const counts = new Map<number, number>();
  for (let i = 0; i < widths.length; i++) counts.set(widths[i], (counts.get(widths[i]) ?? 0) + 1);
  let width = 0;
  let most = -1;
  for (const [w, c] of counts) if (c > most || (c === most && w < width)) [width, most] = [w, c];
  return width;
}

interface ColumnMapping {
  twoTheta: number;
  intensity: number;
  esd: number | null;
}

const THETA_NAME = /(2\s*-?\s*th|two\s*-?\s*theta|2θ|angle|tth|^pos)/i;
const INTENSITY_NAME = /(intens|count|cps|^i$|^i[_ ]?obs|^y[_ ]?obs|^y$|^int)/i;
const ESD_NAME = /(esd|sigma|err|uncert|^su$|^s\.u|std|^u\()/i;

function columnsFromHeader(line: string, width: number): ColumnMapping | null {
  const bare = line.replace(/^\s*[#!;]\s*/, "").trim();
  // A header is split on its own separator: semicolons or tabs, else commas, else blanks.
  const separator = /[;\t]/.test(bare) ? /\s*[;\t]\s*/ : /,/.test(bare) ? /\s*,\s*/ : /\s+/;
  const names = bare.split(separator).map((n) => n.trim().replace(/^["']|["']$/g, ""));
  if (names.length < 2 || names.length !== width) return null;
  const twoTheta = names.findIndex((n) => THETA_NAME.test(n));
  const esd = names.findIndex((n) => ESD_NAME.test(n));
  const intensity = names.findIndex((n, i) => i !== twoTheta && i !== esd && INTENSITY_NAME.test(n));
  if (twoTheta < 0 || intensity < 0) return null;
  return { twoTheta, intensity, esd: esd >= 0 ? esd : null };
}

// ——— Which of the two it is (decided from the head of the file, cheaply) ———

type Kind = "xy" | "csv" | "fallback" | "binary";

const kinds = new WeakMap<ScanSource, Kind>();

function kindOf(source: ScanSource): Kind {
  let kind = kinds.get(source);
  if (kind === undefined) {
    kind = classify(source.text());
    kinds.set(source, kind);
  }
  return kind;
}

function classify(text: string): Kind {
  if (looksBinary(text)) return "binary";
  const lines = headLines(text, 400).filter(isContentLine);
  const dialect = lines.length > 0 ? chooseDialect(lines) : null;
  if (!dialect) return "fallback";
  const fields: number[] = new Array(64);
  const widths: number[] = [];
  let headerLine: string | null = null;
  for (const line of lines) {
    const count = scanNumbers(line, 0, line.length, dialect.layout, fields);
    let numbers = false;
    for (let f = 0; f < count && !numbers; f++) numbers = !Number.isNaN(fields[f]);
    if (numbers && count >= 2) widths.push(count);
    else if (widths.length === 0) headerLine = line;
  }
  const mapping = headerLine ? columnsFromHeader(headerLine, mostCommonWidth(widths)) : null;
  return mapping !== null || dialectSeparatesByComma(lines, dialect) ? "csv" : "xy";
}

/** NUL bytes, or many control characters (and the replacement character a failed decode leaves). */
function looksBinary(text: string): boolean {
  const sample = text.slice(0, 65536);
  if (sample.includes("\u0000")) return true;
  let odd = 0;
  for (let i = 0; i < sample.length; i++) {
    const c = sample.charCodeAt(i);
    if ((c < 32 && c !== 9 && c !== 10 && c !== 13 && c !== 12 && c !== 0x1a) || c === 0xfffd) odd++;
  }
  return odd > sample.length * 0.05;
}

export const xyReader: ScanReader = {
  format: "xy",
  label: "Two/three-column text",
  // Any text file with numeric columns; the lowest claim, so that every layout with its own marks wins over it.
  // Text of no known layout also lands here, so that it is refused with a sentence about columns.
  sniff: (source) => {
    const kind = kindOf(source);
    return kind === "xy" ? 0.2 : kind === "fallback" ? 0.05 : 0;
  },
  read: (source) => readDelimited(source.text()),
};

export const csvReader: ScanReader = {
  format: "csv",
  label: "CSV with a header row",
  sniff: (source) => (kindOf(source) === "csv" ? 0.2 : 0),
  read: (source) => readDelimited(source.text()),
};
