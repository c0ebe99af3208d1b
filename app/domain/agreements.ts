// Standing agreements: their states, what a lot may cost against the cap, and the sentences of refusal
// (docs/design.md#standing-agreements). Pure, so screens and the model share them.

export type AgreementState = "proposed" | "active" | "ending" | "ended";

export const AGREEMENT_STATE_LABELS: Record<AgreementState, string> = {
  proposed: "Proposed",
  active: "Active",
  ending: "Notice given",
  ended: "Ended",
};

/** Orders whose money went back to the client: they use no lot and spend nothing of the cap. */
export const REFUNDED_ORDER_STATES = ["cancelled", "refused_on_arrival"] as const;

export const NOTICE_DAYS_MAX = 365;
export const LOTS_PER_ORDER_MAX = 20;
export const LOT_CODE_MAX = 60;

/** "2026-03-01" → the start of that day in UTC. */
export const dayStart = (isoDate: string) => new Date(`${isoDate}T00:00:00.000Z`);
/** "2026-12-31" → the last moment of that day in UTC: the agreement still runs on its end date. */
export const dayEnd = (isoDate: string) => new Date(`${isoDate}T23:59:59.999Z`);
export const isoDay = (d: Date) => d.toISOString().slice(0, 10);

/** Lot codes from a text box: one per line or separated by commas, trimmed, without repeats. */
export function lotCodesFrom(text: string): { codes: string[] } | { error: string } {
  const codes = [
    ...new Set(
      text
        .split(/[\n,;]+/)
        .map((c) => c.trim().replace(/\s+/g, " "))
        .filter(Boolean),
    ),
  ];
  if (codes.length === 0) return { error: "Enter the lot code of the lot you send (one per line for several)." };
  if (codes.length > LOTS_PER_ORDER_MAX) return { error: `One order takes at most ${LOTS_PER_ORDER_MAX} lots; order the rest separately.` };
  const long = codes.find((c) => c.length > LOT_CODE_MAX);
  if (long) return { error: `A lot code has at most ${LOT_CODE_MAX} characters; "${long.slice(0, 20)}…" is longer.` };
  return { codes };
}

export interface AgreementTerms {
  state: AgreementState;
  startsOn: string;
  endsOn: string;
  pricePerLotMinor: number;
  budgetCapMinor: number;
}

/**
 * Why `lots` more lots may not be ordered now, in one sentence, or null when they may. Lots may be ordered while
 * notice runs ("ending"): notice ends the agreement later, it does not stop it at once.
 */
export function lotRefusal(a: AgreementTerms, spentNetMinor: number, lots: number, now: Date, formatMoney: (minor: number) => string): string | null {
  if (a.state === "proposed") return "This agreement is not active yet: the lab has not agreed to it. Nothing was ordered.";
  if (a.state === "ended") return "This agreement has ended, so no lot can be ordered under it. Nothing was ordered.";
  if (now < dayStart(a.startsOn)) return `This agreement runs from ${a.startsOn}; lots can be ordered from then. Nothing was ordered.`;
  if (now > dayEnd(a.endsOn)) return `This agreement ran until ${a.endsOn}, so no lot can be ordered under it. Nothing was ordered.`;
  const cost = a.pricePerLotMinor * lots;
  const remaining = a.budgetCapMinor - spentNetMinor;
  if (cost > remaining) {
    return `${lots === 1 ? "This lot" : `These ${lots} lots`} would cost ${formatMoney(cost)} (net) but only ${formatMoney(Math.max(remaining, 0))} of the budget cap remains. Nothing was ordered.`;
  }
  return null;
}

/** Whether the cap leaves room for no further lot. */
export const capReached = (a: Pick<AgreementTerms, "pricePerLotMinor" | "budgetCapMinor">, spentNetMinor: number) =>
  a.budgetCapMinor - spentNetMinor < a.pricePerLotMinor;
