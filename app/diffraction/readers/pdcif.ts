// pdCIF: a CIF data block with a powder-pattern loop (_pd_meas_counts_total, _pd_meas_intensity_total or
// _pd_proc_intensity_total) and 2θ either as a loop column or as a range (min, inc). Data names follow the pdCIF
// dictionary; DDL1 (_pd_meas_2theta_scan) and DDL2 (_pd_meas.2theta_scan) spellings are read alike
// (docs/scan-formats.md).
import { anodeSymbol, evenlySpaced, isoDate, splitLines } from "./text";
import type { ReadScan, ScanMetadata, ScanReader, ScanSource } from "./types";

/** Rows with a missing number beyond this share make the file unusable rather than patchy. */
const MAX_MISSING_SHARE = 0.2;

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

function readPdCif(text: string): ReadScan | { error: string } {
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
    // On whole numbers of the last decimal written, so that 10 + 1·0.02 is 10.02 exactly (docs/scan-formats.md).
    const written = (name: string) => (block.items.get(name) ?? "").replace(/\(\d+\)$/, "");
    twoTheta = Array.from(evenlySpaced(written("_pd_meas_2theta_range_min"), written("_pd_meas_2theta_range_inc"), nRows));
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
  const hasEsd = withEsd === angles.length && angles.length > 0;
  return {
    twoTheta: angles,
    intensity,
    esd: hasEsd ? esd : undefined,
    metadata: cifMetadata(block),
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
  const isName = (t: string | undefined) => t?.startsWith("_") === true;
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

// ——— What the block states about the measurement ———

function cifText(block: CifBlock, name: string): string | undefined {
  const v = block.items.get(name) ?? firstLoopValue(block, name);
  return v === undefined || v === "?" || v === "." ? undefined : v.trim();
}

function cifValue(block: CifBlock, name: string): number | undefined {
  const text = cifText(block, name);
  const v = text === undefined ? NaN : cifNumber(text).value;
  return Number.isFinite(v) ? v : undefined;
}

function loopColumn(block: CifBlock, name: string): string[] {
  for (const loop of block.loops) {
    const j = loop.names.indexOf(name);
    if (j < 0) continue;
    const width = loop.names.length;
    const out: string[] = [];
    for (let i = j; i < loop.values.length; i += width) out.push(loop.values[i]);
    return out;
  }
  return [];
}

const SCAN_METHODS: Record<string, string> = { step: "step", cont: "continuous", fixed: "fixed", tof: "time-of-flight", disp: "energy-dispersive" };

function cifMetadata(block: CifBlock): ScanMetadata {
  const meta: ScanMetadata = {};
  // One wavelength, or a loop of them (Kα1, Kα2, … with weights).
  const wavelengths = loopColumn(block, "_diffrn_radiation_wavelength").map((v) => cifNumber(v).value);
  const weights = loopColumn(block, "_diffrn_radiation_wavelength_wt").map((v) => cifNumber(v).value);
  const single = block.items.get("_diffrn_radiation_wavelength");
  const positive = (v: number | undefined) => (v !== undefined && Number.isFinite(v) && v > 0 ? v : undefined);
  if (single !== undefined) meta.wavelength = positive(cifNumber(single).value);
  else if (wavelengths.length === 1) meta.wavelength = positive(wavelengths[0]);
  else if (wavelengths.length > 1) {
    meta.kAlpha1 = positive(wavelengths[0]);
    meta.kAlpha2 = positive(wavelengths[1]);
    if (weights.length > 1 && weights[0] > 0 && weights[1] > 0) meta.kAlpha2Ratio = weights[1] / weights[0];
  }
  const type = cifText(block, "_diffrn_radiation_type");
  const probe = cifText(block, "_diffrn_radiation_probe") ?? type;
  if (probe && /neutron/i.test(probe)) meta.probe = "neutron";
  else if (probe && /x-?ray/i.test(probe)) meta.probe = "x-ray";
  meta.anode =
    anodeSymbol(cifText(block, "_diffrn_source_target")) ??
    anodeSymbol(type?.replace(/x-?ray/i, "")) ??
    anodeSymbol(cifText(block, "_diffrn_radiation_source")) ??
    anodeSymbol(cifText(block, "_diffrn_source")?.replace(/x-?ray/i, ""));
  if (meta.anode) meta.probe ??= "x-ray";
  meta.tubeVoltageKv = cifValue(block, "_diffrn_source_voltage");
  meta.tubeCurrentMa = cifValue(block, "_diffrn_source_current");
  const method = cifText(block, "_pd_meas_scan_method");
  if (method) meta.scanMode = SCAN_METHODS[method.toLowerCase()] ?? method;
  meta.scanAxis = cifText(block, "_diffrn_measurement_method");
  meta.step = cifValue(block, "_pd_meas_2theta_range_inc") ?? cifValue(block, "_pd_proc_2theta_range_inc");
  meta.timePerStep = cifValue(block, "_pd_meas_step_count_time");
  meta.intensityUnit = cifText(block, "_pd_meas_units_of_intensity");
  meta.sampleName = cifText(block, "_pd_spec_description") ?? cifText(block, "_chemical_name_common") ?? cifText(block, "_pd_phase_name");
  meta.measuredAt = isoDate(cifText(block, "_pd_meas_datetime_initiated"));
  meta.instrument = cifText(block, "_diffrn_measurement_device_type") ?? cifText(block, "_pd_instr_location");
  const slits = [...block.items.entries()]
    .filter(([name, value]) => /^_pd_instr_(divg|soller|slit|beam_size|monochr)|^_diffrn_radiation_monochromator$/.test(name) && value !== "?" && value !== ".")
    .map(([name, value]) => ({ name, value }));
  if (slits.length > 0) meta.slits = slits;
  for (const key of Object.keys(meta) as (keyof ScanMetadata)[]) if (meta[key] === undefined) delete meta[key];
  return meta;
}

function looksLikeCif(whole: string, fileName?: string): number {
  // The block header and the first _pd_ names sit near the top of any pdCIF; the head is enough.
  const text = whole.length > 262144 ? whole.slice(0, 262144) : whole;
  if (/^\s*data_\S*/m.test(text) && /(^|\s)_pd_/m.test(text)) return 0.9;
  return fileName && /\.cif$/i.test(fileName) ? 0.6 : 0;
}

export const pdCifReader: ScanReader = {
  format: "pdcif",
  label: "pdCIF (powder CIF)",
  sniff: (source: ScanSource) => looksLikeCif(source.text(), source.fileName),
  read: (source) => readPdCif(source.text()),
};
