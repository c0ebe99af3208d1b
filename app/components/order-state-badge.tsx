// An order's state as a badge: the state's own words, with the tone (and shape) of what it asks of people.
import { ORDER_STATE_LABELS, type OrderState } from "~/domain/order-states";
import { Badge, type BadgeTone } from "./ui";

const ORDER_STATE_TONES: Record<OrderState, BadgeTone> = {
  awaiting_payment: "caution",
  funds_held: "brand",
  samples_in_transit: "brand",
  samples_received: "brand",
  measuring: "brand",
  data_delivered: "caution",
  accepted: "ok",
  paid_out: "ok",
  cancelled: "neutral",
  refused_on_arrival: "danger",
  disputed: "danger",
  resolved: "neutral",
};

export function OrderStateBadge({ state }: { state: OrderState }) {
  return <Badge tone={ORDER_STATE_TONES[state]}>{ORDER_STATE_LABELS[state]}</Badge>;
}
