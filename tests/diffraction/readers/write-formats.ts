// Writers of scan files in each text layout, for the reader tests. Each follows the published layout named beside it
// (docs/scan-formats.md lists the sources); none is a copy of another program's writer.

/** A record padded to 80 characters, as the GSAS manual asks of every line (LAUR 86-748, "GSAS Standard Powder Data File"). */
const record = (s: string) => s.padEnd(80);

export interface GsasStdOptions {
  title?: string;
  /** The optional second line `Instrument parameter <file>`. */
  instrumentFile?: string;
  comments?: string[];
  /** BCOEF(1) and BCOEF(2) as written, centidegrees 2θ. */
  start: string;
  step: string;
  /** Count of detectors per point (NCTR); blank (1) when absent. */
  nctr?: (i: number) => number | null;
  newline?: string;
}

/**
 * GSAS STD bank: ten fields of 8 characters a record, each a 2-character NCTR (blank = 1) and a 6-character
 * intensity, right-justified (GSAS manual as summarised in docs/scan-formats.md#gsas-standard-powder-data; field
 * widths as the GSAS-II importer reads them). Counts above 999999 do not fit the 6 characters.
 */
export function gsasStd(counts: ArrayLike<number>, o: GsasStdOptions): string {
  const n = counts.length;
  const lines = [record(o.title ?? "Diffractory test scan")];
  if (o.instrumentFile) lines.push(record(`Instrument parameter      ${o.instrumentFile}`));
  for (const c of o.comments ?? []) lines.push(record(c));
  const nrec = Math.ceil(n / 10);
  lines.push(record(`BANK 1 ${n} ${nrec} CONST ${o.start} ${o.step} 0 0 STD`));
  for (let r = 0; r < nrec; r++) {
    let line = "";
    for (let i = r * 10; i < Math.min(n, r * 10 + 10); i++) {
      const value = String(Math.round(counts[i]));
      if (value.length > 6) throw new Error(`count ${value} does not fit the 6-character STD field`);
      const nctr = o.nctr?.(i);
      line += (nctr ? String(nctr).padStart(2) : "  ") + value.padStart(6);
    }
    lines.push(record(line));
  }
  return `${lines.join(o.newline ?? "\r\n")}${o.newline ?? "\r\n"}`;
}

/** GSAS ESD bank: five pairs of an 8-character intensity and an 8-character esd a record. */
export function gsasEsd(values: ArrayLike<number>, esd: ArrayLike<number>, start: string, step: string, title = "ESD test"): string {
  const n = values.length;
  const lines = [record(title)];
  const nrec = Math.ceil(n / 5);
  lines.push(record(`BANK 1 ${n} ${nrec} CONST ${start} ${step} 0 0 ESD`));
  for (let r = 0; r < nrec; r++) {
    let line = "";
    for (let i = r * 5; i < Math.min(n, r * 5 + 5); i++) line += values[i].toFixed(1).padStart(8) + esd[i].toFixed(2).padStart(8);
    lines.push(record(line));
  }
  return `${lines.join("\r\n")}\r\n`;
}

/** GSAS FXYE (or FXY) bank: free format x (centidegrees) y e, one point a record. */
export function gsasFxye(
  twoTheta: ArrayLike<number>,
  y: ArrayLike<number>,
  esd: ArrayLike<number> | null,
  o: { title?: string; decimals?: number; bankLine?: string } = {},
): string {
  const n = twoTheta.length;
  const d = o.decimals ?? 2;
  const startCenti = (twoTheta[0] * 100).toFixed(d);
  const stepCenti = (((twoTheta[n - 1] - twoTheta[0]) / (n - 1)) * 100).toFixed(d);
  const type = esd ? "FXYE" : "FXY";
  const lines = [record(o.title ?? "FXYE test"), record(o.bankLine ?? `BANK 1 ${n} ${n} CONST ${startCenti} ${stepCenti} 0 0 ${type}`)];
  for (let i = 0; i < n; i++) {
    const x = (twoTheta[i] * 100).toFixed(d);
    lines.push(
      record(esd ? `${x.padStart(15)} ${String(y[i]).padStart(15)} ${esd[i].toFixed(6).padStart(15)}` : `${x.padStart(15)} ${String(y[i]).padStart(15)}`),
    );
  }
  return `${lines.join("\r\n")}\r\n`;
}

/**
 * Sietronics CPI: "SIETRONICS XRD SCAN", start, end, step, anode, wavelength, date (d/m/y), time per step,
 * description, "SCANDATA", one intensity a line (xylib cpi.cpp; PyXRD cpi_parser.py).
 */
export function cpi(
  values: ArrayLike<number>,
  h: { start: string; end: string; step: string; anode: string; wavelength: string; date: string; time: string; description: string },
): string {
  const lines = ["SIETRONICS XRD SCAN", h.start, h.end, h.step, h.anode, h.wavelength, h.date, h.time, h.description, "SCANDATA"];
  for (let i = 0; i < values.length; i++) lines.push(String(values[i]));
  return `${lines.join("\r\n")}\r\n`;
}

/**
 * RAS: `*RAS_DATA_START`, per scan `*RAS_HEADER_START`, `*KEY "VALUE"` lines, `*RAS_HEADER_END`, `*RAS_INT_START`,
 * "angle intensity attenuator" lines, `*RAS_INT_END`; then `*RAS_DATA_END` (RigakuFiles.jl docs/src/guide/formats.md).
 */
export function ras(scans: { header: Record<string, string>; rows: [number, number, number][]; decimals?: number }[]): string {
  const lines = ["*RAS_DATA_START"];
  for (const scan of scans) {
    lines.push("*RAS_HEADER_START");
    for (const [k, v] of Object.entries(scan.header)) lines.push(`*${k} "${v}"`);
    lines.push("*RAS_HEADER_END", "*RAS_INT_START");
    const d = scan.decimals ?? 4;
    for (const [x, y, a] of scan.rows) lines.push(`${x.toFixed(d)} ${y.toFixed(4)} ${a.toFixed(4)}`);
    lines.push("*RAS_INT_END");
  }
  lines.push("*RAS_DATA_END");
  return `${lines.join("\r\n")}\r\n`;
}

/**
 * A binary raw file, version 3 ("RAW1.01"), with one range and the Cu tube, at the offsets of
 * docs/scan-formats.md#binary-raw-files-versions-14 (little-endian; float32 counts).
 */
export function rawVersion3(start: number, step: number, counts: ArrayLike<number>): Uint8Array {
  const bytes = new Uint8Array(712 + 304 + 4 * counts.length);
  const view = new DataView(bytes.buffer);
  const text = (at: number, s: string) => {
    for (let i = 0; i < s.length; i++) bytes[at + i] = s.charCodeAt(i);
  };
  text(0, "RAW1.01");
  view.setUint32(12, 1, true); // one range
  text(608, "Cu");
  // Cu Kα1, Kα2 and their ratio as docs/reference-values.md#x-ray-wavelengths tabulates them.
  view.setFloat64(624, 1.540593, true);
  view.setFloat64(632, 1.544427, true);
  view.setFloat64(648, 0.5, true);
  const range = 712;
  view.setUint32(range, 304, true); // header length
  view.setUint32(range + 4, counts.length, true);
  view.setFloat64(range + 8, start / 2, true);
  view.setFloat64(range + 16, start, true);
  view.setFloat64(range + 176, step, true);
  view.setUint32(range + 252, 4, true); // record size: one float32 count
  view.setUint32(range + 256, 0, true); // no supplementary header
  for (let i = 0; i < counts.length; i++) view.setFloat32(range + 304 + 4 * i, counts[i], true);
  return bytes;
}
