// The order state machine of docs/design.md#order-states: who may move an order from one state to the next (browser-safe).
import type { Badge } from "~/components/ui";

export const ORDER_STATES = [
  "awaiting_payment",
  "funds_held",
  "samples_in_transit",
  "samples_received",
  "measuring",
  "data_delivered",
  "accepted",
  "paid_out",
  "cancelled",
  "refused_on_arrival",
  "disputed",
  "resolved",
] as const;
export type OrderState = (typeof ORDER_STATES)[number];

/** Who makes a move: the client organisation, the lab, a platform admin, or the platform itself (payments, timers). */
export type Mover = "client" | "lab" | "admin" | "system";

export const TRANSITIONS: Record<OrderState, Partial<Record<OrderState, Mover[]>>> = {
  awaiting_payment: { funds_held: ["system"], cancelled: ["client", "admin", "system"] },
  funds_held: { samples_in_transit: ["client"], cancelled: ["client", "admin"] },
  samples_in_transit: { samples_received: ["lab"], refused_on_arrival: ["lab"], cancelled: ["client", "admin"] },
  samples_received: { measuring: ["lab"] },
  measuring: { data_delivered: ["lab"] },
  data_delivered: { accepted: ["client", "system"], disputed: ["client"] },
  accepted: { paid_out: ["system"] },
  paid_out: {},
  cancelled: {},
  refused_on_arrival: {},
  disputed: { resolved: ["admin"] },
  resolved: {},
};

export const ORDER_STATE_LABELS: Record<OrderState, string> = {
  awaiting_payment: "Awaiting payment",
  funds_held: "Funds held",
  samples_in_transit: "Samples in transit",
  samples_received: "Samples received",
  measuring: "Measuring",
  data_delivered: "Data delivered",
  accepted: "Delivery accepted",
  paid_out: "Lab paid",
  cancelled: "Cancelled",
  refused_on_arrival: "Refused on arrival",
  disputed: "In dispute",
  resolved: "Dispute resolved",
};

/** null when the move is allowed, otherwise the sentence that explains why not. */
export function moveProblem(from: OrderState, to: OrderState, mover: Mover): string | null {
  const allowed = TRANSITIONS[from][to];
  if (!allowed) return `An order that is "${ORDER_STATE_LABELS[from]}" cannot become "${ORDER_STATE_LABELS[to]}".`;
  if (!allowed.includes(mover))
    return `Only ${allowed.map((m) => (m === "system" ? "the platform" : `the ${m}`)).join(" or ")} can mark an order "${ORDER_STATE_LABELS[to]}".`;
  return null;
}

/** Whether `mover` may move an order from `from` to `to`: screens offer an action only when this holds. */
export function canMove(from: OrderState, to: OrderState, mover: Mover): boolean {
  return moveProblem(from, to, mover) === null;
}

/** The states the samples have reached the lab in (or passed through on the way to an outcome). */
const SAMPLES_AT_LAB: ReadonlySet<OrderState> = new Set(["samples_received", "measuring", "data_delivered", "accepted", "paid_out", "disputed", "resolved"]);

/** Whether the lab has the samples (or had them): the data room and the measurement history exist from then on. */
export function samplesAtLab(state: OrderState): boolean {
  return SAMPLES_AT_LAB.has(state);
}
