// The rules of a sample's hazard declaration: H-statement codes, what happens after measurement, when an SDS is due.
// The GHS pictograms and special categories themselves are in hazard-codes.ts.
import { SPECIAL_CATEGORIES } from "~/domain/hazard-codes";

export function specialLabel(code: string) {
  return SPECIAL_CATEGORIES.find((c) => c.code === code)?.label ?? code;
}

export const AFTER_MEASUREMENT = [
  { value: "return", label: "Return to us" },
  { value: "lab_disposes", label: "The lab disposes of it" },
] as const;

// One statement: H and a number 200–420, optionally followed by the letters that narrow it (H360FD, H350i).
const ONE_H = /^H(\d{3})([A-Za-z]{0,2})$/;

/** Checks one code, or a combination joined with "+" (H302+H312); returns null or a sentence. */
export function checkHStatement(code: string): string | null {
  const parts = code.split("+");
  for (const part of parts) {
    const match = ONE_H.exec(part);
    const n = match ? Number(match[1]) : NaN;
    if (!match || n < 200 || n > 420) {
      return `${code} is not a hazard statement code; codes run from H200 to H420 (e.g. H302, or H302+H312 combined).`;
    }
  }
  return null;
}

/** Splits what someone typed ("H302, h315 H319") into upper-case codes, keeping the lower-case suffix letters. */
export function splitHStatements(text: string): string[] {
  return text
    .split(/[\s,;]+/)
    .map((c) => c.trim())
    .filter(Boolean)
    .map((c) => c.replace(/^h/, "H").replace(/\+h/g, "+H"));
}

/** Whether a sample declares anything at all, which makes its safety data sheet required. */
export function declaresHazard(sample: { ghsPictograms: string[]; hStatements: string[]; specialHazards: { category: string }[] }) {
  return sample.ghsPictograms.length > 0 || sample.hStatements.length > 0 || sample.specialHazards.length > 0;
}
