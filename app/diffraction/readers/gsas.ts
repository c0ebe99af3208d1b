// GSAS standard powder data file: a title line, an optional "Instrument parameter" line, optional "#" comment lines,
// then one or more banks, each a line `BANK IBANK NCHAN NREC BINTYP BCOEF1 BCOEF2 BCOEF3 BCOEF4 TYPE` followed by
// its data records. Constant-wavelength banks (BINTYP CONST) give the start and step in centidegrees 2θ. Record
// layouts by TYPE: STD ten fields of 8 characters (a 2-character count of detectors NCTR, then a 6-character
// intensity), ESD five pairs of 8-character intensity and esd, FXY/FXYE free-format x y (e) with x in centidegrees,
// ALT groups of x, y, e. Fixed-width fields may touch (no blank between them), so they are read by column.
// Layout and sources: docs/scan-formats.md#gsas-standard-powder-data.
import { applyKeyValue, keyValue, metadataFromHeader } from "./header-metadata";
import { evenlySpaced, headLines, isBlankLine, numberIn, numbersOfLine, splitLines, toNumber } from "./text";
import type { ReadScan, ScanMetadata, ScanReader, ScanSource } from "./types";

interface Bank {
  /** Index of the BANK line. */
  line: number;
  /** Index after the bank's last record. */
  end: number;
  number: number;
  nchan: number;
  binType: string;
  bcoef: number[];
  /** BCOEF as written, for exact decimal angles. */
  bcoefText: string[];
  type: string;
}

const BANK_LINE = /^BANK\s+\d+\s+\d+\s+\d+\s+[A-Z_]+/i;
const TOF_BINS = /^(RALF|SLOG|TIME_MAP|LOG6|LPSD)$/i;

function sniff(source: ScanSource): number {
  // A BANK line (or a TIME_MAP) near the top, after the title and the optional instrument and comment lines.
  return headLines(source.text(), 60).some((line) => BANK_LINE.test(line) || /^TIME_MAP\s+\d+/i.test(line)) ? 0.95 : 0;
}

function parseBank(line: string, index: number): Bank {
  const tokens = line.trim().split(/\s+/);
  const bcoef: number[] = [];
  let k = 5;
  for (; k < tokens.length && k < 9; k++) {
    const v = toNumber(tokens[k]);
    if (Number.isNaN(v)) break;
    bcoef.push(v);
  }
  return {
    line: index,
    end: index + 1,
    number: Number(tokens[1]),
    nchan: Number(tokens[2]),
    binType: tokens[4].toUpperCase(),
    bcoef,
    bcoefText: tokens.slice(5, 5 + bcoef.length),
    type: (tokens[k] ?? "STD").toUpperCase(),
  };
}

