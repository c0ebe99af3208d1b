// The lab's record of a parcel's arrival (browser-safe): the condition of each sample, its seal, the amount
// received and where it is stored; the reasons a sample is refused on arrival; and the due date the receipt
// starts (docs/design.md, "The lab's records").

export const RECEIPT_CONDITIONS = ["good", "damaged", "leaking", "mislabelled"] as const;
export type ReceiptCondition = (typeof RECEIPT_CONDITIONS)[number];

export const RECEIPT_CONDITION_LABELS: Record<ReceiptCondition, string> = {
  good: "Good",
  damaged: "Damaged container",
  leaking: "Leaking",
  mislabelled: "Mislabelled",
};

/** Units a received amount is stated in: a powder's mass or a liquid's (or suspension's) volume. */
export const AMOUNT_UNITS = ["mg", "g", "µL", "mL"] as const;
export type AmountUnit = (typeof AMOUNT_UNITS)[number];

/** Why a sample is refused on arrival; "other" needs the lab's own words. */
export const REFUSAL_REASONS = [
  "not_as_declared",
  "hazard_not_declared",
  "leaking",
  "damaged",
  "seal_broken",
  "mislabelled",
  "missing",
  "too_little",
  "other",
] as const;
export type RefusalReason = (typeof REFUSAL_REASONS)[number];

export const REFUSAL_REASON_LABELS: Record<RefusalReason, string> = {
  not_as_declared: "Not the material declared",
  hazard_not_declared: "A hazard that was not declared",
  leaking: "Leaking container",
  damaged: "Damaged container",
  seal_broken: "Seal broken",
  mislabelled: "Label does not match the declaration",
  missing: "Missing from the parcel",
  too_little: "Too little material to measure",
  other: "Another reason (in the words below)",
};

/** What a refused sample's record says about its condition and seal, from the reason it was refused for. */
export function conditionOfRefusal(reason: RefusalReason): { condition: ReceiptCondition; sealIntact: boolean } {
  if (reason === "leaking") return { condition: "leaking", sealIntact: false };
  if (reason === "damaged") return { condition: "damaged", sealIntact: false };
  if (reason === "seal_broken") return { condition: "damaged", sealIntact: false };
  if (reason === "mislabelled") return { condition: "mislabelled", sealIntact: true };
  return { condition: "good", sealIntact: true };
}

/** "12.5 mg", or null when no amount was recorded. */
export function amountWords(amount: number | null | undefined, unit: string | null | undefined): string | null {
  if (amount === null || amount === undefined || !Number.isFinite(amount)) return null;
  return `${+amount.toPrecision(6)} ${unit ?? ""}`.trim();
}

const DAY_MS = 86_400_000;

/** When the lab owes the data: the receipt time plus the quote's turnaround in calendar days. */
export function dueDateFrom(receivedAt: Date, turnaroundDays: number): Date {
  return new Date(receivedAt.getTime() + Math.max(0, Math.round(turnaroundDays)) * DAY_MS);
}

/** The states in which a due date still binds the lab (the data is not yet delivered). */
/** The states in which the lab still owes the data: a due date counts only in these. */
export const OWING_STATES = ["samples_received", "measuring"] as const;
const owing = new Set<string>(OWING_STATES);

export interface DueStatus {
  /** "overdue", "today" (within a day), "soon" (within two days), "on_time", or "none" (no due date, or delivered). */
  kind: "overdue" | "today" | "soon" | "on_time" | "none";
  words: string;
}

/** Whether an order is late, in words: "Overdue by 3 days", "Due within a day", "Due in 5 days". */
export function dueStatus(dueAt: Date | string | null | undefined, state: string, now = new Date()): DueStatus {
  if (!dueAt) return { kind: "none", words: "No due date yet (set when the samples arrive)" };
  if (!owing.has(state)) return { kind: "none", words: "Data delivered" };
  const left = new Date(dueAt).getTime() - now.getTime();
  const days = (ms: number) => Math.max(1, Math.ceil(ms / DAY_MS));
  if (left < 0) {
    const n = days(-left);
    return { kind: "overdue", words: `Overdue by ${n} ${n === 1 ? "day" : "days"}` };
  }
  if (left < DAY_MS) return { kind: "today", words: "Due within a day" };
  const n = days(left);
  return { kind: n <= 2 ? "soon" : "on_time", words: `Due in ${n} days` };
}
