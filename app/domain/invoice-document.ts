// What an invoice, a credit note or a fee invoice says, frozen when it is issued (docs/design.md#invoices): the
// row in `invoices` keeps this snapshot, so a later change of a name, an address or a rate never rewrites a
// document that was already sent. The PDF and `GET /api/orders/:id/invoice` are both made from it.
import type { PostalAddress } from "~/db/schema";

export type InvoiceKind = "invoice" | "credit_note" | "fee_invoice";

/** How the tax on a document was decided (docs/design.md#tax-on-invoices). */
export type TaxTreatment =
  /** The seller's VAT at its member state's rate: buyer in the same state, or a buyer elsewhere in the EU without a VAT number. */
  | "domestic"
  /** A business buyer with a VAT number in another member state accounts for the VAT (Directive 2006/112/EC Art. 196). */
  | "reverse_charge"
  /** The buyer is established outside the EU: the place of supply is there (Art. 44), no EU VAT on the invoice. */
  | "outside_eu"
  /** The seller has no EU VAT number (outside the EU, or not registered): no tax is added; its local rules apply. */
  | "no_vat_seller";

export interface InvoiceParty {
  /** The legal name (the organisation's name when no legal name is given). */
  name: string;
  address: PostalAddress | null;
  /** A VAT number or another tax id, as the party gave it; null when it gave none. */
  taxId: string | null;
}

export interface InvoiceLine {
  description: string;
  quantity: number;
  /** Net unit price in minor units of the document's currency. */
  unitPriceMinor: number;
  /** Net amount of the line (quantity × unit price, as quoted). */
  netMinor: number;
  /** The tax rate in basis points (2100 = 21 %). */
  taxRateBps: number;
}

/** One row of the tax summary: the taxable amount and the tax per rate (Art. 226(8) and (10)). */
export interface TaxPerRate {
  taxRateBps: number;
  netMinor: number;
  taxMinor: number;
}

export interface InvoiceDocument {
  kind: InvoiceKind;
  number: string;
  /** ISO date of issue (Art. 226(1)). */
  issueDate: string;
  /** ISO date the service was supplied or the payment on account received, when it differs (Art. 226(7)). */
  supplyDate: string | null;
  currency: string;
  seller: InvoiceParty;
  buyer: InvoiceParty;
  /** Who drew the document up when it is not the seller (Art. 226(11a) wording for invoicing by a third party). */
  issuedOnBehalfBy: string | null;
  orderNumber: string | null;
  purchaseOrderNumber: string | null;
  /** For a credit note: the number and date of the invoice it corrects. */
  creditsInvoice: { number: string; issueDate: string } | null;
  /** For a fee invoice: the month it covers, "2026-11". */
  period: string | null;
  lines: InvoiceLine[];
  taxPerRate: TaxPerRate[];
  totals: { netMinor: number; taxMinor: number; grossMinor: number };
  treatment: TaxTreatment;
  /** The sentences the treatment requires ("Reverse charge", the article that exempts), and others worth stating. */
  notes: string[];
}
