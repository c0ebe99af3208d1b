// An issued invoice or credit note as the API gives it (docs/design.md#invoices): every amount as money text in the
// document's currency beside its integer minor units (`…Minor`, for programs), as `GET /api/orders/:id` does.
import type { InvoiceDocument, InvoiceParty } from "~/domain/invoice-document";
import { formatMoney } from "~/domain/money";
import { ratePercent } from "~/domain/vat";

const party = (p: InvoiceParty) => ({ name: p.name, address: p.address, taxId: p.taxId });

export function invoiceJson(doc: InvoiceDocument) {
  const money = (minor: number) => formatMoney(minor, doc.currency);
  const amounts = (t: { netMinor: number; taxMinor: number; grossMinor: number }) => ({
    net: money(t.netMinor),
    netMinor: t.netMinor,
    tax: money(t.taxMinor),
    taxMinor: t.taxMinor,
    gross: money(t.grossMinor),
    grossMinor: t.grossMinor,
  });
  return {
    kind: doc.kind,
    number: doc.number,
    issueDate: doc.issueDate,
    supplyDate: doc.supplyDate,
    seller: party(doc.seller),
    buyer: party(doc.buyer),
    issuedOnBehalfBy: doc.issuedOnBehalfBy,
    orderNumber: doc.orderNumber,
    purchaseOrderNumber: doc.purchaseOrderNumber,
    creditsInvoice: doc.creditsInvoice,
    lines: doc.lines.map((l) => ({
      description: l.description,
      quantity: l.quantity,
      unitPrice: money(l.unitPriceMinor),
      unitPriceMinor: l.unitPriceMinor,
      net: money(l.netMinor),
      netMinor: l.netMinor,
      taxRate: ratePercent(l.taxRateBps),
      taxRateBps: l.taxRateBps,
    })),
    taxPerRate: doc.taxPerRate.map((r) => ({
      taxRate: ratePercent(r.taxRateBps),
      taxRateBps: r.taxRateBps,
      net: money(r.netMinor),
      netMinor: r.netMinor,
      tax: money(r.taxMinor),
      taxMinor: r.taxMinor,
    })),
    totals: amounts(doc.totals),
    currency: doc.currency,
    treatment: doc.treatment,
    notes: doc.notes,
  };
}

/** A credit note's line in its invoice's list. */
export const creditNoteSummary = (doc: InvoiceDocument) => ({
  number: doc.number,
  issueDate: doc.issueDate,
  totals: invoiceJson(doc).totals,
});
