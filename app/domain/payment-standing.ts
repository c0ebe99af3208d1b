// What a client's payment amounts to now (docs/design.md#payments-list): paid, partly refunded or refunded by the
// ledger's refunds for its order; a bank transfer still open with part of the money arrived is part received;
// otherwise not completed. A refunded payment never reads "Paid".
export type PaymentStanding = "paid" | "partly_refunded" | "refunded" | "part_received" | "not_completed";

export const PAYMENT_STANDING_LABELS: Record<PaymentStanding, string> = {
  paid: "Paid",
  partly_refunded: "Partly refunded",
  refunded: "Refunded",
  part_received: "Part received",
  not_completed: "Not completed",
};

export const PAYMENT_STANDING_TONES: Record<PaymentStanding, "ok" | "caution" | "neutral"> = {
  paid: "ok",
  partly_refunded: "caution",
  refunded: "neutral",
  part_received: "caution",
  not_completed: "caution",
};

/** How a payment was made, in words. */
export const PAYMENT_METHOD_LABELS: Record<string, string> = { card: "Card", bank_transfer: "Bank transfer" };

/**
 * The standing of a payment of `amountMinor` whose order has had `refundedMinor` refunded (both in minor units);
 * an open bank transfer with `receivedMinor` > 0 arrived in part.
 */
export function paymentStanding(p: { status: string; amountMinor: number; refundedMinor: number; method?: string; receivedMinor?: number }): PaymentStanding {
  if (p.status === "open" && p.method === "bank_transfer" && (p.receivedMinor ?? 0) > 0) return "part_received";
  if (p.status !== "paid") return "not_completed";
  if (p.refundedMinor <= 0) return "paid";
  return p.refundedMinor >= p.amountMinor ? "refunded" : "partly_refunded";
}
