// What a scan file states about its measurement, in plain words, and the radiation it names compared with the
// quote's instrument (browser-safe: the delivery screen, the check screen and the worker use the same words).
import type { ScanMetadata } from "~/diffraction/readers/types";
import { ANODE_LINES, ANODES, type Anode, type Monochromation, type Radiation } from "~/diffraction/wavelengths";

/** What is kept of a read scan beside the file (`order_files.scan_info`): it survives a check that fails later. */
export interface ScanInfo {
  /** The format as people read it ("XRDML (XML)"). */
  formatLabel: string;
  metadata: ScanMetadata;
  /** Points read and the scan's 2θ range, degrees. */
  points: number;
  twoThetaMin: number;
  twoThetaMax: number;
}

/**
 * The conditions the lab enters for a scan beside what its file states (`order_files.conditions`): the form
 * asks only for what the file leaves out, and each value says where it came from.
 */
export interface MeasurementConditions {
  /** Radiation in words ("Cu Kα, Ni filter"), when the file names none. */
  radiation?: string | null;
  twoThetaStart?: number | null;
  twoThetaEnd?: number | null;
  /** Step and counting time per step, degrees and seconds. */
  step?: number | null;
  timePerStep?: number | null;
  temperatureK?: number | null;
  atmosphere?: string | null;
  /** Sample holder or capillary as the lab describes it. */
  holder?: string | null;
  note?: string | null;
  enteredBy?: string | null;
  enteredAt?: string | null;
}

/**
 * A stated wavelength names a tube anode when it lies within this many ångström of the anode's Kα1 or of its
 * weighted Kα mean (2Kα1 + Kα2)/3, the two values files usually state (common practice). Neighbouring anodes'
 * lines are at least 0.15 Å apart, so the tolerance cannot confuse two of them.
 */
const ANODE_TOLERANCE = 0.002;
/** Two single wavelengths closer than this share (relative) are the same source (common practice). */
const SAME_WAVELENGTH = 1e-3;
/** The monochromation assumed for a file's anode when the quote's instrument names none (a tube's usual doublet). */
const DEFAULT_MONOCHROMATION: Monochromation = "k_alpha_doublet";

export function anodeOfWavelength(wavelength: number): Anode | null {
  for (const anode of ANODES) {
    const { kAlpha1, kAlpha2 } = ANODE_LINES[anode];
    const mean = (2 * kAlpha1 + kAlpha2) / 3;
    if (Math.abs(wavelength - kAlpha1) <= ANODE_TOLERANCE || Math.abs(wavelength - mean) <= ANODE_TOLERANCE) return anode;
  }
  return null;
}

const usable = (w: number | undefined): w is number => typeof w === "number" && Number.isFinite(w) && w > 0 && w < 20;
const isAnode = (a: string | undefined): a is Anode => !!a && (ANODES as readonly string[]).includes(a);

/**
 * The radiation a file states, as the check takes it, or null when it states none. A tube anode keeps the
 * instrument's monochromation (the file rarely says how the beam was cleaned); a wavelength that is no tube
 * line, or any neutron wavelength, is a single wavelength.
 */
export function radiationStatedBy(metadata: ScanMetadata | null | undefined, instrument: Radiation | null): Radiation | null {
  if (!metadata) return null;
  const monochromation = instrument?.kind === "anode" ? instrument.monochromation : DEFAULT_MONOCHROMATION;
  const wavelength = usable(metadata.kAlpha1) ? metadata.kAlpha1 : usable(metadata.wavelength) ? metadata.wavelength : undefined;
  if (metadata.probe === "neutron") return wavelength ? { kind: "custom", wavelength } : null;
  if (isAnode(metadata.anode)) return { kind: "anode", anode: metadata.anode, monochromation };
  if (!wavelength) return null;
  const anode = anodeOfWavelength(wavelength);
  return anode ? { kind: "anode", anode, monochromation } : { kind: "custom", wavelength };
}

const wavelengthOf = (r: Radiation) => (r.kind === "anode" ? ANODE_LINES[r.anode].kAlpha1 : r.wavelength);

/** Whether two radiations are the same source (same anode, or wavelengths within 0.1 %; a tube line matches its anode). */
export function sameSource(a: Radiation, b: Radiation): boolean {
  if (a.kind === "anode" && b.kind === "anode") return a.anode === b.anode;
  if (a.kind === "custom" && b.kind === "custom") return Math.abs(a.wavelength - b.wavelength) <= SAME_WAVELENGTH * b.wavelength;
  const custom = a.kind === "custom" ? a : (b as Extract<Radiation, { kind: "custom" }>);
  const tube = a.kind === "anode" ? a : (b as Extract<Radiation, { kind: "anode" }>);
  return anodeOfWavelength(custom.wavelength) === tube.anode;
}

/** A source in words: "Co Kα (1.789 Å)" or "a wavelength of 0.459 Å". */
export function sourceWords(r: Radiation): string {
  return r.kind === "anode" ? `${r.anode} Kα (${wavelengthOf(r).toFixed(3)} Å)` : `a wavelength of ${+r.wavelength.toFixed(5)} Å`;
}

