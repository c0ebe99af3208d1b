// What free-text header lines state about a measurement ("# Wavelength: 1.5406", "Anode = Cu", "Generator 40 kV,
// 40 mA", "Step size 0.02"). Used by the readers of plain text layouts, whose header is whatever the writing
// program chose; known words are matched loosely and numbers are kept only inside plausible ranges.
import { anodeSymbol, isoDate } from "./text";
import type { ScanMetadata } from "./types";

const LEADER = /^\s*(#+|!+|;+|\/\/+|%+|\*+)?\s*/;
const NUMBER = /[-+]?(?:\d+(?:[.,]\d*)?|[.,]\d+)(?:[eE][-+]?\d+)?/;

/** Key and value of a header line, or null when the line is not of that shape. */
export function keyValue(line: string): { key: string; value: string } | null {
  const body = line.replace(LEADER, "").trim();
  if (body.length === 0 || body.length > 300) return null;
  const sep = /[:=\t]/.exec(body);
  if (sep && sep.index > 0 && sep.index <= 60) {
    return { key: body.slice(0, sep.index).trim(), value: body.slice(sep.index + 1).trim() };
  }
  // "Step size 0.02", "kV 40": words, then a number.
  const m = /^([A-Za-z][A-Za-z0-9 ()/._αβ-]{0,59}?)\s+([-+]?[\d.,].*)$/.exec(body);
  return m ? { key: m[1].trim(), value: m[2].trim() } : null;
}

function firstNumber(text: string): number {
  const m = NUMBER.exec(text);
  return m ? Number(m[0].replace(",", ".")) : NaN;
}

const within = (v: number, lo: number, hi: number) => (Number.isFinite(v) && v >= lo && v <= hi ? v : undefined);

/** Ångström from a stated wavelength; a value given in nanometres (said so, and below 1) is converted. */
function angstrom(key: string, value: string): number | undefined {
  let v = firstNumber(value);
  if (/\bnm\b/i.test(`${key} ${value}`) && v < 1) v *= 10;
  return within(v, 0.01, 20);
}

/** Adds what one key/value pair states to `meta` (fields already set are kept). Returns whether it was used. */
export function applyKeyValue(meta: ScanMetadata, rawKey: string, value: string): boolean {
  const key = rawKey
    .toLowerCase()
    .replace(/[^a-z0-9αβ]+/g, " ")
    .trim();
  if (!key || !value) return false;
  const set = <K extends keyof ScanMetadata>(field: K, v: ScanMetadata[K] | undefined) => {
    if (v === undefined || v === "" || meta[field] !== undefined) return false;
    meta[field] = v;
    return true;
  };
  let used = false;
  // A value may name the tube settings whatever its key ("Generator: 40 kV, 30 mA").
  const kv = /([\d.]+)\s*kV\b/i.exec(value);
  const ma = /([\d.]+)\s*mA\b/i.exec(value);
  if (kv) used = set("tubeVoltageKv", within(Number(kv[1]), 1, 500)) || used;
  if (ma) used = set("tubeCurrentMa", within(Number(ma[1]), 0.001, 2000)) || used;
  if (/(k ?)?(alpha|α|a) ?2 ?(\/|to|over)? ?(alpha|α|a)? ?1? ?ratio|ratio|i ?2 ?i ?1|intensity ratio/.test(key)) {
    return set("kAlpha2Ratio", within(firstNumber(value), 0.01, 1)) || used;
  }
  if (/k ?(alpha|α|a) ?2|alpha ?2|lambda ?2|^wl ?2$|wave ?length ?2/.test(key)) return set("kAlpha2", angstrom(key, value)) || used;
  if (/k ?(beta|β|b)\b|^wl ?3$|lambda ?3|wave ?length ?3/.test(key)) return set("kBeta", angstrom(key, value)) || used;
  if (/k ?(alpha|α|a) ?1|alpha ?1|lambda ?1|^wl ?1$|wave ?length ?1/.test(key)) return set("kAlpha1", angstrom(key, value)) || used;
  if (/wave ?length|lambda|^wl$/.test(key)) return set("wavelength", angstrom(key, value)) || used;
  if (/(^| )kv$|voltage|tension/.test(key)) return set("tubeVoltageKv", within(firstNumber(value), 1, 500)) || used;
  if (/(^| )ma$|current/.test(key)) return set("tubeCurrentMa", within(firstNumber(value), 0.001, 2000)) || used;
  if (/anode|target|tube|radiation|^source$|x ?ray source/.test(key)) {
    const anode = anodeSymbol(value.replace(/\d.*$/, ""));
    if (/neutron/i.test(value)) used = set("probe", "neutron") || used;
    else if (/x-?ray/i.test(value) || anode) used = set("probe", "x-ray") || used;
    return set("anode", anode) || used;
  }
  if (/time ?(per|\/)? ?(step|point)|count(ing)? ?time|step ?time|dwell/.test(key)) {
    return set("timePerStep", within(firstNumber(value), 1e-4, 1e5)) || used;
  }
  if (/step ?(size|width)?$|^increment$|stepsize|2 ?th(eta)? ?step|step ?2 ?th(eta)?/.test(key)) {
    return set("step", within(firstNumber(value), 1e-5, 10)) || used;
  }
  if (/slit|soller|mask|filter|monochromator/.test(key)) {
    meta.slits = [...(meta.slits ?? []), { name: rawKey.trim(), value }];
    return true;
  }
  if (/^(sample|specimen)( ?(name|id))?$|^name$/.test(key)) return set("sampleName", value) || used;
  if (/date|measured|acquired|timestamp|time ?stamp|start ?time/.test(key)) return set("measuredAt", isoDate(value)) || used;
  if (/instrument|diffractometer|^device$|^system$|^machine$/.test(key)) return set("instrument", value) || used;
  if (/scan ?axis|^axis$|scan ?type/.test(key)) return set("scanAxis", value) || used;
  if (/scan ?mode|^mode$/.test(key)) return set("scanMode", value) || used;
  if (/intensity ?unit|^(y ?)?units?$/.test(key)) return set("intensityUnit", value) || used;
  if (/^title$|^comment$/.test(key)) return set("title", value) || used;
  return used;
}

/** Metadata from header lines of the shape "key: value" (comment leaders such as # or ! allowed). */
export function metadataFromHeader(lines: string[], meta: ScanMetadata = {}): ScanMetadata {
  for (const line of lines) {
    const kv = keyValue(line);
    if (kv) applyKeyValue(meta, kv.key, kv.value);
  }
  return meta;
}
