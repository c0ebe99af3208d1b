// The platform's monthly fee invoice to a lab, drawn from the month's platform fees in the ledger
// (docs/design.md#platform-fee-invoices), and the calendar months statements and fee invoices are cut by (UTC).
import type { InvoiceDocument, InvoiceLine, InvoiceParty } from "~/domain/invoice-document";
import type { TaxDecision } from "~/domain/vat";

/** "2026-11": a calendar month in UTC. */
const MONTH = /^(\d{4})-(0[1-9]|1[0-2])$/;

export const isMonth = (text: string) => MONTH.test(text);

/** The month's first instant and the next month's first instant, both UTC: [from, to). */
export function monthRange(month: string): { from: Date; to: Date } {
  const m = MONTH.exec(month);
  if (!m) throw new Error(`Not a month: ${month}`);
  const year = Number(m[1]);
  const index = Number(m[2]) - 1;
  return { from: new Date(Date.UTC(year, index, 1)), to: new Date(Date.UTC(year, index + 1, 1)) };
}

/** The UTC month an instant falls in. */
export const monthOf = (at: Date) => `${at.getUTCFullYear()}-${String(at.getUTCMonth() + 1).padStart(2, "0")}`;

/** "2026-11" → "November 2026". */
export function monthName(month: string): string {
  return monthRange(month).from.toLocaleDateString("en-GB", { month: "long", year: "numeric", timeZone: "UTC" });
}

/** One platform fee the ledger recorded for the lab in the month. */
export interface FeeKept {
  orderNumber: string;
  feeMinor: number;
  /** When it was kept (the payout it was kept from). */
  at: Date;
}

/**
 * Splits amounts that already include tax into nets: the total net is the whole kept ÷ (1 + rate), rounded to the
 * minor unit, and shared out over the lines in proportion to each amount (largest remainder, so the lines add up
 * to the total net exactly). The tax is the rest, so net + tax equals what was kept to the minor unit.
 */
export function splitIncludedTax(grossMinors: readonly number[], rateBps: number): { netMinors: number[]; netMinor: number; taxMinor: number } {
  const gross = grossMinors.reduce((s, g) => s + g, 0);
  const netMinor = Math.round((gross * 10_000) / (10_000 + rateBps));
  if (gross === 0) return { netMinors: grossMinors.map(() => 0), netMinor: 0, taxMinor: 0 };
  const exact = grossMinors.map((g) => (g * netMinor) / gross);
  const netMinors = exact.map(Math.floor);
  let left = netMinor - netMinors.reduce((s, n) => s + n, 0);
  const byRemainder = exact.map((e, i) => ({ i, r: e - Math.floor(e) })).sort((a, b) => b.r - a.r || a.i - b.i);
  for (const { i } of byRemainder) {
    if (left <= 0) break;
    netMinors[i] += 1;
    left -= 1;
  }
  return { netMinors, netMinor, taxMinor: gross - netMinor };
}

const dayOf = (at: Date) => at.toISOString().slice(0, 10);
const longDay = (at: Date) => at.toLocaleDateString("en-GB", { day: "numeric", month: "long", year: "numeric", timeZone: "UTC" });

/**
 * The fee invoice's document. The fees were kept from the lab's payouts, so the invoice's total is what was kept
 * and nothing is left to pay; where the platform charges VAT (a lab in its own member state, or an EU lab without
 * a VAT number) that total includes the VAT (Council Directive 2006/112/EC Art. 73: the taxable amount is the
 * consideration, less the VAT in it). Reverse charge and outside the EU: the total is the net, with no tax.
 */
export function feeInvoiceDocument(input: {
  number: string;
  issuedAt: Date;
  month: string;
  currency: string;
  seller: InvoiceParty;
  buyer: InvoiceParty;
  decision: TaxDecision;
  fees: readonly FeeKept[];
  formatMoney: (minor: number, currency: string) => string;
}): InvoiceDocument {
  const { decision, currency } = input;
  const fees = [...input.fees].sort((a, b) => a.at.getTime() - b.at.getTime() || a.orderNumber.localeCompare(b.orderNumber));
  const rateBps = decision.treatment === "domestic" ? decision.rateBps : 0;
  const split = splitIncludedTax(
    fees.map((f) => f.feeMinor),
    rateBps,
  );
  const lines: InvoiceLine[] = fees.map((f, i) => ({
    description: `Platform fee on order ${f.orderNumber}, kept from the payout of ${longDay(f.at)}`,
    quantity: 1,
    unitPriceMinor: split.netMinors[i],
    netMinor: split.netMinors[i],
    taxRateBps: rateBps,
  }));
  const kept = split.netMinor + split.taxMinor;
  const { to } = monthRange(input.month);
  const settled = `Settled: the ${input.formatMoney(kept, currency)} was kept from your payouts in ${monthName(input.month)}; nothing is left to pay.`;
  const included = rateBps > 0 ? [`The platform fees kept include VAT at ${rateBps / 100} %.`] : [];
  return {
    kind: "fee_invoice",
    number: input.number,
    issueDate: dayOf(input.issuedAt),
    // The service was supplied over the month; its last day is the date of supply (Art. 64(1) for continuous supplies).
    supplyDate: dayOf(new Date(to.getTime() - 86_400_000)),
    currency,
    seller: input.seller,
    buyer: input.buyer,
    issuedOnBehalfBy: null,
    orderNumber: null,
    purchaseOrderNumber: null,
    creditsInvoice: null,
    period: input.month,
    lines,
    taxPerRate: [{ taxRateBps: rateBps, netMinor: split.netMinor, taxMinor: split.taxMinor }],
    totals: { netMinor: split.netMinor, taxMinor: split.taxMinor, grossMinor: kept },
    treatment: decision.treatment,
    notes: [...decision.notes, ...included, settled],
  };
}
