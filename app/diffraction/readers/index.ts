// The scan readers, in the order they are asked (docs/decisions/011-scan-reader-registry.md). Every reader says
// how sure it is from the content (sniff, 0–1); the surest reads the file, ties going to the earlier line here.
// A new format is one module exporting one ScanReader and its line below; docs/scan-formats.md describes each.
import { brukerRawReader } from "./bruker-raw";
import { brukerUxdReader } from "./bruker-uxd";
import { cpiReader } from "./cpi";
import { csvReader, xyReader } from "./delimited";
import { gsasReader } from "./gsas";
import { pdCifReader } from "./pdcif";
import { philipsRdReader } from "./philips-rd";
import { rigakuRasReader } from "./rigaku-ras";
import { stepListReader } from "./step-list";
import type { ScanReader, ScanSource } from "./types";
import { xrdmlReader } from "./xrdml";

export const READERS: readonly ScanReader[] = [
  xrdmlReader,
  brukerRawReader,
  philipsRdReader,
  pdCifReader,
  gsasReader,
  rigakuRasReader,
  brukerUxdReader,
  cpiReader,
  stepListReader,
  csvReader,
  xyReader,
];

/** The reader surest of the file, or null when none claims it. A reader whose sniff throws is taken as unsure. */
export function chooseReader(source: ScanSource, readers: readonly ScanReader[] = READERS): ScanReader | null {
  let best: ScanReader | null = null;
  let score = 0;
  for (const reader of readers) {
    let s = 0;
    try {
      s = reader.sniff(source);
    } catch {
      s = 0;
    }
    if (s > score) {
      best = reader;
      score = s;
      if (s >= 1) break;
    }
  }
  return best;
}
