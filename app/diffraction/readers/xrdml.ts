// XRDML: the XML scan files of a common lab diffractometer make (root element xrdMeasurements). The elements
// read, their meaning and the sources of the layout are in docs/scan-formats.md#xrdml.
//
// The XML is parsed by fast-xml-parser (docs/decisions/011-scan-reader-registry.md). The long number lists
// (counts, intensities, factors, positions, counting times) are kept as raw text by the parser and split here.

import { XMLParser, XMLValidator } from "fast-xml-parser";
import { angle } from "./binary";
import { decode } from "./source";
import { anodeSymbol, failedField, isoDate, numberIn, numberLayout, scanNumbers } from "./text";
import type { ReadScan, ScanMetadata, ScanReader, ScanSetting, ScanSource } from "./types";

type XmlNode = Record<string, unknown>;

/** Elements that hold one number per data point. */
const LIST_ELEMENTS = ["counts", "intensities", "beamAttenuationFactors", "listPositions", "countingTimes"];

const parser = new XMLParser({
  ignoreAttributes: false,
  attributeNamePrefix: "@_",
  removeNSPrefix: true,
  parseTagValue: false,
  parseAttributeValue: false,
  trimValues: true,
  stopNodes: LIST_ELEMENTS.map((name) => `*.${name}`),
});

export const xrdmlReader: ScanReader = {
  format: "xrdml",
  label: "XRDML (XML)",
  sniff(source) {
    const root = rootElement(decode(source.bytes.subarray(0, 4096)));
    if (root === "xrdMeasurements") return 1;
    // A single measurement written without its wrapper: not what the schema says, but plainly this format.
    if (root === "xrdMeasurement") return 0.8;
    return 0;
  },
  read: readXrdml,
};

// ——— Sniffing ———

/** The local name (prefix dropped) of the first element, skipping the XML declaration, comments and DOCTYPE. */
function rootElement(text: string): string | null {
  let i = text.charCodeAt(0) === 0xfeff ? 1 : 0;
  const n = text.length;
  while (i < n) {
    const c = text.charCodeAt(i);
    if (c === 32 || c === 9 || c === 10 || c === 13) {
      i++;
      continue;
    }
    if (c !== 60) return null; // "<"
    if (text.startsWith("<?", i)) i = after(text, "?>", i);
    else if (text.startsWith("<!--", i)) i = after(text, "-->", i);
    else if (text.startsWith("<!", i)) {
      const close = text.indexOf(">", i);
      const subset = text.indexOf("[", i);
      i = subset >= 0 && subset < close ? after(text, "]>", subset) : after(text, ">", i);
    } else {
      let j = i + 1;
      while (j < n && !" \t\r\n/>".includes(text[j])) j++;
      const name = text.slice(i + 1, j);
      const colon = name.indexOf(":");
      return colon >= 0 ? name.slice(colon + 1) : name;
    }
    if (i < 0) return null;
  }
  return null;
}

function after(text: string, token: string, from: number): number {
  const at = text.indexOf(token, from);
  return at < 0 ? -1 : at + token.length;
}

// ——— Reading ———

/**
 * The text with long runs of plain numbers between tags cut to one digit (their line ends kept), for the
 * well-formedness check: digits, signs, points and blanks cannot make XML ill-formed, and the validator then
 * reads the markup rather than 130 000 numbers. The parser still reads the whole text.
 */
function markupOf(text: string): string {
  const parts: string[] = [];
  let kept = 0;
  let close = text.indexOf(">");
  while (close >= 0) {
    const open = text.indexOf("<", close + 1);
    if (open < 0) break;
    if (open - close > 256 && plainNumbers(text, close + 1, open)) {
      let lineEnds = "";
      for (let i = close + 1; i < open; i++) if (text.charCodeAt(i) === 10) lineEnds += "\n";
      parts.push(text.slice(kept, close + 1), "0", lineEnds);
      kept = open;
    }
    close = text.indexOf(">", open);
  }
  if (kept === 0) return text;
  parts.push(text.slice(kept));
  return parts.join("");
}

/** Only digits, signs, points, exponent marks and blanks between start and end. */
function plainNumbers(text: string, start: number, end: number): boolean {
  for (let i = start; i < end; i++) {
    const c = text.charCodeAt(i);
    const ok = (c >= 48 && c <= 57) || c === 32 || c === 10 || c === 13 || c === 9 || c === 46 || c === 45 || c === 43 || c === 101 || c === 69;
    if (!ok) return false;
  }
  return true;
}