function read(source: ScanSource): ReadScan | { error: string } {
  const lines = splitLines(source.text());
  const meta: ScanMetadata = {};
  const title = lines[0]?.trim();
  if (title && !BANK_LINE.test(title)) {
    meta.title = title;
    // A title such as "LaB6, Wavelength = 1.5406" may state something; only "key: value" shapes are taken.
    const kv = keyValue(title);
    if (kv) applyKeyValue(meta, kv.key, kv.value);
  }
  const banks: Bank[] = [];
  const comments: string[] = [];
  let timeMap = false;
  let open: Bank | null = null;
  for (let i = title && !BANK_LINE.test(title) ? 1 : 0; i < lines.length; i++) {
    const line = lines[i];
    // Within the banks only a line that starts with a letter can be a BANK or TIME_MAP line; records are skipped fast.
    const c = line.charCodeAt(0) | 32;
    if (banks.length > 0 && !(c >= 97 && c <= 122)) continue;
    if (/^BANK\s/i.test(line)) {
      if (open) open.end = i;
      open = parseBank(line, i);
      banks.push(open);
    } else if (/^TIME_MAP/i.test(line)) {
      timeMap = true;
      if (open) open.end = i;
      open = null;
    } else if (banks.length === 0) {
      const m = /^\s*instrument\s+param(eter)?s?\s*(file)?\s*[:=]?\s*(.*)$/i.exec(line);
      if (m && i <= 2) meta.instrumentParameterFile = m[3].trim() || undefined;
      else if (/^\s*#/.test(line)) comments.push(line);
    }
  }
  if (open) open.end = lines.length;
  metadataFromHeader(comments, meta);
  if (banks.length === 0) {
    return { error: "The GSAS file has no BANK line, so its data cannot be placed on a 2θ axis." };
  }
  const angular = banks.filter((b) => /^CONS/.test(b.binType));
  if (angular.length === 0) {
    const b = banks[0];
    if (TOF_BINS.test(b.binType) || timeMap) {
      return {
        error: `The GSAS file holds time-of-flight data (${b.binType} bank); the check works on angle-dispersive 2θ scans only.`,
      };
    }
    if (/^EDS/.test(b.binType)) {
      return { error: "The GSAS file holds energy-dispersive data; the check works on angle-dispersive 2θ scans only." };
    }
    return { error: `The GSAS bank type ${b.binType} is not a constant-step 2θ scan (CONST); the check works on angle-dispersive 2θ scans only.` };
  }
  const bank = angular[0];
  const warnings: string[] = [];
  if (banks.length > 1) {
    warnings.push(`The GSAS file holds ${banks.length} banks; bank ${bank.number} (the first 2θ bank) was read.`);
    meta.scansInFile = banks.length;
    meta.scanTaken = banks.indexOf(bank) + 1;
  }
  const records = lines.slice(bank.line + 1, bank.end).filter((l) => !/^\s*#/.test(l) && !isBlankLine(l));
  const [start, step] = bank.bcoef;
  const needsGrid = bank.type === "STD" || bank.type === "ESD";
  if (needsGrid && !(Number.isFinite(start) && Number.isFinite(step) && step !== 0)) {
    return { error: "The GSAS BANK line gives no start and step (BCOEF1 and BCOEF2, in centidegrees 2θ)." };
  }
  if (Number.isFinite(step) && step > 0) meta.step = step / 100;
  let data: Columns | { error: string };
  if (bank.type === "STD") data = readStd(records, bank.nchan);
  else if (bank.type === "ESD") data = readEsd(records, bank.nchan);
  else if (bank.type === "FXY" || bank.type === "FXYE" || bank.type === "ALT") data = readXye(records, bank, warnings);
  else return { error: `The GSAS data type ${bank.type} is not one of STD, ESD, ALT, FXY or FXYE.` };
  if ("error" in data) return data;
  const n = data.y.length;
  if (Number.isFinite(bank.nchan) && bank.nchan > 0 && n !== bank.nchan) {
    warnings.push(`The BANK line announces ${bank.nchan} points but the bank holds ${n}; the ${n} were read.`);
  }
  const twoTheta = data.x ?? evenlySpaced(bank.bcoefText[0], bank.bcoefText[1], n, 2);
  let esd = data.esd;
  if (esd && !esd.every((s) => s > 0 && Number.isFinite(s))) {
    warnings.push("The file's uncertainties are not all positive and were ignored.");
    esd = undefined;
  }
  return { twoTheta, intensity: data.y, esd, metadata: meta, warnings };
}

interface Columns {
  x?: Float64Array;
  y: Float64Array;
  esd?: Float64Array;
}

/** STD: ten fields of 8 characters, each a 2-character NCTR (blank = 1) and a 6-character intensity. */
function readStd(records: string[], nchan: number): Columns | { error: string } {
  const capacity = Math.max(records.length * 10, 0);
  const y = new Float64Array(capacity);
  const esd = new Float64Array(capacity);
  let n = 0;
  const free: number[] = [];
  for (let r = 0; r < records.length; r++) {
    const line = records[r];
    const fixed = stdFields(line, y, esd, n);
    if (fixed >= 0) {
      n += fixed;
    } else {
      // Writers that separate values by blanks without keeping the columns (common in converted files).
      const count = numbersOfLine(line, free);
      if (count < 0) return { error: `Line ${r + 1} of the GSAS bank is not STD data: "${line.trim().slice(0, 40)}".` };
      for (let f = 0; f < count; f++, n++) {
        y[n] = free[f];
        esd[n] = Math.sqrt(Math.max(free[f], 1));
      }
    }
  }
  if (nchan > 0 && n > nchan) n = nchan;
  return { y: y.slice(0, n), esd: esd.slice(0, n) };
}

/** Reads one STD record into y/esd from index `at`; returns how many values, or −1 when the columns do not hold numbers. */
function stdFields(line: string, y: Float64Array, esd: Float64Array, at: number): number {
  let count = 0;
  for (let f = 0; f < 10; f++) {
    const a = f * 8;
    const b = Math.min(a + 8, line.length);
    if (a >= line.length || blankBetween(line, a, b)) {
      // A blank field ends the record; anything after it would mean the columns are not kept.
      if (!blankBetween(line, a, line.length)) return -1;
      break;
    }
    const nctr = blankBetween(line, a, a + 2) ? 1 : numberIn(line, a, a + 2);
    // A blank inside the field ("21 26") is no number: numberIn reads only a field without one.
    const value = numberIn(line, a + 2, b);
    if (!(Number.isInteger(nctr) && nctr >= 1) || Number.isNaN(value)) return -1;
    y[at + count] = value;
    esd[at + count] = Math.sqrt(Math.max(value, 1) / nctr);
    count++;
  }
  return count;
}

function blankBetween(line: string, from: number, to: number): boolean {
  for (let i = from; i < to && i < line.length; i++) {
    const c = line.charCodeAt(i);
    if (c !== 32 && c !== 9 && c !== 0x1a) return false;
  }
  return true;
}

/** ESD: five pairs of 8-character intensity and 8-character esd per record. */
function readEsd(records: string[], nchan: number): Columns | { error: string } {
  const y: number[] = [];
  const esd: number[] = [];
  const free: number[] = [];
  for (let r = 0; r < records.length; r++) {
    const line = records[r];
    let ok = true;
    const row: number[] = [];
    for (let f = 0; f < 5; f++) {
      const a = f * 16;
      if (a >= line.length || isBlankLine(line.slice(a, a + 16))) break;
      const v = numberIn(line, a, a + 8);
      const s = numberIn(line, a + 8, Math.min(a + 16, line.length));
      if (Number.isNaN(v) || Number.isNaN(s)) {
        ok = false;
        break;
      }
      row.push(v, s);
    }
    if (!ok) {
      const count = numbersOfLine(line, free);
      if (count < 0 || count % 2 !== 0) return { error: `Line ${r + 1} of the GSAS bank is not ESD data (pairs of intensity and esd).` };
      row.length = 0;
      for (let f = 0; f < count; f++) row.push(free[f]);
    }
    for (let k = 0; k < row.length; k += 2) {
      y.push(row[k]);
      esd.push(row[k + 1]);
    }
  }
  const n = nchan > 0 ? Math.min(nchan, y.length) : y.length;
  return { y: Float64Array.from(y.slice(0, n)), esd: Float64Array.from(esd.slice(0, n)) };
}

/**
 * FXY / FXYE: one point a record, free format, x in centidegrees for a CONST bank. ALT: groups of x, y, e (20
 * characters each: 8, 7 and 5) or the same three numbers free-format. A file whose x values match BCOEF1 only when
 * read as degrees is read as degrees, with a warning.
 */
function readXye(records: string[], bank: Bank, warnings: string[]): Columns | { error: string } {
  const alt = bank.type === "ALT";
  const withEsd = bank.type !== "FXY";
  // ALT records hold up to four points, the others one.
  const capacity = records.length * (alt ? 4 : 1);
  const x = new Float64Array(capacity);
  const y = new Float64Array(capacity);
  const e = new Float64Array(withEsd ? capacity : 0);
  let m = 0;
  const free: number[] = [];
  for (let r = 0; r < records.length; r++) {
    const line = records[r];
    const count = numbersOfLine(line, free);
    if (alt && (count < 0 || count % 3 !== 0)) {
      for (let a = 0; a < line.length && m < capacity; a += 20) {
        if (isBlankLine(line.slice(a, a + 20))) break;
        const values = [numberIn(line, a, a + 8), numberIn(line, a + 8, a + 15), numberIn(line, a + 15, a + 20)];
        if (values.some(Number.isNaN)) return { error: `Line ${r + 1} of the GSAS bank is not ALT data (x, y, esd).` };
        x[m] = values[0];
        y[m] = values[1];
        e[m++] = values[2];
      }
      continue;
    }
    const per = withEsd ? 3 : 2;
    if (count < per || (alt && count % 3 !== 0)) {
      return { error: `Line ${r + 1} of the GSAS bank is not ${bank.type} data: "${line.trim().slice(0, 40)}".` };
    }
    const groups = alt ? Math.min(count / 3, capacity - m) : 1;
    for (let g = 0; g < groups; g++, m++) {
      x[m] = free[g * per];
      y[m] = free[g * per + 1];
      if (withEsd) e[m] = free[g * per + 2];
    }
  }
  if (m === 0) return { x: new Float64Array(0), y: new Float64Array(0) };
  const n = bank.nchan > 0 ? Math.min(bank.nchan, m) : m;
  const scale = centidegreeScale(x.subarray(0, m), bank, warnings);
  if (scale !== 1) for (let i = 0; i < n; i++) x[i] /= scale;
  return { x: x.subarray(0, n), y: y.subarray(0, n), esd: withEsd ? e.subarray(0, n) : undefined };
}

function centidegreeScale(x: Float64Array, bank: Bank, warnings: string[]): number {
  const first = x[0];
  const start = bank.bcoef[0];
  let max = -Infinity;
  for (const v of x) if (v > max) max = v;
  if (max > 180) return 100;
  if (Number.isFinite(start) && start > 0) {
    if (Math.abs(first - start) <= Math.abs(first * 100 - start)) return 100;
  }
  warnings.push(`The ${bank.type} x values look like degrees rather than the centidegrees of the GSAS layout; they were read as degrees.`);
  return 1;
}

export const gsasReader: ScanReader = {
  format: "gsas",
  label: "GSAS standard powder data",
  sniff,
  read,
};
