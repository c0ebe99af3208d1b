// Sietronics CPI: the first line names the format ("SIETRONICS XRD SCAN"), then one item a line: start 2θ, end 2θ,
// step, anode, wavelength, date, time per step, a description; a line "SCANDATA"; then one intensity a line
// (docs/scan-formats.md#sietronics-cpi).
import { readIntensityList } from "./step-list";
import { anodeSymbol, headLines, isoDate, splitLines, toNumber } from "./text";
import type { ReadScan, ScanMetadata, ScanReader, ScanSource } from "./types";

const MARK = /^\s*SIETRONICS\s+XRD\s+SCAN/i;

function sniff(source: ScanSource): number {
  const first = headLines(source.text(), 5).find((l) => l.trim().length > 0);
  return first !== undefined && MARK.test(first) ? 1 : 0;
}

function read(source: ScanSource): ReadScan | { error: string } {
  const lines = splitLines(source.text());
  let top = 0;
  while (top < lines.length && !MARK.test(lines[top])) top++;
  const data = lines.findIndex((l, i) => i > top && /^\s*SCANDATA\s*$/i.test(l));
  if (data < 0) return { error: "The CPI file has no SCANDATA line, so its intensities cannot be found." };
  const header = lines.slice(top + 1, data).map((l) => l.trim());
  const [start, end, step, anode, wavelength, date, time] = header;
  const meta: ScanMetadata = {};
  meta.anode = anodeSymbol(anode);
  if (meta.anode) meta.probe = "x-ray";
  const lambda = toNumber(wavelength);
  if (lambda > 0.01 && lambda < 20) meta.kAlpha1 = lambda;
  // Dates are written day first (d/m/y) by the programs that write CPI.
  meta.measuredAt = isoDate(date, "dmy");
  const t = toNumber(time);
  if (t > 0) meta.timePerStep = t;
  const description = header
    .slice(7)
    .filter((l) => l.length > 0)
    .pop();
  if (description) meta.sampleName = description;
  for (const key of Object.keys(meta) as (keyof ScanMetadata)[]) if (meta[key] === undefined) delete meta[key];
  return readIntensityList(lines, data + 1, { start, step, end }, meta, [], "CPI");
}

export const cpiReader: ScanReader = {
  format: "cpi",
  label: "Sietronics CPI",
  sniff,
  read,
};