interface ScanValues {
  /** 1-based number of the scan among all scans of the file. */
  number: number;
  measurement: XmlNode;
  scan: XmlNode;
  twoTheta: Float64Array;
  intensity: Float64Array;
  /** Variance of each value when attenuation factors were applied to raw counts. */
  variance?: Float64Array;
  unit: "counts" | "counts per second";
  /** Seconds per step when the file states one common counting time. */
  timePerStep?: number;
  notes: string[];
}

function readXrdml(source: ScanSource): ReadScan | { error: string } {
  let text = source.text();
  if (text.charCodeAt(0) === 0xfeff) text = text.slice(1);
  const valid = XMLValidator.validate(markupOf(text));
  if (valid !== true) {
    return { error: `The XRDML file is not well-formed XML (the fault is near line ${valid.err.line}); it may be cut off or damaged.` };
  }
  let doc: XmlNode;
  try {
    doc = parser.parse(text) as XmlNode;
  } catch {
    return { error: "The XRDML file could not be read as XML; it may be damaged." };
  }
  const root = node(doc.xrdMeasurements);
  const measurements = root ? nodes(root.xrdMeasurement) : nodes(doc.xrdMeasurement);
  const all: { measurement: XmlNode; scan: XmlNode }[] = [];
  for (const measurement of measurements) for (const scan of nodes(measurement.scan)) all.push({ measurement, scan });
  if (all.length === 0) return { error: "The XRDML file holds no scan." };

  const usable: ScanValues[] = [];
  const problems: { number: number; error: string }[] = [];
  const otherAxes = new Set<string>();
  all.forEach(({ measurement, scan }, k) => {
    const values = scanValues(measurement, scan, k + 1);
    if (values === null) otherAxes.add(attribute(scan, "scanAxis") ?? "another axis");
    else if ("error" in values) problems.push({ number: k + 1, error: values.error });
    else usable.push(values);
  });
  if (usable.length === 0) {
    if (problems.length > 0) return { error: problems[0].error };
    const axes = [...otherAxes].join(", ");
    return { error: `The XRDML file has no scan over 2θ (its scans run over ${axes}); a powder scan over 2θ is needed.` };
  }

  const warnings: string[] = [];
  for (const p of problems) warnings.push(`${p.error.slice(0, -1)}; that scan was left out.`);
  const chosen = combine(usable, all.length, warnings);
  const metadata = metadataOf(root ?? doc, chosen.measurement, chosen.scan);
  metadata.intensityUnit = chosen.unit;
  if (chosen.timePerStep !== undefined) metadata.timePerStep = chosen.timePerStep;
  const n = chosen.twoTheta.length;
  if (n > 1) metadata.step = Number(Math.abs((chosen.twoTheta[n - 1] - chosen.twoTheta[0]) / (n - 1)).toPrecision(10));
  metadata.scansInFile = all.length;
  metadata.scanTaken = chosen.number;
  warnings.push(...chosen.notes);
  return {
    twoTheta: chosen.twoTheta,
    intensity: chosen.intensity,
    esd: chosen.variance ? chosen.variance.map(Math.sqrt) : undefined,
    metadata,
    warnings,
  };
}

/**
 * One scan's 2θ positions and intensities as counts where the file allows it; null when the scan does not run
 * over 2θ (an omega rocking curve, a fixed 2θ), an error sentence when its numbers do not fit together.
 */
