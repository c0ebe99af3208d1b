// Pieces every text reader shares: lines, fast number reading, element symbols and dates as files state them.

/** Lines split at LF, CRLF or CR (the usual cases without a regular expression, which is slower on large files). */
export function splitLines(text: string): string[] {
  const cr = text.indexOf("\r");
  if (cr < 0) return text.split("\n");
  if (text.indexOf("\n") < 0) return text.split("\r");
  const lines = text.split("\r\n");
  for (const line of lines) if (line.includes("\n") || line.includes("\r")) return text.split(/\r\n|\r|\n/);
  return lines;
}

/**
 * The first `max` lines of a text without splitting all of it (sniffing looks at the head only): the text is cut
 * after the `max`-th line break (\r\n, \r or \n, as splitLines reads them) and at `maxChars`, whichever comes
 * first. Every reader sniffs a file, so splitting its whole first 64 kB for each of them was most of the time a
 * small file took to read.
 */
export function headLines(text: string, max: number, maxChars = 65536): string[] {
  const limit = Math.min(text.length, maxChars);
  let end = limit;
  let breaks = 0;
  for (let i = 0; i < limit; i++) {
    const c = text.charCodeAt(i);
    if (c !== 10 && c !== 13) continue;
    if (c === 13 && i + 1 < limit && text.charCodeAt(i + 1) === 10) i++;
    if (++breaks === max) {
      end = i + 1;
      break;
    }
  }
  return splitLines(text.slice(0, end)).slice(0, max);
}

/**
 * A decimal number in plain or exponent notation, else NaN. Number() alone would also take "0x1f",
 * "0b1" and "Infinity"; the first two characters rule those out, and Number() rejects the rest.
 */
