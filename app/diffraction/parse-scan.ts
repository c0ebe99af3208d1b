// Reads a delivered powder scan (two/three-column text, CSV with a header, or pdCIF) into arrays.
//
// Every refusal is one plain sentence, because it is shown as-is to the lab that uploaded the file.

export type ScanFormat = "xy" | "csv" | "pdcif";

export interface Scan {
  /** Degrees 2θ, strictly ascending. */
  twoTheta: Float64Array;
  intensity: Float64Array;
  /** Standard uncertainty of each intensity, when the file gives one. */
  esd?: Float64Array;
  /** Å, when the file states it (pdCIF `_diffrn_radiation_wavelength`). */
  wavelength?: number;
  format: ScanFormat;
  warnings: string[];
}

export type ParseScanResult = { ok: true; scan: Scan } | { ok: false; error: string };

export interface ParseScanOptions {
  fileName?: string;
  /** Size limit; the text length in characters is compared with it (one byte per character for ASCII). */
  maxBytes?: number;
}

export const DEFAULT_MAX_BYTES = 50 * 1024 * 1024;
/** Fewer points than this cannot hold a handful of peaks with five points across each (common practice). */
export const MIN_POINTS = 50;
/** Rows with a missing number beyond this share make the file unusable rather than patchy. */
const MAX_MISSING_SHARE = 0.2;

export function parseScan(text: string, options: ParseScanOptions = {}): ParseScanResult {
  const maxBytes = options.maxBytes ?? DEFAULT_MAX_BYTES;
  if (text.length > maxBytes) {
    return fail(`The file is larger than the ${formatSize(maxBytes)} limit for a scan.`);
  }
  if (text.trim().length === 0) return fail("The file is empty.");
  if (looksBinary(text)) return fail("The file is binary, not a text scan; export it as two-column text, CSV or pdCIF.");
  const body = text.charCodeAt(0) === 0xfeff ? text.slice(1) : text;
  const columns = looksLikeCif(body, options.fileName) ? readPdCif(body) : readDelimited(body);
  if ("error" in columns) return fail(columns.error);
  return finishScan(columns);
}

interface Columns {
  twoTheta: number[];
  intensity: number[];
  esd?: number[];
  wavelength?: number;
  format: ScanFormat;
  warnings: string[];
}

function fail(error: string): ParseScanResult {
  return { ok: false, error };
}

function formatSize(bytes: number): string {
  const mb = bytes / (1024 * 1024);
  return mb >= 1 ? `${+mb.toFixed(1)} MB` : `${Math.round(bytes / 1024)} kB`;
}

function looksBinary(text: string): boolean {
  const sample = text.slice(0, 65536);
  if (sample.includes("\u0000")) return true;
  let odd = 0;
  for (let i = 0; i < sample.length; i++) {
    const c = sample.charCodeAt(i);
    // Control characters other than tab/LF/CR, and the replacement character a failed UTF-8 decode leaves.
    if ((c < 32 && c !== 9 && c !== 10 && c !== 13) || c === 0xfffd) odd++;
  }
  return odd > sample.length * 0.05;
}

function looksLikeCif(text: string, fileName?: string): boolean {
  if (fileName && /\.cif$/i.test(fileName)) return true;
  return /^\s*data_\S*/m.test(text) && /(^|\s)_pd_/m.test(text);
}

// ——— Delimited text ———