function scanValues(measurement: XmlNode, scan: XmlNode, number: number): ScanValues | null | { error: string } {
  const points = node(scan.dataPoints);
  if (!points) return { error: `The XRDML file's scan ${number} has no data points.` };
  const valuesNode = points.counts ?? points.intensities;
  const raw = points.counts !== undefined;
  if (valuesNode === undefined) return { error: `The XRDML file's scan ${number} has neither counts nor intensities.` };
  const values = numberList(textOf(valuesNode));
  if ("bad" in values) return { error: `The XRDML file's scan ${number} has "${values.bad}" among its intensities, which is not a number.` };
  const n = values.list.length;
  if (n === 0) return { error: `The XRDML file's scan ${number} has an empty list of intensities.` };
  const positions = twoThetaOf(points, n, number);
  if (positions === null || "error" in positions) return positions;

  const intensity = values.list;
  const notes: string[] = [];
  let unit: ScanValues["unit"] = perSecond(attribute(valuesNode, "unit")) ? "counts per second" : "counts";

  // Raw counts are not yet corrected for the beam attenuator; the corrected "intensities" already are.
  let variance: Float64Array | undefined;
  if (raw) {
    const factors = perPoint(points.beamAttenuationFactors, points.commonBeamAttenuationFactor, n, number, "beam attenuation factors");
    if (factors !== null && typeof factors === "object" && "error" in factors) return factors;
    if (factors !== null) {
      let attenuated = 0;
      variance = new Float64Array(n);
      for (let i = 0; i < n; i++) {
        const f = typeof factors === "number" ? factors : factors[i];
        if (!(f > 0 && Number.isFinite(f))) return { error: `The XRDML file's scan ${number} has a beam attenuation factor of ${f}, which cannot be.` };
        if (f !== 1) attenuated++;
        variance[i] = f * f * Math.max(intensity[i], 1);
        intensity[i] *= f;
      }
      if (attenuated > 0)
        notes.push(`The raw counts of ${attenuated} points measured through the beam attenuator were multiplied by the file's attenuation factors.`);
      else variance = undefined;
    }
  }

  if (raw && Object.keys(points).some((key) => key.toLowerCase().includes("divergencecorrection"))) {
    notes.push("The file states divergence-slit correction factors; they were not applied, so the counts are as measured.");
  }

  // Counting time per step, in seconds: one common value, or one per point.
  const times = perPoint(points.countingTimes, points.commonCountingTime, n, number, "counting times");
  if (times !== null && typeof times === "object" && "error" in times) return times;
  const timeScale = secondsPer(attribute(points.commonCountingTime ?? points.countingTimes, "unit"));
  let common: number | undefined;
  let usableTimes = times !== null;
  if (typeof times === "number") {
    common = times * timeScale;
    usableTimes = common > 0 && Number.isFinite(common);
  } else if (times !== null) {
    common = times[0] * timeScale;
    for (let i = 0; i < n; i++) {
      const t = times[i] * timeScale;
      times[i] = t;
      if (t !== common) common = undefined;
      if (!(t > 0 && Number.isFinite(t))) usableTimes = false;
    }
  }
  if (unit === "counts per second" && times !== null && usableTimes) {
    for (let i = 0; i < n; i++) {
      const t = typeof times === "number" ? common! : times[i];
      intensity[i] *= t;
      if (variance) variance[i] *= t * t;
    }
    unit = "counts";
    notes.push(
      common !== undefined
        ? `The file gives counts per second; they were multiplied by the counting time of ${common} s per step to give counts.`
        : "The file gives counts per second; they were multiplied by each step's counting time to give counts.",
    );
  }
  return { number, measurement, scan, twoTheta: positions, intensity, variance, unit, timePerStep: common, notes };
}

/** The 2θ positions of a scan of n points: evenly spaced from start to end, or listed one per point. */
function twoThetaOf(points: XmlNode, n: number, number: number): Float64Array | null | { error: string } {
  const axis = nodes(points.positions).find((p) => attribute(p, "axis")?.toLowerCase() === "2theta");
  if (!axis) return null;
  const scale = attribute(axis, "unit")?.toLowerCase().startsWith("rad") ? 180 / Math.PI : 1;
  if (axis.listPositions !== undefined) {
    const listed = numberList(textOf(axis.listPositions));
    if ("bad" in listed) return { error: `The XRDML file's scan ${number} has "${listed.bad}" among its 2θ positions, which is not a number.` };
    if (listed.list.length !== n) return { error: `The XRDML file's scan ${number} lists ${listed.list.length} 2θ positions but ${n} intensities.` };
    const list = listed.list;
    let varies = false;
    for (let i = 0; i < n; i++) {
      list[i] *= scale;
      varies ||= list[i] !== list[0];
    }
    return varies || n === 1 ? list : null;
  }
  const start = toNumber(textOf(axis.startPosition)) * scale;
  const end = toNumber(textOf(axis.endPosition)) * scale;
  if (Number.isFinite(start) && Number.isFinite(end)) {
    if (start === end && n > 1) return null;
    const twoTheta = new Float64Array(n);
    const step = n > 1 ? (end - start) / (n - 1) : 0;
    for (let i = 0; i < n; i++) twoTheta[i] = start + i * step;
    if (n > 1) twoTheta[n - 1] = end;
    return twoTheta;
  }
  if (axis.commonPosition !== undefined) return null;
  return { error: `The XRDML file's scan ${number} gives no 2θ positions (neither a start and end nor a list).` };
}