export function plainNumber(field: string): number {
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
 * `point` is the character code of the decimal separator (46 "." or 44 ",").
 */
export function simpleDecimal(line: string, start: number, end: number, point = 46): number {
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

/** One field of a line (start ≤ i < end, blanks around it allowed) as a number, else NaN. */
export function numberIn(line: string, start: number, end: number): number {
  while (start < end && isBlank(line.charCodeAt(start))) start++;
  while (end > start && isBlank(line.charCodeAt(end - 1))) end--;
  if (start >= end) return NaN;
  const quick = simpleDecimal(line, start, end);
  return Number.isNaN(quick) ? plainNumber(line.slice(start, end)) : quick;
}

/** A whole string as a number (blanks around it allowed; a lone decimal comma read as a point), else NaN. */
export function toNumber(text: string | undefined): number {
  if (text === undefined) return NaN;
  const t = text.trim();
  const value = numberIn(t, 0, t.length);
  if (!Number.isNaN(value) || !/^[+-]?\d+,\d+$/.test(t)) return value;
  return Number(t.replace(",", "."));
}

function isBlank(c: number): boolean {
  return c === 32 || c === 9;
}

/**
 * How a run of numbers is written: which characters separate two numbers, which is the decimal separator, and
 * which fields stand for a missing value. Make one with numberLayout, once, outside any loop.
 */
export interface NumberLayout {
  /** 1 at the code of each character (below 128) that separates two numbers. */
  separators: Uint8Array;
  /** 44 for a decimal comma (a decimal point is then read as well, as Number() reads it), else 46. */
  point: number;
  /** Fields read as a missing value (NaN) instead of failing the scan ("NaN", "n/a", "-"). */
  missing?: RegExp;
}

/**
 * A layout from the characters that separate numbers (" \t,;"), the decimal separator ("." or ",") and the
 * fields that stand for a missing value. Blanks around a number are always allowed; where a blank is not among
 * the separators it may not stand inside a field ("12,5 ;340" is two numbers, "12,5 340;1" is not).
 */
export function numberLayout(separators: string, point: "." | "," = ".", missing?: RegExp): NumberLayout {
  const flags = new Uint8Array(128);
  for (let k = 0; k < separators.length; k++) flags[separators.charCodeAt(k)] = 1;
  return { separators: flags, point: point.charCodeAt(0), missing };
}

/**
 * Reads the numbers of text between start and end into `out` (from index 0) and returns how many; when a field is
 * neither a number nor a missing value, returns −1 − the index where that field starts (always below zero; see
 * failedField). The common field ([sign] digits [point digits], at most 15 digits) is read in the same pass that
 * finds it, to the same double as Number() gives; anything else (exponents, long mantissas) goes through
 * plainNumber on its own field.
 */
export function scanNumbers(text: string, start: number, end: number, layout: NumberLayout, out: number[] | Float64Array): number {
  const separates = layout.separators;
  const point = layout.point;
  let count = 0;
  let i = start;
  while (i < end) {
    let c = text.charCodeAt(i);
    if (c === 32 || (c < 128 && separates[c] === 1)) {
      i++;
      continue;
    }
    const first = i;
    let negative = false;
    if (c === 45 || c === 43) {
      negative = c === 45;
      i++;
    }
    let mantissa = 0;
    let digits = 0;
    let decimals = -1;
    for (; i < end; i++) {
      c = text.charCodeAt(i);
      if (c >= 48 && c <= 57) {
        mantissa = mantissa * 10 + (c - 48);
        digits++;
        if (decimals >= 0) decimals++;
      } else if ((c === 46 || c === point) && decimals < 0) decimals = 0;
      else break;
    }
    let ended = i >= end || (c < 128 && separates[c] === 1);
    if (!ended && c === 32) {
      // A blank that does not separate ends a field only when a separator or the end follows it.
      let k = i + 1;
      while (k < end && text.charCodeAt(k) === 32) k++;
      const d = text.charCodeAt(k);
      if (k >= end || (d < 128 && separates[d] === 1)) {
        ended = true;
        i = k;
      }
    }
    if (ended && digits > 0 && digits <= 15) {
      const value = decimals > 0 ? mantissa / POWERS_OF_TEN[decimals] : mantissa;
      out[count++] = negative ? -value : value;
      continue;
    }
    // The slow way for this field: to the next separator (none stands before i), trailing blanks off, then plainNumber.
    let j = i;
    for (; j < end; j++) {
      const d = text.charCodeAt(j);
      if (d < 128 && separates[d] === 1) break;
    }
    let last = j;
    while (last > first && text.charCodeAt(last - 1) === 32) last--;
    let field = text.slice(first, last);
    if (point !== 46) field = field.replace(String.fromCharCode(point), ".");
    const value = plainNumber(field);
    if (!Number.isNaN(value)) out[count++] = value;
    else if (layout.missing?.test(field)) out[count++] = NaN;
    else return -1 - first;
    i = j;
  }
  return count;
}

/** Where the field that failed a scan starts, from what scanNumbers returned (below zero). */
export function failedField(scanned: number): number {
  return -1 - scanned;
}

const LINE = numberLayout(" \t,;");

/** Reads the numbers of a line separated by blanks, tabs, commas or semicolons into `out`; returns how many, or −1 when a field is not a number. */
export function numbersOfLine(line: string, out: number[]): number {
  const count = scanNumbers(line, 0, line.length, LINE, out);
  return count < 0 ? -1 : count;
}

/** A line that holds nothing but blanks. */
export function isBlankLine(line: string): boolean {
  for (let i = 0; i < line.length; i++) {
    const c = line.charCodeAt(i);
    if (c !== 32 && c !== 9 && c !== 0x1a) return false; // 0x1a: the DOS end-of-file mark some writers leave
  }
  return true;
}

// ——— Element symbols ———

const ANODES: Record<string, string> = {
  cu: "Cu",
  copper: "Cu",
  co: "Co",
  cobalt: "Co",
  fe: "Fe",
  iron: "Fe",
  cr: "Cr",
  chromium: "Cr",
  mo: "Mo",
  molybdenum: "Mo",
  ag: "Ag",
  silver: "Ag",
  w: "W",
  tungsten: "W",
  mn: "Mn",
  manganese: "Mn",
  ni: "Ni",
  nickel: "Ni",
  ga: "Ga",
  gallium: "Ga",
  indium: "In",
  rh: "Rh",
  rhodium: "Rh",
  ti: "Ti",
  titanium: "Ti",
};

/** The anode's element symbol from how a file names it ("Cu", "CU", "Copper", "Cu K-alpha", "Cu-Ka"), else undefined. */
export function anodeSymbol(text: string | undefined): string | undefined {
  if (!text) return undefined;
  const words = text
    .trim()
    .toLowerCase()
    .split(/[^a-z]+/)
    .filter(Boolean);
  for (const w of words) if (ANODES[w] && (w.length > 1 || words.length === 1)) return ANODES[w];
  // "CuKa", "CuKalpha": a symbol glued to the line name.
  const glued = /^([a-z]{1,2})k(a|b|alpha|beta)\d?$/.exec(words[0] ?? "");
  return glued ? ANODES[glued[1]] : undefined;
}

// ——— Dates ———

const MONTHS = ["jan", "feb", "mar", "apr", "may", "jun", "jul", "aug", "sep", "oct", "nov", "dec"];

const pad = (n: number) => String(n).padStart(2, "0");

/**
 * A date or date-time as a file states it, as ISO 8601 ("2010-03-04T20:59:14"), or undefined when it cannot be
 * read or is ambiguous. `order` says how a format writes an all-number date: "mdy" (US), "dmy", or "auto" (only
 * where the day is above 12 is the order plain).
 */
export function isoDate(text: string | undefined, order: "mdy" | "dmy" | "auto" = "auto"): string | undefined {
  if (!text) return undefined;
  const t = text.trim().replace(/^["']|["']$/g, "");
  const time = /(\d{1,2}):(\d{2})(?::(\d{2}))?/.exec(t);
  const clock = time ? `T${pad(Number(time[1]))}:${time[2]}:${time[3] ?? "00"}` : "";
  const validTime = !time || (Number(time[1]) < 24 && Number(time[2]) < 60 && Number(time[3] ?? 0) < 61);
  let y: number;
  let m: number;
  let d: number;
  let match: RegExpExecArray | null;
  if ((match = /(\d{4})[-/.](\d{1,2})[-/.](\d{1,2})/.exec(t))) {
    [y, m, d] = [Number(match[1]), Number(match[2]), Number(match[3])];
  } else if ((match = /(\d{1,2})[-/. ]([A-Za-z]{3})[A-Za-z]*[-/. ,]+(\d{2,4})/.exec(t))) {
    d = Number(match[1]);
    m = MONTHS.indexOf(match[2].toLowerCase()) + 1;
    y = fullYear(Number(match[3]));
  } else if ((match = /([A-Za-z]{3})[A-Za-z]*[-/. ]+(\d{1,2})[, ]+(\d{4})/.exec(t))) {
    m = MONTHS.indexOf(match[1].toLowerCase()) + 1;
    d = Number(match[2]);
    y = Number(match[3]);
  } else if ((match = /(\d{1,2})[-/.](\d{1,2})[-/.](\d{2,4})/.exec(t))) {
    const [a, b] = [Number(match[1]), Number(match[2])];
    y = fullYear(Number(match[3]));
    if (order === "mdy") [m, d] = [a, b];
    else if (order === "dmy") [d, m] = [a, b];
    else if (a > 12 && b <= 12) [d, m] = [a, b];
    else if (b > 12 && a <= 12) [m, d] = [a, b];
    else if (a === b) [d, m] = [a, b];
    else return undefined;
  } else return undefined;
  if (!(m >= 1 && m <= 12 && d >= 1 && d <= 31 && y >= 1950 && y <= 2200)) return undefined;
  return `${y}-${pad(m)}-${pad(d)}${validTime ? clock : ""}`;
}

function fullYear(y: number): number {
  if (y >= 100) return y;
  return y < 70 ? 2000 + y : 1900 + y;
}

// ——— Evenly spaced angles ———

/** Digits after the decimal point (or comma) of a number as written; −1 when it has an exponent or is not a number. */
function decimalsOf(text: string): number {
  const t = text.trim();
  if (!/^[+-]?(\d+([.,]\d*)?|[.,]\d+)$/.test(t)) return -1;
  const p = t.search(/[.,]/);
  return p < 0 ? 0 : t.length - p - 1;
}

/**
 * start + i·step for i < n, computed on whole numbers of the last decimal either is written with, so that each
 * angle is the decimal a file would print (10 + 1·0.02 gives 10.02 exactly as the text "10.02" does, not
 * 10.020000000000001). `shift` moves the decimal point left (centidegrees to degrees: 2).
 */
export function evenlySpaced(startText: string, stepText: string, n: number, shift = 0): Float64Array {
  const start = toNumber(startText);
  const step = toNumber(stepText);
  const out = new Float64Array(Math.max(n, 0));
  const d = Math.max(decimalsOf(startText), decimalsOf(stepText));
  const exact = decimalsOf(startText) >= 0 && decimalsOf(stepText) >= 0 && d + shift <= 22;
  const unit = exact ? 10 ** d : 1;
  const a = Math.round(start * unit);
  const b = Math.round(step * unit);
  if (exact && Math.abs(a) + Math.abs(b) * n < 2 ** 53) {
    const scale = 10 ** (d + shift);
    for (let i = 0; i < n; i++) out[i] = (a + i * b) / scale;
    return out;
  }
  const scale = 10 ** shift;
  for (let i = 0; i < n; i++) out[i] = (start + i * step) / scale;
  return out;
}
