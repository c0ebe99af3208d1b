// The admins' export of a period (docs/design.md#statements): every invoice, credit note and platform fee invoice
// issued between two days, both included, read in UTC, from the documents' frozen snapshots.
import { and, asc, gte, lt } from "drizzle-orm";
import { db, schema } from "~/db/client.server";
import type { InvoiceKind, TaxTreatment } from "~/domain/invoice-document";
import { decimal, formulaSafe } from "./statements.server";

/** "2026-11-01" → that day's first instant in UTC; null when the text is not a real day. */
export function utcDay(text: string | null): Date | null {
  if (!text || !/^\d{4}-\d{2}-\d{2}$/.test(text)) return null;
  const d = new Date(`${text}T00:00:00Z`);
  return Number.isNaN(d.getTime()) || d.toISOString().slice(0, 10) !== text ? null : d;
}

export type PeriodParse = { ok: true; from: Date; to: Date; fromDay: string; toDay: string } | { ok: false; error: string };

/** Reads ?from=YYYY-MM-DD&to=YYYY-MM-DD: both days included, so documents up to the end of `to` (UTC) count. */
export function parsePeriod(params: URLSearchParams): PeriodParse {
  const fromDay = params.get("from") ?? "";
  const toDay = params.get("to") ?? "";
  const from = utcDay(fromDay);
  const last = utcDay(toDay);
  if (!from || !last) return { ok: false, error: "Give the first and the last day of the period as dates (YYYY-MM-DD)." };
  if (last < from) return { ok: false, error: "The last day of the period comes before its first day." };
  return { ok: true, from, to: new Date(last.getTime() + 86_400_000), fromDay, toDay };
}

export interface PeriodDocument {
  number: string;
  kind: InvoiceKind;
  issuedAt: Date;
  seller: string;
  buyer: string;
  buyerTaxId: string | null;
  orderNumber: string | null;
  purchaseOrderNumber: string | null;
  currency: string;
  /** Signed: a credit note's amounts are negative, so a column adds up to what the period invoiced. */
  netMinor: number;
  taxMinor: number;
  grossMinor: number;
  treatment: TaxTreatment;
  refersTo: string | null;
  period: string | null;
}

/** Every document issued in [from, to), oldest first. */
export async function documentsIssuedBetween(from: Date, to: Date): Promise<PeriodDocument[]> {
  const i = schema.invoices;
  const rows = await db
    .select()
    .from(i)
    .where(and(gte(i.issuedAt, from), lt(i.issuedAt, to)))
    .orderBy(asc(i.issuedAt), asc(i.number));
  return rows.map((r) => {
    const sign = r.kind === "credit_note" ? -1 : 1;
    const doc = r.document;
    return {
      number: r.number,
      kind: r.kind,
      issuedAt: r.issuedAt,
      seller: doc.seller.name,
      buyer: doc.buyer.name,
      buyerTaxId: doc.buyer.taxId,
      orderNumber: doc.orderNumber,
      purchaseOrderNumber: doc.purchaseOrderNumber,
      currency: r.currency,
      netMinor: sign * r.netMinor,
      taxMinor: sign * r.taxMinor,
      grossMinor: sign * r.totalMinor,
      treatment: doc.treatment,
      refersTo: doc.creditsInvoice?.number ?? null,
      period: r.period,
    };
  });
}

export interface PeriodTotals {
  currency: string;
  kind: InvoiceKind;
  documents: number;
  netMinor: number;
  taxMinor: number;
  grossMinor: number;
}

/** Totals per currency and kind (a lab's invoices and the platform's fee invoices have different sellers, so they are never added together). */
export function periodTotals(docs: readonly PeriodDocument[]): PeriodTotals[] {
  const out = new Map<string, PeriodTotals>();
  for (const d of docs) {
    const key = `${d.currency}:${d.kind}`;
    const t = out.get(key) ?? { currency: d.currency, kind: d.kind, documents: 0, netMinor: 0, taxMinor: 0, grossMinor: 0 };
    t.documents++;
    t.netMinor += d.netMinor;
    t.taxMinor += d.taxMinor;
    t.grossMinor += d.grossMinor;
    out.set(key, t);
  }
  const order: InvoiceKind[] = ["invoice", "credit_note", "fee_invoice"];
  return [...out.values()].sort((a, b) => a.currency.localeCompare(b.currency) || order.indexOf(a.kind) - order.indexOf(b.kind));
}

/** The export as a table for csvText: amounts as decimals of the row's currency (credit notes negative), days in UTC. */
export function periodTable(docs: readonly PeriodDocument[]): (string | number | null)[][] {
  return [
    [
      "number",
      "kind",
      "issue_date",
      "seller",
      "buyer",
      "buyer_tax_id",
      "order",
      "purchase_order",
      "currency",
      "net",
      "tax",
      "gross",
      "treatment",
      "refers_to_invoice",
      "fee_period",
    ],
    ...docs.map((d) => [
      d.number,
      d.kind,
      d.issuedAt.toISOString().slice(0, 10),
      formulaSafe(d.seller),
      formulaSafe(d.buyer),
      formulaSafe(d.buyerTaxId),
      d.orderNumber,
      formulaSafe(d.purchaseOrderNumber),
      d.currency,
      decimal(d.netMinor),
      decimal(d.taxMinor),
      decimal(d.grossMinor),
      d.treatment,
      d.refersTo,
      d.period,
    ]),
  ];
}