/**
 * One value per point from a list element, or one common value (a list of one counts as common); null when the
 * file states neither, a sentence when the list does not fit.
 */
function perPoint(listNode: unknown, commonNode: unknown, n: number, number: number, what: string): Float64Array | number | { error: string } | null {
  if (listNode !== undefined) {
    const listed = numberList(textOf(listNode));
    if ("bad" in listed) return { error: `The XRDML file's scan ${number} has "${listed.bad}" among its ${what}, which is not a number.` };
    if (listed.list.length === n) return listed.list;
    if (listed.list.length === 1) return listed.list[0];
    return { error: `The XRDML file's scan ${number} lists ${listed.list.length} ${what} for ${n} data points.` };
  }
  if (commonNode !== undefined) {
    const value = toNumber(textOf(commonNode));
    if (!Number.isFinite(value)) return { error: `The XRDML file's scan ${number} states its common ${what.replace(/s$/, "")} without a number.` };
    return value;
  }
  return null;
}

/** Several scans: added (or averaged) point by point when they cover the same 2θ points, else the first. */
function combine(usable: ScanValues[], total: number, warnings: string[]): ScanValues {
  const first = usable[0];
  const n = first.twoTheta.length;
  const range = `${angle(Math.min(first.twoTheta[0], first.twoTheta[n - 1]))}–${angle(Math.max(first.twoTheta[0], first.twoTheta[n - 1]))}° 2θ`;
  if (usable.length === 1) {
    if (total > 1) warnings.push(`The file holds ${total} scans; scan ${first.number} (${range}), the only usable one over 2θ, was read.`);
    return first;
  }
  const step = n > 1 ? Math.abs(first.twoTheta[1] - first.twoTheta[0]) : 1;
  const tolerance = step * 1e-3;
  const sameRange = usable.every(
    (s) =>
      s.twoTheta.length === n &&
      s.unit === first.unit &&
      Math.abs(s.twoTheta[0] - first.twoTheta[0]) <= tolerance &&
      Math.abs(s.twoTheta[n - 1] - first.twoTheta[n - 1]) <= tolerance,
  );
  const k = usable.length;
  if (!sameRange) {
    warnings.push(`The file holds ${k} scans over different 2θ ranges or units; the first (scan ${first.number}, ${range}) was read.`);
    return first;
  }
  const intensity = new Float64Array(n);
  const anyVariance = usable.some((s) => s.variance);
  const variance = anyVariance ? new Float64Array(n) : undefined;
  for (const s of usable) {
    for (let i = 0; i < n; i++) {
      intensity[i] += s.intensity[i];
      if (variance) variance[i] += s.variance ? s.variance[i] : Math.max(s.intensity[i], 1);
    }
  }
  const notes = [...new Set(usable.flatMap((s) => s.notes))];
  if (first.unit === "counts") {
    const times = usable.map((s) => s.timePerStep);
    const timePerStep = times.every((t) => t !== undefined) ? times.reduce((a, b) => a! + b!, 0) : undefined;
    warnings.push(`The file holds ${k} scans over the same range (${range}); their counts were added point by point.`);
    return { ...first, intensity, variance, timePerStep, notes };
  }
  for (let i = 0; i < n; i++) intensity[i] /= k;
  if (variance) for (let i = 0; i < n; i++) variance[i] /= k * k;
  warnings.push(`The file holds ${k} scans over the same range (${range}); their counts per second were averaged point by point.`);
  return { ...first, intensity, variance, notes };
}

// ——— What the file states about the measurement ———

