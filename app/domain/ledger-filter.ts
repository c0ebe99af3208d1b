// The admin ledger's filter parameters (browser-safe), shared by the screen and its CSV export.
import { z } from "zod";
import { parseOrderNumber } from "~/domain/order-number";

export const LEDGER_KINDS = ["payment_held", "payout", "platform_fee", "refund"] as const;

export const LedgerFilterSchema = z.object({
  kind: z.enum(LEDGER_KINDS, { error: "Choose a kind of movement." }).optional(),
  currency: z
    .string()
    .regex(/^[A-Z]{3}$/, "A currency is three capital letters, e.g. EUR.")
    .optional(),
  /** The order as people name it (HCW-2026-0042). */
  order: z
    .string()
    .trim()
    .toUpperCase()
    .refine((v) => parseOrderNumber(v) !== null, "An order number reads like HCW-2026-0042.")
    .optional(),
  /** The order's internal id, for links and scripts; people filter by `order`. */
  orderId: z.uuid({ error: "That is not an order of the ledger." }).optional(),
  from: z.iso.date({ error: "Dates are YYYY-MM-DD." }).optional(),
  to: z.iso.date({ error: "Dates are YYYY-MM-DD." }).optional(),
});

export function parseLedgerFilter(params: URLSearchParams) {
  const raw = Object.fromEntries([...params].filter(([, v]) => v !== ""));
  const parsed = LedgerFilterSchema.safeParse(raw);
  if (!parsed.success) return { ok: false as const, error: parsed.error.issues[0].message, field: String(parsed.error.issues[0].path[0]) };
  const v = parsed.data;
  return {
    ok: true as const,
    raw: v,
    filter: {
      kind: v.kind,
      currency: v.currency,
      orderId: v.orderId,
      orderNumber: v.order,
      from: v.from ? new Date(v.from) : undefined,
      to: v.to ? new Date(new Date(v.to).getTime() + 86_400_000) : undefined,
    },
  };
}
