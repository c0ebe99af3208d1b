// What changed between two versions of a published request, in words for the labs that quoted on it
// (docs/design.md#the-requests-life). Pure: the server takes the snapshots before and after a save.
import { formatMoney } from "~/domain/money";
import { labelOf } from "~/domain/matching";

export interface SampleSnapshot {
  label: string;
  formula: string;
  form: string;
  massMg: number | null;
  expectedPhase: string | null;
  cell: (number | null)[];
  phases: number;
  hazards: string[];
  afterMeasurement: string;
  handlingNotes: string | null;
  sdsFileName: string | null;
}

export interface RequestSnapshot {
  title: string;
  technique: string;
  rangeKind: string;
  rangeMin: number | null;
  rangeMax: number | null;
  preferredSource: string;
  temperaturePointsK: number[];
  atmosphere: string;
  quality: string;
  deadline: string | null;
  budgetMinor: number | null;
  currency: string;
  visibility: string;
  samples: SampleSnapshot[];
}

/** 2026-12-12 → "12 Dec 2026" (dates are calendar days, read in UTC). */
export function dayText(isoDate: string | null): string {
  if (!isoDate) return "none";
  return new Date(`${isoDate}T00:00:00Z`).toLocaleDateString("en-GB", { day: "numeric", month: "short", year: "numeric", timeZone: "UTC" });
}

/** "10–80° 2θ" or "1.2–8 Å d-spacing"; "not stated" before the measurement step. */
export function rangeText(r: Pick<RequestSnapshot, "rangeKind" | "rangeMin" | "rangeMax">): string {
  if (r.rangeMin === null || r.rangeMax === null) return "not stated";
  return r.rangeKind === "d_spacing" ? `${r.rangeMin}–${r.rangeMax} Å d-spacing` : `${r.rangeMin}–${r.rangeMax}° 2θ`;
}

export const temperaturesText = (points: number[]) => (points.length ? `${points.join(", ")} K` : "room temperature");
export const sourceText = (source: string) => (source === "any" ? "any source" : `${source} Kα`);
const budgetText = (minor: number | null, currency: string) => (minor === null ? "not stated" : formatMoney(minor, currency));
const same = (a: unknown, b: unknown) => JSON.stringify(a) === JSON.stringify(b);

/** What changed in one sample, as short phrases ("formula", "hazard declaration"). */
function sampleChanges(a: SampleSnapshot, b: SampleSnapshot): string[] {
  const out: string[] = [];
  if (a.formula !== b.formula) out.push(`formula ${a.formula} → ${b.formula}`);
  if (a.form !== b.form) out.push(`form ${labelOf(a.form)} → ${labelOf(b.form)}`);
  if (a.massMg !== b.massMg) out.push(`mass ${a.massMg ?? "—"} → ${b.massMg ?? "—"} mg`);
  if (a.expectedPhase !== b.expectedPhase || !same(a.cell, b.cell) || a.phases !== b.phases) out.push("declared phases");
  if (!same(a.hazards, b.hazards) || a.handlingNotes !== b.handlingNotes || a.sdsFileName !== b.sdsFileName) out.push("hazard declaration");
  if (a.afterMeasurement !== b.afterMeasurement) out.push(`after measurement ${labelOf(a.afterMeasurement)} → ${labelOf(b.afterMeasurement)}`);
  return out;
}

/**
 * The changes from `before` to `after` as one sentence-like summary, e.g. "Deadline 12 Dec 2026 → 19 Dec 2026;
 * range 10–80° 2θ → 5–90° 2θ; sample HC-2611-B added"; null when nothing a lab would quote on changed.
 * Samples are told apart by their label.
 */
export function describeChanges(before: RequestSnapshot, after: RequestSnapshot): string | null {
  const parts: string[] = [];
  const change = (what: string, a: string, b: string) => {
    if (a !== b) parts.push(`${what} ${a} → ${b}`);
  };
  change("title", `“${before.title}”`, `“${after.title}”`);
  change("technique", labelOf(before.technique), labelOf(after.technique));
  change("deadline", dayText(before.deadline), dayText(after.deadline));
  change("range", rangeText(before), rangeText(after));
  change("source", sourceText(before.preferredSource), sourceText(after.preferredSource));
  change("temperatures", temperaturesText(before.temperaturePointsK), temperaturesText(after.temperaturePointsK));
  change("atmosphere", before.atmosphere, after.atmosphere);
  change("quality", labelOf(before.quality), labelOf(after.quality));
  change("budget", budgetText(before.budgetMinor, before.currency), budgetText(after.budgetMinor, after.currency));
  change(
    "who may quote",
    before.visibility === "open" ? "every matching lab" : "invited labs",
    after.visibility === "open" ? "every matching lab" : "invited labs",
  );
  for (const s of after.samples) {
    const old = before.samples.find((o) => o.label === s.label);
    if (!old) parts.push(`sample ${s.label} added`);
    else {
      const changed = sampleChanges(old, s);
      if (changed.length) parts.push(`sample ${s.label}: ${changed.join(", ")}`);
    }
  }
  for (const s of before.samples) if (!after.samples.some((n) => n.label === s.label)) parts.push(`sample ${s.label} removed`);
  if (parts.length === 0) return null;
  const text = parts.join("; ");
  return `${text[0].toUpperCase()}${text.slice(1)}`;
}

/** Why a quote for an earlier revision of the request cannot be accepted (the card and the server say the same). */
export const AWAITING_RECONFIRMATION =
  "This quote was made for an earlier version of the request; the lab has been told of the changes and must re-confirm it before it can be accepted.";