/** Optics named in the beam paths, in the order they are reported. */
const OPTICS: [string, string][] = [
  ["divergenceSlit", "divergence slit"],
  ["antiScatterSlit", "anti-scatter slit"],
  ["receivingSlit", "receiving slit"],
  ["sollerSlit", "Soller slit"],
  ["mask", "beam mask"],
  ["parallelPlateCollimator", "parallel-plate collimator"],
  ["xRayMirror", "X-ray mirror"],
  ["monochromator", "monochromator"],
  ["filter", "filter"],
  ["beamAttenuator", "beam attenuator"],
];

/** Dimensions of an optic reported beside its name, each with the unit the file gives. */
const DIMENSIONS = ["height", "width", "angle", "opening", "length", "thickness", "material"];

function metadataOf(root: XmlNode, measurement: XmlNode, scan: XmlNode): ScanMetadata {
  const metadata: ScanMetadata = { probe: "x-ray" };
  const wavelengths = node(measurement.usedWavelength);
  if (wavelengths) {
    metadata.kAlpha1 = wavelengthOf(wavelengths.kAlpha1);
    metadata.kAlpha2 = wavelengthOf(wavelengths.kAlpha2);
    metadata.kBeta = wavelengthOf(wavelengths.kBeta);
    metadata.kAlpha2Ratio = positive(toNumber(textOf(wavelengths.ratioKAlpha2KAlpha1)));
  }
  const incident = node(measurement.incidentBeamPath);
  const diffracted = node(measurement.diffractedBeamPath);
  const tube = node(incident?.xRayTube);
  if (tube) {
    metadata.anode = anodeSymbol(textOf(tube.anodeMaterial));
    metadata.tubeVoltageKv = quantity(tube.tension, { kv: 1, v: 1e-3 });
    metadata.tubeCurrentMa = quantity(tube.current, { ma: 1, a: 1e3, ua: 1e-3, µa: 1e-3 });
  }
  const slits: ScanSetting[] = [];
  for (const [side, path] of [
    ["incident-beam", incident],
    ["diffracted-beam", diffracted],
  ] as const) {
    if (!path) continue;
    for (const [key, label] of OPTICS) {
      for (const optic of nodes(path[key])) {
        const value = describeOptic(optic);
        if (value) slits.push({ name: `${side} ${label}`, value });
      }
    }
  }
  if (slits.length > 0) metadata.slits = slits;
  metadata.scanAxis = attribute(scan, "scanAxis");
  metadata.scanMode = scanMode(attribute(scan, "mode"));

  const sample = node(root.sample);
  const sampleName = text(sample?.name);
  const sampleId = text(sample?.id);
  metadata.sampleName = sampleName && sampleId && sampleName !== sampleId ? `${sampleName} (${sampleId})` : (sampleName ?? sampleId);

  const header = node(scan.header);
  const started = text(header?.startTimeStamp);
  if (started) metadata.measuredAt = isoTimeStamp(started) ? started : isoDate(started);
  const software = node(header?.source);
  const system = diffractometerOf(root) ?? text(software?.instrumentControlSoftware);
  const id = text(software?.instrumentID);
  const realId = id && [...id].some((c) => c !== "0") ? id : undefined;
  metadata.instrument = system && realId ? `${system} (instrument ID ${realId})` : (system ?? (realId ? `instrument ID ${realId}` : undefined));

  for (const key of Object.keys(metadata) as (keyof ScanMetadata)[]) if (metadata[key] === undefined) delete metadata[key];
  return metadata;
}

/** "Fixed slit 1/4° (height 0.38 mm)": the optic's name as the file gives it, with its stated dimensions. */
function describeOptic(optic: XmlNode): string | undefined {
  const name = attribute(optic, "name")?.trim();
  const dims: string[] = [];
  for (const key of DIMENSIONS) {
    for (const d of nodes(optic[key])) {
      const value = text(d);
      if (!value) continue;
      const unit = attribute(d, "unit");
      dims.push(`${key} ${value}${unit ? ` ${unit}` : ""}`);
    }
  }
  if (name && dims.length > 0) return `${name} (${dims.join(", ")})`;
  return name || (dims.length > 0 ? dims.join(", ") : undefined);
}

/** "Diffractometer system=EMPYREAN" among the file's comment entries. */
function diffractometerOf(root: XmlNode): string | undefined {
  for (const comment of nodes(root.comment)) {
    for (const entry of asArray(comment.entry)) {
      const line = textOf(entry);
      const key = "Diffractometer system=";
      if (line.startsWith(key)) return line.slice(key.length).trim() || undefined;
    }
  }
  return undefined;
}