const NUMBER = /^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$/;
const MISSING = /^([+-]?nan|[+-]?inf(inity)?|null|none|na|n\/a|-+|\?)$/i;
const COMMENT = /^\s*(#|!|;|\/\/|%|\*)/;

type Token = number | "missing" | "text";

interface Dialect {
  split: RegExp;
  decimalComma: boolean;
}

// Tried in order; the first that reads the data lines into a steady column count wins. A comma followed
// by digits and then a space or semicolon is a decimal comma ("12,5 340", "12,5;340"); otherwise commas
// separate fields.
const DIALECTS: Dialect[] = [
  { split: /\s*;\s*|\t+/, decimalComma: true },
  { split: /\s*[,;]\s*|\s+/, decimalComma: false },
  { split: /\s*;\s*|\s+/, decimalComma: true },
];

function tokenize(line: string, dialect: Dialect): Token[] {
  const fields = line
    .trim()
    .split(dialect.split)
    .filter((f) => f.length > 0);
  return fields.map((f) => {
    const s = dialect.decimalComma ? f.replace(",", ".") : f;
    if (NUMBER.test(s)) return Number(s);
    if (MISSING.test(s)) return "missing";
    return "text";
  });
}

function isDataLine(tokens: Token[]): boolean {
  return tokens.length >= 2 && tokens.every((t) => t !== "text") && tokens.some((t) => typeof t === "number");
}

function splitLines(text: string): string[] {
  return text.split(/\r\n|\r|\n/);
}

/**
 * A decimal number in plain or exponent notation, else NaN. Number() alone would also take "0x1f",
 * "0b1" and "Infinity"; the first two characters rule those out, and Number() rejects the rest.
 */
function plainNumber(field: string): number {
  const c0 = field.charCodeAt(0);
  const lead = (c0 >= 48 && c0 <= 57) || c0 === 43 || c0 === 45 || c0 === 46; // digit + - .
  if (!lead || field.length === 0) return NaN;
  const c1 = field.charCodeAt(1) | 32;
  if (c1 === 120 || c1 === 98 || c1 === 111 || c1 === 105) return NaN; // x b o i (hex, binary, octal, Infinity)
  const last = field.charCodeAt(field.length - 1);
  if (!((last >= 48 && last <= 57) || last === 46)) return NaN;
  return Number(field);
}

// 10^k for k ≤ 22 is exact in binary64, so integer / 10^k is the correctly rounded decimal, the same
// number Number() would give.
const POWERS_OF_TEN = Array.from({ length: 23 }, (_, k) => 10 ** k);

/**
 * The common case read without building a string: [sign] digits [point digits] with at most 15
 * significant digits; NaN for anything else (exponents, long mantissas, text), which then goes the slow way.
 */
function simpleDecimal(line: string, start: number, end: number, point: number): number {
  let i = start;
  let negative = false;
  const first = line.charCodeAt(i);
  if (first === 45 || first === 43) {
    negative = first === 45;
    i++;
  }
  let mantissa = 0;
  let digits = 0;
  let decimals = -1;
  for (; i < end; i++) {
    const c = line.charCodeAt(i);
    if (c >= 48 && c <= 57) {
      mantissa = mantissa * 10 + (c - 48);
      digits++;
      if (decimals >= 0) decimals++;
    } else if (c === point && decimals < 0) decimals = 0;
    else return NaN;
  }
  if (digits === 0 || digits > 15) return NaN;
  const value = decimals > 0 ? mantissa / POWERS_OF_TEN[decimals] : mantissa;
  return negative ? -value : value;
}

/** Whether a character code separates fields in a dialect: blanks and tabs, semicolons, commas. */
function separates(c: number, dialect: Dialect): boolean {
  if (c === 59 || c === 9) return true; // ; and tab, in every dialect
  if (c === 32) return dialect !== DIALECTS[0];
  if (c === 44) return !dialect.decimalComma;
  return false;
}

/**
 * Reads one line's fields as numbers into `out` (NaN for a missing value) without building strings per
 * token where it can; returns the number of fields, or −1 when a field is text. Same reading as tokenize.
 */
function scanLine(line: string, dialect: Dialect, out: number[]): number {
  let count = 0;
  let i = 0;
  const n = line.length;
  while (i < n) {
    while (i < n && (separates(line.charCodeAt(i), dialect) || line.charCodeAt(i) === 32)) i++;
    if (i >= n) break;
    let j = i;
    while (j < n && !separates(line.charCodeAt(j), dialect)) j++;
    let end = j;
    while (end > i && line.charCodeAt(end - 1) === 32) end--;
    const quick = simpleDecimal(line, i, end, dialect.decimalComma ? 44 : 46);
    if (!Number.isNaN(quick)) {
      out[count++] = quick;
      i = j;
      continue;
    }
    let field = line.slice(i, end);
    if (dialect.decimalComma) field = field.replace(",", ".");
    const value = plainNumber(field);
    if (!Number.isNaN(value)) out[count++] = value;
    else if (MISSING.test(field)) out[count++] = NaN;
    else return -1;
    i = j;
  }
  return count;
}

/** Not blank and not a comment; a line that starts with a digit is data, decided without a regex. */
function isContentLine(line: string): boolean {
  const c = line.charCodeAt(0);
  if (c >= 48 && c <= 57) return true;
  return line.trim().length > 0 && !COMMENT.test(line);
}

function readDelimited(text: string): Columns | { error: string } {
  const lines = splitLines(text).filter(isContentLine);
  if (lines.length === 0) return { error: "The file has only comments and no data rows." };
  const dialect = chooseDialect(lines);
  if (!dialect) return { error: "The file has no numeric columns of 2θ and intensity." };
  const warnings: string[] = [];
  // Rows are kept flat: up to MAX_FIELDS numbers per row, with their field count.
  const MAX_FIELDS = 8;
  const values = new Float64Array(lines.length * MAX_FIELDS);
  const widths = new Int16Array(lines.length);
  const fields: number[] = new Array(64);
  let nRows = 0;
  let headerLine: string | null = null;
  let textLines = 0;
  for (const line of lines) {
    const count = scanLine(line, dialect, fields);
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
  const twoTheta: number[] = [];
  const intensity: number[] = [];
  const esd: number[] = [];
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
    twoTheta.push(t);
    intensity.push(y);
    esd.push(s);
  }
  if (kept > 0 && missing > kept * MAX_MISSING_SHARE) {
    return { error: `${Math.round((100 * missing) / kept)}% of the rows have a missing number (NaN); the scan is unusable.` };
  }
  if (missing > 0) warnings.push(`${missing} rows with a missing number were dropped.`);
  if (iEsd !== null && !esd.every((s) => s > 0 && Number.isFinite(s))) {
    warnings.push("The third column is not a positive uncertainty in every row and was ignored.");
    iEsd = null;
  }
  const csv = mapping !== null || dialectSeparatesByComma(lines, dialect);
  return {
    twoTheta,
    intensity,
    esd: iEsd === null ? undefined : esd,
    format: csv ? "csv" : "xy",
    warnings,
  };
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

function mostCommonWidth(widths: ArrayLike<number>): number {
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

// ——— pdCIF ———

interface CifLoop {
  names: string[];
  values: string[];
}

interface CifBlock {
  items: Map<string, string>;
  loops: CifLoop[];
}

const INTENSITY_ITEMS = ["_pd_meas_counts_total", "_pd_meas_intensity_total", "_pd_proc_intensity_total"];
const THETA_ITEMS = ["_pd_meas_2theta_scan", "_pd_proc_2theta_corrected", "_pd_meas_angle_2theta"];

function readPdCif(text: string): Columns | { error: string } {
  const blocks = parseCifBlocks(text);
  const warnings: string[] = [];
  const powder = blocks.filter((b) => b.loops.some((l) => INTENSITY_ITEMS.some((n) => l.names.includes(n))));
  if (powder.length === 0) {
    return { error: "The CIF has no powder-pattern loop (_pd_meas_counts_total, _pd_meas_intensity_total or _pd_proc_intensity_total)." };
  }
  if (powder.length > 1) warnings.push(`The CIF holds ${powder.length} powder patterns; the first was read.`);
  const block = powder[0];
  const loop = block.loops.find((l) => INTENSITY_ITEMS.some((n) => l.names.includes(n)))!;
  const width = loop.names.length;
  if (loop.values.length % width !== 0) {
    return { error: "The CIF powder loop is truncated: its values do not fill whole rows." };
  }
  const nRows = loop.values.length / width;
  const column = (name: string) => {
    const j = loop.names.indexOf(name);
    return j < 0 ? null : Array.from({ length: nRows }, (_, i) => loop.values[i * width + j]);
  };
  const intensityName = INTENSITY_ITEMS.find((n) => loop.names.includes(n))!;
  const intensityText = column(intensityName)!;
  const thetaName = THETA_ITEMS.find((n) => loop.names.includes(n));
  let twoTheta: number[];
  if (thetaName) {
    twoTheta = column(thetaName)!.map((v) => cifNumber(v).value);
  } else {
    const min = cifNumber(block.items.get("_pd_meas_2theta_range_min") ?? "?").value;
    const max = cifNumber(block.items.get("_pd_meas_2theta_range_max") ?? "?").value;
    const inc = cifNumber(block.items.get("_pd_meas_2theta_range_inc") ?? "?").value;
    if (!Number.isFinite(min) || !Number.isFinite(inc) || inc === 0) {
      return { error: "The CIF gives no 2θ values: neither a _pd_meas_2theta_scan column nor _pd_meas_2theta_range_min/_inc." };
    }
    const expected = Number.isFinite(max) ? Math.round((max - min) / inc) + 1 : nRows;
    if (expected !== nRows) {
      warnings.push(`The 2θ range implies ${expected} points but the loop has ${nRows}; angles were counted from the minimum.`);
    }
    twoTheta = Array.from({ length: nRows }, (_, i) => min + i * inc);
  }
  const readings = intensityText.map(cifNumber);
  const suText = column(`${intensityName}_su`);
  const intensity: number[] = [];
  const esd: number[] = [];
  const angles: number[] = [];
  let missing = 0;
  let withEsd = 0;
  for (let i = 0; i < nRows; i++) {
    const y = readings[i].value;
    if (!Number.isFinite(twoTheta[i]) || !Number.isFinite(y)) {
      missing++;
      continue;
    }
    const su = suText ? cifNumber(suText[i]).value : readings[i].su;
    if (Number.isFinite(su) && su > 0) withEsd++;
    angles.push(twoTheta[i]);
    intensity.push(y);
    esd.push(su);
  }
  if (nRows > 0 && missing > nRows * MAX_MISSING_SHARE) {
    return { error: `${Math.round((100 * missing) / nRows)}% of the CIF's rows have no number; the scan is unusable.` };
  }
  if (missing > 0) warnings.push(`${missing} rows without a number were dropped.`);
  const wavelength = cifNumber(block.items.get("_diffrn_radiation_wavelength") ?? firstLoopValue(block, "_diffrn_radiation_wavelength") ?? "?").value;
  const hasEsd = withEsd === angles.length && angles.length > 0;
  return {
    twoTheta: angles,
    intensity,
    esd: hasEsd ? esd : undefined,
    wavelength: Number.isFinite(wavelength) && wavelength > 0 ? wavelength : undefined,
    format: "pdcif",
    warnings,
  };
}

function firstLoopValue(block: CifBlock, name: string): string | undefined {
  for (const loop of block.loops) {
    const j = loop.names.indexOf(name);
    if (j >= 0 && loop.values.length > j) return loop.values[j];
  }
  return undefined;
}

/** A CIF number with its standard uncertainty in parentheses: 1234(35) → 1234 ± 35, 1.234(5) → 1.234 ± 0.005. */
export function cifNumber(text: string): { value: number; su: number } {
  const m = /^([+-]?)(\d*)(?:\.(\d*))?(?:[eE]([+-]?\d+))?(?:\((\d+)\))?$/.exec(text.trim());
  if (!m || (m[2] === "" && (m[3] ?? "") === "")) return { value: NaN, su: NaN };
  const exponent = m[4] ? Number(m[4]) : 0;
  const value = Number(`${m[1]}${m[2] || "0"}.${m[3] ?? ""}`) * 10 ** exponent;
  const decimals = (m[3] ?? "").length;
  const su = m[5] ? Number(m[5]) * 10 ** (exponent - decimals) : NaN;
  return { value, su };
}

/** Splits CIF text into blocks of single items and loops; quoted strings and ;-text fields are kept whole. */
function parseCifBlocks(text: string): CifBlock[] {
  const tokens = cifTokens(text);
  const blocks: CifBlock[] = [];
  let block: CifBlock = { items: new Map(), loops: [] };
  let i = 0;
  const isName = (t: string | undefined) => t !== undefined && t.startsWith("_");
  const isKeyword = (t: string | undefined) => t !== undefined && /^(loop_|data_|save_|global_|stop_)/i.test(t);
  while (i < tokens.length) {
    const t = tokens[i];
    if (/^data_/i.test(t)) {
      if (block.items.size > 0 || block.loops.length > 0) blocks.push(block);
      block = { items: new Map(), loops: [] };
      i++;
    } else if (/^loop_$/i.test(t)) {
      i++;
      const names: string[] = [];
      while (isName(tokens[i])) names.push(normalName(tokens[i++]));
      const values: string[] = [];
      while (i < tokens.length && !isName(tokens[i]) && !isKeyword(tokens[i])) values.push(tokens[i++]);
      block.loops.push({ names, values });
    } else if (isName(t)) {
      const value = tokens[i + 1];
      if (value !== undefined && !isName(value) && !isKeyword(value)) {
        block.items.set(normalName(t), value);
        i += 2;
      } else i++;
    } else i++;
  }
  if (block.items.size > 0 || block.loops.length > 0) blocks.push(block);
  return blocks;
}

// DDL2 spellings (_pd_meas.2theta_scan) and the DDL1 ones (_pd_meas_2theta_scan) are read alike.
function normalName(name: string): string {
  return name.toLowerCase().replace(/\./g, "_");
}

function cifTokens(text: string): string[] {
  const tokens: string[] = [];
  const lines = splitLines(text);
  for (let li = 0; li < lines.length; li++) {
    const line = lines[li];
    if (line.startsWith(";")) {
      // A text field runs to the next line that starts with a semicolon.
      const parts = [line.slice(1)];
      li++;
      while (li < lines.length && !lines[li].startsWith(";")) parts.push(lines[li++]);
      tokens.push(parts.join("\n"));
      continue;
    }
    let j = 0;
    while (j < line.length) {
      const c = line[j];
      if (c === " " || c === "\t") {
        j++;
      } else if (c === "#") {
        break;
      } else if (c === "'" || c === '"') {
        let k = j + 1;
        while (k < line.length && !(line[k] === c && (k + 1 === line.length || /\s/.test(line[k + 1])))) k++;
        tokens.push(line.slice(j + 1, k));
        j = k + 1;
      } else {
        let k = j;
        while (k < line.length && line[k] !== " " && line[k] !== "\t") k++;
        tokens.push(line.slice(j, k));
        j = k;
      }
    }
  }
  return tokens;
}

// ——— Checks common to every format ———

function finishScan(columns: Columns): ParseScanResult {
  const warnings = [...columns.warnings];
  let { twoTheta, intensity, esd } = columns;
  if (twoTheta.length === 0) return fail("The file has no numeric columns of 2θ and intensity.");
  if (twoTheta.length < MIN_POINTS) {
    return fail(`The scan has ${twoTheta.length} points; at least ${MIN_POINTS} are needed.`);
  }
  if (twoTheta[0] > twoTheta[twoTheta.length - 1]) {
    twoTheta = [...twoTheta].reverse();
    intensity = [...intensity].reverse();
    esd = esd ? [...esd].reverse() : undefined;
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
  return {
    ok: true,
    scan: {
      twoTheta: Float64Array.from(twoTheta),
      intensity: Float64Array.from(intensity),
      esd: esd ? Float64Array.from(esd) : undefined,
      wavelength: columns.wavelength,
      format: columns.format,
      warnings,
    },
  };
}