export type RadiationSource = "file" | "instrument" | "assumed";

/** Copper Kα doublet: what the check assumes when neither the file nor the quote's instrument names a source. */
export const ASSUMED_RADIATION: Radiation = { kind: "anode", anode: "Cu", monochromation: "k_alpha_doublet" };

export interface RadiationChoice {
  radiation: Radiation;
  source: RadiationSource;
  /** The sentence the lab must read when the file's source differs from the quote's instrument, else null. */
  mismatch: string | null;
  /** Other notes about the choice (an assumed source, a file's source used for want of an instrument). */
  notes: string[];
}

/**
 * The radiation a scan is checked with: the file's own when it states one, else the quote's instrument's, else
 * copper Kα (said so). When the file's source differs from the instrument's, the mismatch is put in words.
 */
export function chooseRadiation(metadata: ScanMetadata | null | undefined, instrument: Radiation | null, instrumentName: string | null): RadiationChoice {
  const stated = radiationStatedBy(metadata, instrument);
  // Neutrons are never a tube's radiation, whatever their wavelength (no Kα2 line with them).
  const neutrons = metadata?.probe === "neutron";
  if (stated && instrument) {
    if (sameSource(stated, instrument) && !(neutrons && instrument.kind === "anode"))
      return { radiation: instrument, source: "instrument", mismatch: null, notes: [] };
    const named = instrumentName ? `the ${sourceLabel(instrument)} instrument “${instrumentName}”` : `an instrument with ${sourceWords(instrument)}`;
    const measured = neutrons && stated.kind === "custom" ? `neutrons of ${+stated.wavelength.toFixed(5)} Å` : sourceWords(stated);
    return {
      radiation: stated,
      source: "file",
      mismatch: `This file was measured with ${measured} but the quote names ${named}; the check used the file's radiation.`,
      notes: [],
    };
  }
  if (stated) {
    return {
      radiation: stated,
      source: "file",
      mismatch: null,
      notes: [`The quote names no instrument with a known source, so the check used the radiation the file states: ${sourceWords(stated)}.`],
    };
  }
  if (instrument) return { radiation: instrument, source: "instrument", mismatch: null, notes: [] };
  return {
    radiation: ASSUMED_RADIATION,
    source: "assumed",
    mismatch: null,
    notes: ["Neither the file nor the quote's instrument names the radiation, so the check assumed Cu Kα radiation."],
  };
}

/** "Cu" for a tube, "0.459 Å" for a single wavelength: how an instrument's source is named in a sentence. */
function sourceLabel(r: Radiation) {
  return r.kind === "anode" ? `${r.anode} Kα (${wavelengthOf(r).toFixed(3)} Å)` : `${+r.wavelength.toFixed(5)} Å`;
}

// ——— The measurement conditions in words ———

const num = (v: number, digits = 4) => String(+v.toFixed(digits));
const finite = (v: unknown): v is number => typeof v === "number" && Number.isFinite(v);
const ordinal = (n: number) => `${n}${n % 100 >= 11 && n % 100 <= 13 ? "th" : (["th", "st", "nd", "rd"][n % 10] ?? "th")}`;

/** A date or date-time as the file states it, without the "T" and seconds' fraction of ISO 8601. */
function dateWords(iso: string) {
  const m = /^(\d{4}-\d{2}-\d{2})(?:[T ](\d{2}:\d{2})(?::\d{2}(?:\.\d+)?)?(Z|[+-]\d{2}:?\d{2})?)?$/.exec(iso.trim());
  if (!m) return iso.trim();
  return [m[1], m[2], m[3] && m[3] !== "Z" ? `(UTC${m[3]})` : m[3] ? "UTC" : ""].filter(Boolean).join(" ");
}

export interface ConditionRow {
  label: string;
  value: string;
}

/**
 * The measurement conditions a scan file states, one row per fact, in plain words; only what the file states
 * (with the file format and, when known, the range read from the data).
 */
