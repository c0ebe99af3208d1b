// Rigaku-style RAS text scans: `*RAS_DATA_START`, then per scan a header of `*KEY "VALUE"` lines between
// `*RAS_HEADER_START` and `*RAS_HEADER_END`, and the points between `*RAS_INT_START` and `*RAS_INT_END`, one a line:
// angle, intensity and, where present, an attenuator factor the intensity is multiplied by. A simplified export
// keeps the `*KEY "VALUE"` lines without the section marks (docs/scan-formats.md#rigaku-ras).
import { anodeSymbol, headLines, isBlankLine, isoDate, numbersOfLine, splitLines, toNumber } from "./text";
import type { ReadScan, ScanMetadata, ScanReader, ScanSetting, ScanSource } from "./types";

const HEADER_LINE = /^\*([A-Z0-9_-]+)\s*(.*)$/i;

interface RasScan {
  header: Map<string, string>;
  rows: string[];
}

function sniff(source: ScanSource): number {
  const head = headLines(source.text(), 200);
  if (head.some((l) => /^\*RAS_(DATA|HEADER)_START/.test(l))) return 0.95;
  const keys = head.filter((l) => /^\*(HW|MEAS|FILE|DISP)_[A-Z0-9_-]+\s+"/.test(l)).length;
  return keys >= 3 ? 0.8 : 0;
}

function unquote(value: string): string {
  const v = value.trim();
  return v.length >= 2 && v.startsWith('"') && v.endsWith('"') ? v.slice(1, -1).trim() : v;
}

function scansOf(lines: string[]): RasScan[] {
  const scans: RasScan[] = [];
  const marked = lines.some((l) => l.startsWith("*RAS_HEADER_START") || l.startsWith("*RAS_INT_START"));
  let scan: RasScan = { header: new Map(), rows: [] };
  let inData = !marked;
  for (const raw of lines) {
    // Data lines, the bulk of the file, go straight to the rows.
    const c = raw.charCodeAt(0);
    if (inData && ((c >= 48 && c <= 57) || c === 45 || c === 43 || c === 46)) {
      scan.rows.push(raw);
      continue;
    }
    const line = raw.trimEnd();
    if (line.startsWith("*RAS_HEADER_START")) {
      if (scan.rows.length > 0) scans.push(scan);
      scan = { header: new Map(), rows: [] };
      inData = false;
    } else if (line.startsWith("*RAS_INT_START")) {
      inData = true;
    } else if (line.startsWith("*RAS_INT_END")) {
      inData = false;
      scans.push(scan);
      scan = { header: new Map(), rows: [] };
    } else if (line.startsWith("*")) {
      const m = HEADER_LINE.exec(line);
      if (m && !m[1].startsWith("RAS_")) scan.header.set(m[1].toUpperCase(), unquote(m[2]));
    } else if (inData && !isBlankLine(line) && !line.startsWith("#")) {
      scan.rows.push(line);
    }
  }
  if (scan.rows.length > 0) scans.push(scan);
  return scans;
}

const TWO_THETA_AXIS = /2[- ]?theta|two ?theta|2θ|tth/i;

function read(source: ScanSource): ReadScan | { error: string } {
  const scans = scansOf(splitLines(source.text())).filter((s) => s.rows.length > 0);
  if (scans.length === 0) return { error: "The RAS file has no data points between *RAS_INT_START and *RAS_INT_END." };
  const warnings: string[] = [];
  const taken = scans.findIndex((s) => {
    const axis = s.header.get("MEAS_SCAN_AXIS_X");
    return !axis || TWO_THETA_AXIS.test(axis);
  });
  if (taken < 0) {
    return { error: `The RAS file's scans run over ${scans[0].header.get("MEAS_SCAN_AXIS_X")}, not 2θ; the check needs a 2θ scan.` };
  }
  const scan = scans[taken];
  const h = scan.header;
  const meta = metadataOf(h);
  if (scans.length > 1) {
    warnings.push(`The RAS file holds ${scans.length} scans; scan ${taken + 1} was read.`);
    meta.scansInFile = scans.length;
    meta.scanTaken = taken + 1;
  }
  const unitX = h.get("MEAS_SCAN_UNIT_X");
  if (unitX && !/deg|°/i.test(unitX)) return { error: `The RAS scan's angles are in ${unitX}, not degrees 2θ.` };
  const n = scan.rows.length;
  const twoTheta = new Float64Array(n);
  const intensity = new Float64Array(n);
  const fields: number[] = [];
  let kept = 0;
  let bad = 0;
  for (const row of scan.rows) {
    const count = numbersOfLine(row, fields);
    if (count < 2) {
      bad++;
      continue;
    }
    twoTheta[kept] = fields[0];
    // A third column is the attenuator factor the counts were taken through.
    intensity[kept] = count >= 3 && Number.isFinite(fields[2]) && fields[2] > 0 ? fields[1] * fields[2] : fields[1];
    kept++;
  }
  if (bad > n * 0.2) return { error: `${bad} of the RAS file's ${n} data lines are not numbers; the scan is unusable.` };
  if (bad > 0) warnings.push(`${bad} data lines that are not numbers were skipped.`);
  const stated = toNumber(h.get("MEAS_DATA_COUNT"));
  if (Number.isFinite(stated) && stated > 0 && Math.abs(stated - kept) > 1) {
    warnings.push(`The header states ${stated} points but the scan holds ${kept}; the ${kept} were read.`);
  }
  return { twoTheta: twoTheta.subarray(0, kept), intensity: intensity.subarray(0, kept), metadata: meta, warnings };
}

function metadataOf(h: Map<string, string>): ScanMetadata {
  const text = (key: string) => {
    const v = h.get(key);
    return v && v !== "N/A" ? v : undefined;
  };
  const num = (key: string) => {
    const v = toNumber(h.get(key));
    return Number.isFinite(v) ? v : undefined;
  };
  const nm = /^nm$/i.test(h.get("HW_XG_WAVE_LENGTH_UNIT") ?? "");
  const wave = (key: string) => {
    const v = num(key);
    return v !== undefined && v > 0 ? (nm ? v * 10 : v) : undefined;
  };
  const meta: ScanMetadata = { probe: "x-ray" };
  meta.anode = anodeSymbol(text("HW_XG_TARGET_NAME"));
  meta.kAlpha1 = wave("HW_XG_WAVE_LENGTH_ALPHA1");
  meta.kAlpha2 = wave("HW_XG_WAVE_LENGTH_ALPHA2");
  meta.kBeta = wave("HW_XG_WAVE_LENGTH_BETA");
  meta.tubeVoltageKv = num("MEAS_COND_XG_VOLTAGE");
  meta.tubeCurrentMa = num("MEAS_COND_XG_CURRENT");
  if (/^v$/i.test(h.get("HW_XG_VOLTAGE_UNIT") ?? "") && meta.tubeVoltageKv !== undefined) meta.tubeVoltageKv /= 1000;
  if (/^(µ|u)a$/i.test(h.get("HW_XG_CURRENT_UNIT") ?? "") && meta.tubeCurrentMa !== undefined) meta.tubeCurrentMa /= 1000;
  meta.scanAxis = text("MEAS_SCAN_AXIS_X");
  const mode = text("MEAS_SCAN_MODE");
  if (mode) meta.scanMode = /cont/i.test(mode) ? "continuous" : /step/i.test(mode) ? "step" : mode;
  meta.step = num("MEAS_SCAN_STEP");
  const speed = num("MEAS_SCAN_SPEED");
  const speedUnit = h.get("MEAS_SCAN_SPEED_UNIT") ?? "";
  if (speed !== undefined && speed > 0) {
    // deg/min for a continuous scan (time per step = step / speed); seconds per step for a step scan.
    if (/min/i.test(speedUnit) && meta.step) meta.timePerStep = (60 * meta.step) / speed;
    else if (/^s(ec)?$/i.test(speedUnit)) meta.timePerStep = speed;
  }
  const unitY = text("MEAS_SCAN_UNIT_Y") ?? text("DISP_UNIT_Y");
  if (unitY) meta.intensityUnit = /^cps$/i.test(unitY) ? "counts per second" : /count/i.test(unitY) ? "counts" : unitY;
  meta.sampleName = text("FILE_SAMPLE");
  meta.title = text("FILE_COMMENT") ?? text("FILE_MEMO");
  // Rigaku software writes the start time month first (m/d/y), some versions year first.
  meta.measuredAt = isoDate(text("MEAS_SCAN_START_TIME"), "mdy");
  const goniometer = english(text("HW_GONIOMETER_NAME"));
  meta.instrument =
    text("HW_USERINFO_INSTRUMENT_NAME") ||
    text("HW_USERINFO_MODEL") ||
    (goniometer && !/^(standard|none|unknown)$/i.test(goniometer) ? goniometer : undefined) ||
    text("HW_USERINFO_SERIAL_NO") ||
    undefined;
  const slits = slitsOf(h);
  if (slits.length > 0) meta.slits = slits;
  for (const key of Object.keys(meta) as (keyof ScanMetadata)[]) if (meta[key] === undefined) delete meta[key];
  return meta;
}

/** A value in two languages ("日本語|English") as its last part. */
function english(value: string | undefined): string | undefined {
  if (!value) return undefined;
  const parts = value.split("|").map((p) => p.trim());
  return parts[parts.length - 1] || undefined;
}

/**
 * The optics the header lists as condition axes: `MEAS_COND_AXIS_NAME_INTERNAL-n` (English) or `MEAS_COND_AXIS_NAME-n`
 * naming a slit, Soller slit, filter, attenuator or monochromator, with `MEAS_COND_AXIS_POSITION-n` (and its unit).
 */
function slitsOf(h: Map<string, string>): ScanSetting[] {
  const out: ScanSetting[] = [];
  for (const [key, shown] of h) {
    const m = /^MEAS_COND_AXIS_NAME-(\d+)$/.exec(key);
    if (!m) continue;
    const name = h.get(`MEAS_COND_AXIS_NAME_INTERNAL-${m[1]}`) || shown;
    if (!/slit|soller|attenuat|filter|monochromator/i.test(name)) continue;
    const position = h.get(`MEAS_COND_AXIS_POSITION-${m[1]}`);
    if (!position || /^(N\/A|None)$/i.test(position)) continue;
    const unit = h.get(`MEAS_COND_AXIS_UNIT-${m[1]}`);
    out.push({ name, value: unit && !/^(none|)$/i.test(unit) ? `${position} ${unit}` : position });
  }
  const wave = h.get("MEAS_COND_XG_WAVE_TYPE");
  if (wave) out.push({ name: "X-ray line selected", value: wave });
  return out;
}

export const rigakuRasReader: ScanReader = {
  format: "ras",
  label: "RAS text scan",
  sniff,
  read,
};