function scanMode(mode: string | undefined): string | undefined {
  if (!mode) return undefined;
  const m = mode.toLowerCase();
  if (m === "continuous") return "continuous";
  if (m.includes("step") || m.includes("pre-set time") || m.includes("preset time")) return "step";
  return mode;
}

function wavelengthOf(value: unknown): number | undefined {
  const unit = attribute(value, "unit")?.toLowerCase();
  const scale = unit === "nm" ? 10 : unit === "pm" ? 0.01 : 1;
  return positive(toNumber(textOf(value)) * scale);
}

/** A number in the unit wanted, from the file's unit attribute (absent: already in that unit). */
function quantity(value: unknown, scales: Record<string, number>): number | undefined {
  const unit = attribute(value, "unit")?.toLowerCase();
  const scale = unit === undefined ? 1 : scales[unit];
  return scale === undefined ? undefined : positive(toNumber(textOf(value)) * scale);
}

/** "counts per second", "counts/s", "cps" — anything but plain counts per step. */
function perSecond(unit: string | undefined): boolean {
  if (!unit) return false;
  const u = unit.toLowerCase().split(/\s+/).join(" ");
  return u.includes("per second") || u.includes("per sec") || u.includes("/s") || u === "cps";
}

/** "2016-11-03T11:08:45+01:00": the schema's xs:dateTime, kept as written. */
function isoTimeStamp(value: string): boolean {
  const digit = (i: number) => value.charCodeAt(i) >= 48 && value.charCodeAt(i) <= 57;
  return digit(0) && digit(1) && digit(2) && digit(3) && value[4] === "-" && digit(5) && digit(6) && value[7] === "-" && digit(8) && digit(9);
}

function secondsPer(unit: string | undefined): number {
  const u = unit?.toLowerCase();
  return u === "ms" || u === "milliseconds" ? 1e-3 : 1;
}

function positive(value: number): number | undefined {
  return Number.isFinite(value) && value > 0 ? value : undefined;
}

// ——— The parsed tree ———

function asArray(value: unknown): unknown[] {
  return value === undefined ? [] : Array.isArray(value) ? value : [value];
}

/** Child elements as objects (an element holding only text is wrapped so attributes read as absent). */
function nodes(value: unknown): XmlNode[] {
  return asArray(value).map((v) => (typeof v === "object" && v !== null ? (v as XmlNode) : { "#text": v }));
}

function node(value: unknown): XmlNode | undefined {
  return nodes(value)[0];
}

/** An element's text: the element itself when it holds only text, its "#text" when it also has attributes. */
function textOf(value: unknown): string {
  const v = Array.isArray(value) ? value[0] : value;
  if (v === undefined || v === null) return "";
  if (typeof v === "object") {
    const t = (v as XmlNode)["#text"];
    return t === undefined || t === null ? "" : String(t);
  }
  return String(v);
}

/** Trimmed text, undefined when empty. */
function text(value: unknown): string | undefined {
  const t = textOf(value).trim();
  return t.length > 0 ? t : undefined;
}

function attribute(value: unknown, name: string): string | undefined {
  const v = Array.isArray(value) ? value[0] : value;
  if (typeof v !== "object" || v === null) return undefined;
  const a = (v as XmlNode)[`@_${name}`];
  return a === undefined || a === null ? undefined : String(a);
}

function toNumber(value: string): number {
  const t = value.trim();
  return numberIn(t, 0, t.length);
}

const LIST = numberLayout(" \t\n\r");

/** Numbers separated by blanks, tabs and line ends; the first field that is not a number is returned as `bad`. */
function numberList(value: string): { list: Float64Array } | { bad: string } {
  const n = value.length;
  // At most one number per two characters; the array is cut to the count at the end.
  const out = new Float64Array((n >> 1) + 1);
  const count = scanNumbers(value, 0, n, LIST, out);
  if (count >= 0) return { list: out.slice(0, count) };
  const start = failedField(count);
  let end = start;
  while (end < n && end < start + 20 && !isBlank(value.charCodeAt(end))) end++;
  return { bad: value.slice(start, end) };
}

function isBlank(c: number): boolean {
  return c === 32 || c === 10 || c === 13 || c === 9;
}