export function measurementConditions(info: {
  formatLabel?: string | null;
  metadata?: ScanMetadata | null;
  points?: number | null;
  twoThetaMin?: number | null;
  twoThetaMax?: number | null;
}): ConditionRow[] {
  const m: ScanMetadata = info.metadata ?? {};
  const rows: ConditionRow[] = [];
  const add = (label: string, value: string | null | undefined) => {
    if (value?.trim()) rows.push({ label, value: value.trim() });
  };
  add("File format", info.formatLabel);

  const lines = [
    finite(m.kAlpha1) ? `Kα1 ${m.kAlpha1} Å` : null,
    finite(m.kAlpha2) ? `Kα2 ${m.kAlpha2} Å` : null,
    finite(m.kBeta) ? `Kβ ${m.kBeta} Å` : null,
    finite(m.wavelength) && m.wavelength !== m.kAlpha1 ? `λ ${m.wavelength} Å` : null,
  ].filter(Boolean);
  const probe = m.probe === "neutron" ? "Neutrons" : m.probe === "x-ray" && !m.anode ? "X-rays" : null;
  add("Radiation", [m.anode ? `${m.anode} anode` : probe, lines.join(", ")].filter(Boolean).join(" · "));
  if (finite(m.kAlpha2Ratio)) add("Kα2/Kα1 ratio", num(m.kAlpha2Ratio, 4));
  add(
    "Tube",
    [finite(m.tubeVoltageKv) ? `${num(m.tubeVoltageKv, 1)} kV` : null, finite(m.tubeCurrentMa) ? `${num(m.tubeCurrentMa, 1)} mA` : null]
      .filter(Boolean)
      .join(", "),
  );
  add("Scan", [m.scanAxis ? `${m.scanAxis} axis` : null, m.scanMode ? `${m.scanMode} scan` : null].filter(Boolean).join(", "));

  const range = finite(info.twoThetaMin) && finite(info.twoThetaMax) ? `${num(info.twoThetaMin, 3)}°–${num(info.twoThetaMax, 3)}° 2θ` : null;
  add(
    "Range and step",
    [range, finite(m.step) ? `step ${num(m.step, 5)}°` : null, finite(info.points) && info.points > 0 ? `${info.points} points` : null]
      .filter(Boolean)
      .join(", "),
  );
  if (finite(m.timePerStep)) add("Time per step", `${num(m.timePerStep, 3)} s`);
  add("Intensities", m.intensityUnit);
  add("Slits and optics", (m.slits ?? []).map((s) => `${s.name} ${s.value}`.trim()).join("; "));
  add("Sample (as in the file)", m.sampleName);
  if (m.measuredAt) add("Measured", dateWords(m.measuredAt));
  add("Instrument (as in the file)", m.instrument);
  if (finite(m.scansInFile) && m.scansInFile > 1) {
    add("Scans in the file", `${m.scansInFile}; the ${ordinal(m.scanTaken ?? 1)} was read`);
  }
  return rows;
}

/** One line for a file list: format, source, range and step (what tells files apart at a glance). */
export function measurementSummary(info: Parameters<typeof measurementConditions>[0]): string {
  const wanted = new Set(["File format", "Radiation", "Range and step"]);
  return measurementConditions(info)
    .filter((r) => wanted.has(r.label))
    .map((r) => r.value)
    .join(" · ");
}

// ——— The conditions the lab enters beside the file ———

/** The fields of MeasurementConditions the lab may enter, with their labels and units. */
export const CONDITION_FIELDS = [
  { key: "radiation", label: "Radiation", unit: null, kind: "text" },
  { key: "twoThetaStart", label: "2θ start", unit: "°", kind: "number" },
  { key: "twoThetaEnd", label: "2θ end", unit: "°", kind: "number" },
  { key: "step", label: "Step", unit: "°", kind: "number" },
  { key: "timePerStep", label: "Time per step", unit: "s", kind: "number" },
  { key: "temperatureK", label: "Temperature", unit: "K", kind: "number" },
  { key: "atmosphere", label: "Atmosphere", unit: null, kind: "text" },
  { key: "holder", label: "Sample holder or capillary", unit: null, kind: "text" },
  { key: "note", label: "Note", unit: null, kind: "text" },
] as const satisfies readonly { key: keyof MeasurementConditions; label: string; unit: string | null; kind: "text" | "number" }[];

export type ConditionField = (typeof CONDITION_FIELDS)[number];

/**
 * The fields the form asks for: those the file does not state. The radiation, step and time per step are asked
 * only when the file names none; the range only when the file was not read; the rest (temperature, atmosphere,
 * holder, note) always, since scan files seldom state them.
 */
export function conditionFieldsToAsk(info: { metadata?: ScanMetadata | null; twoThetaMin?: number | null } | null | undefined): ConditionField[] {
  const m: ScanMetadata = info?.metadata ?? {};
  const statesRadiation = !!m.anode || finite(m.kAlpha1) || finite(m.wavelength);
  return CONDITION_FIELDS.filter((f) => {
    if (f.key === "radiation") return !statesRadiation;
    if (f.key === "twoThetaStart" || f.key === "twoThetaEnd") return !finite(info?.twoThetaMin);
    if (f.key === "step") return !finite(m.step);
    if (f.key === "timePerStep") return !finite(m.timePerStep);
    return true;
  });
}

/** The lab's entries as rows in plain words (nothing for fields left empty). */
export function enteredConditionRows(c: MeasurementConditions | null | undefined): ConditionRow[] {
  if (!c) return [];
  const rows: ConditionRow[] = [];
  for (const f of CONDITION_FIELDS) {
    const v = c[f.key];
    if (v === null || v === undefined || v === "") continue;
    if (typeof v === "number") {
      if (!Number.isFinite(v)) continue;
      rows.push({ label: f.label, value: `${num(v, 5)}${f.unit === "°" ? "°" : f.unit ? ` ${f.unit}` : ""}` });
    } else rows.push({ label: f.label, value: String(v).trim() });
  }
  return rows;
}
