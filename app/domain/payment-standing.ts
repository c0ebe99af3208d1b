// What a client's payment amounts to now (docs/design.md#payments-list): paid, partly refunded or refunded by the
// ledger's refunds for its order, or not completed. A refunded payment never reads "Paid".
export type PaymentStanding = "paid" | "partly_refunded" | "refunded" | "not_completed";

export const PAYMENT_STANDING_LABELS: Record<PaymentStanding, string> = {
  paid: "Paid",
  partly_refunded: "Partly refunded",
  refunded: "Refunded",
  not_completed: "Not completed",
};

export const PAYMENT_STANDING_TONES: Record<PaymentStanding, "ok" | "caution" | "neutral"> = {
  paid: "ok",
  partly_refunded: "caution",
  refunded: "neutral",
  not_completed: "caution",
};

/** The standing of a payment of `amountMinor` whose order has had `refundedMinor` refunded (both in minor units). */
export function paymentStanding(p: { status: string; amountMinor: number; refundedMinor: number }): PaymentStanding {
  if (p.status !== "paid") return "not_completed";
  if (p.refundedMinor <= 0) return "paid";
  return p.refundedMinor >= p.amountMinor ? "refunded" : "partly_refunded";
}
