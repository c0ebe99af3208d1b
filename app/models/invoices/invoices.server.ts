// Invoices and credit notes of orders (docs/design.md#invoices): the measurement is invoiced in the lab's name by
// the platform on its behalf when the client's money is held, numbered per lab without gaps, and every refund
// gets a credit note that refers to the invoice. Each document is frozen as a snapshot when issued.
import { and, asc, eq, sql } from "drizzle-orm";
import { db, schema, type Tx } from "~/db/client.server";
import type { Invoice, Order, Organisation } from "~/db/schema";
import type { InvoiceDocument, InvoiceLine, InvoiceParty, TaxTreatment } from "~/domain/invoice-document";
import { TREATMENT_NOTES } from "~/domain/vat";
import { decideTaxBetween } from "~/models/invoices/tax.server";
import { takeDocumentNumber } from "~/models/invoices/numbering.server";

/** The name the platform issues documents under on the labs' behalf. */
export const PLATFORM_NAME = "Diffractory";

const invoiceKey = (orderId: string) => `invoice:${orderId}`;
const creditNoteKey = (refundId: string) => `refund:${refundId}`;
const isoDay = (d: Date) => d.toISOString().slice(0, 10);

/** An organisation as a party on a document: its legal name (or name), billing address and tax id. */
export const invoicePartyOf = (org: Pick<Organisation, "name" | "legalName" | "billingAddress" | "taxId">): InvoiceParty => ({
  name: org.legalName?.trim() || org.name,
  address: org.billingAddress ?? null,
  taxId: org.taxId?.trim() || null,
});

async function lockedOrder(tx: Tx, orderId: string) {
  const [order] = await tx.select().from(schema.orders).where(eq(schema.orders.id, orderId)).for("update");
  return order ?? null;
}

async function organisation(tx: Tx, id: string) {
  const [org] = await tx.select().from(schema.organisations).where(eq(schema.organisations.id, id));
  return org;
}

/** When the client's money was taken: the ledger's payment posting, else now. */
async function paymentDate(tx: Tx, orderId: string) {
  const [row] = await tx
    .select({ at: schema.ledgerTransactions.createdAt })
    .from(schema.ledgerTransactions)
    .where(and(eq(schema.ledgerTransactions.orderId, orderId), eq(schema.ledgerTransactions.kind, "payment_held")))
    .orderBy(asc(schema.ledgerTransactions.createdAt))
    .limit(1);
  return row?.at ?? null;
}

/**
 * The treatment, rate and notes of an order's invoice. An order accepted with a tax decision keeps it; an order
 * from before tax was fixed on acceptance is invoiced at the amount agreed, with no tax added, and says so.
 */
async function treatmentOf(tx: Tx, order: Order): Promise<{ treatment: TaxTreatment; rateBps: number; notes: string[] }> {
  if (order.taxTreatment) {
    const treatment = order.taxTreatment as TaxTreatment;
    return { treatment, rateBps: order.taxRateBps, notes: [...TREATMENT_NOTES[treatment]] };
  }
  const decided = await decideTaxBetween(order.labId, order.clientOrganisationId, tx);
  if (decided.rateBps === 0) return { treatment: decided.treatment, rateBps: 0, notes: [...decided.notes] };
  return {
    treatment: "domestic",
    rateBps: 0,
    notes: ["This order was agreed before tax was added to orders: it is invoiced at the amount agreed, with no VAT added."],
  };
}

/** The invoice's lines from the quote's items; a difference from the order's net amount (never expected) is its own line. */
function linesOf(items: { description: string; quantity: number; unitMinor: number; totalMinor: number }[], netMinor: number, rateBps: number): InvoiceLine[] {
  const lines: InvoiceLine[] = items.map((i) => ({
    description: i.description,
    quantity: i.quantity,
    unitPriceMinor: i.unitMinor,
    netMinor: i.totalMinor,
    taxRateBps: rateBps,
  }));
  const difference = netMinor - lines.reduce((s, l) => s + l.netMinor, 0);
  if (difference !== 0)
    lines.push({ description: "Adjustment to the quoted total", quantity: 1, unitPriceMinor: difference, netMinor: difference, taxRateBps: rateBps });
  return lines;
}

/**
 * Issues the order's invoice inside the caller's transaction, once (keyed by the order); returns the existing one
 * on a repeat. `paidAt` is the date of payment, the invoice's date of supply or payment (Art. 226(7)).
 */
export async function issueInvoiceTx(tx: Tx, orderId: string, paidAt?: Date): Promise<Invoice | null> {
  // The order row's lock makes concurrent issues of one order wait, so a repeat never takes a number it gives back.
  const order = await lockedOrder(tx, orderId);
  if (!order) return null;
  const [existing] = await tx
    .select()
    .from(schema.invoices)
    .where(eq(schema.invoices.sourceKey, invoiceKey(orderId)));
  if (existing) return existing;
  const [quote] = await tx.select().from(schema.quotes).where(eq(schema.quotes.id, order.quoteId));
  const [seller, buyer] = [await organisation(tx, order.labId), await organisation(tx, order.clientOrganisationId)];
  const supplied = paidAt ?? (await paymentDate(tx, orderId)) ?? new Date();
  const now = new Date();
  const { treatment, rateBps, notes } = await treatmentOf(tx, order);
  const netMinor = order.amountMinor - order.taxMinor;
  const taxMinor = order.taxMinor;
  const issued = await takeDocumentNumber(tx, "invoice", order.labId, now);
  const document: InvoiceDocument = {
    kind: "invoice",
    number: issued.number,
    issueDate: isoDay(now),
    supplyDate: isoDay(supplied),
    currency: order.currency,
    seller: invoicePartyOf(seller),
    buyer: invoicePartyOf(buyer),
    issuedOnBehalfBy: PLATFORM_NAME,
    orderNumber: order.number,
    purchaseOrderNumber: order.purchaseOrderNumber ?? null,
    creditsInvoice: null,
    period: null,
    lines: linesOf(quote?.lineItems ?? [], netMinor, rateBps),
    taxPerRate: [{ taxRateBps: rateBps, netMinor, taxMinor }],
    totals: { netMinor, taxMinor, grossMinor: order.amountMinor },
    treatment,
    notes,
  };
  const [row] = await tx
    .insert(schema.invoices)
    .values({
      kind: "invoice",
      number: issued.number,
      series: issued.series,
      seq: issued.seq,
      issuerOrganisationId: order.labId,
      recipientOrganisationId: order.clientOrganisationId,
      orderId,
      currency: order.currency,
      netMinor,
      taxMinor,
      totalMinor: order.amountMinor,
      document,
      sourceKey: invoiceKey(orderId),
      issuedAt: now,
    })
    .returning();
  return row;
}

/** The invoice of a paid order, issued now when it has none yet (orders paid before invoices existed); null when unpaid. */
export async function ensureInvoice(orderId: string): Promise<Invoice | null> {
  const [existing] = await db
    .select()
    .from(schema.invoices)
    .where(eq(schema.invoices.sourceKey, invoiceKey(orderId)));
  if (existing) return existing;
  return db.transaction(async (tx) => {
    const paidAt = await paymentDate(tx, orderId);
    if (!paidAt) return null;
    return issueInvoiceTx(tx, orderId, paidAt);
  });
}

/**
 * Issues the credit note of a refund inside the caller's transaction, once per refund. The net and tax are split
 * cumulatively — the tax credited so far is round(gross credited so far × invoice tax ÷ invoice gross) — so the
 * credit notes of an invoice add up to it exactly. A refund beyond what the invoice still carries (an
 * overpayment returned) is credited only up to it; nothing is issued when nothing is left.
 */
export async function issueCreditNoteTx(tx: Tx, orderId: string, refund: { id: string; amountMinor: number; reason: string }): Promise<Invoice | null> {
  const invoice = await issueInvoiceTx(tx, orderId);
  if (!invoice) return null;
  const [existing] = await tx
    .select()
    .from(schema.invoices)
    .where(eq(schema.invoices.sourceKey, creditNoteKey(refund.id)));
  if (existing) return existing;
  const [before] = await tx
    .select({
      gross: sql<string>`coalesce(sum(${schema.invoices.totalMinor}), 0)`,
      tax: sql<string>`coalesce(sum(${schema.invoices.taxMinor}), 0)`,
    })
    .from(schema.invoices)
    .where(and(eq(schema.invoices.creditsInvoiceId, invoice.id), eq(schema.invoices.kind, "credit_note")));
  const grossBefore = Number(before.gross);
  const taxBefore = Number(before.tax);
  const grossMinor = Math.min(refund.amountMinor, invoice.totalMinor - grossBefore);
  if (grossMinor <= 0) return null;
  const taxAfter = invoice.totalMinor === 0 ? 0 : Math.round(((grossBefore + grossMinor) * invoice.taxMinor) / invoice.totalMinor);
  const taxMinor = taxAfter - taxBefore;
  const netMinor = grossMinor - taxMinor;
  const source = invoice.document;
  const rateBps = source.taxPerRate[0]?.taxRateBps ?? 0;
  const now = new Date();
  const issued = await takeDocumentNumber(tx, "credit_note", invoice.issuerOrganisationId, now);
  const document: InvoiceDocument = {
    ...source,
    kind: "credit_note",
    number: issued.number,
    issueDate: isoDay(now),
    supplyDate: source.supplyDate,
    creditsInvoice: { number: invoice.number, issueDate: source.issueDate },
    lines: [
      {
        description: creditLine(source.orderNumber ?? "", refund.reason),
        quantity: 1,
        unitPriceMinor: netMinor,
        netMinor,
        taxRateBps: rateBps,
      },
    ],
    taxPerRate: [{ taxRateBps: rateBps, netMinor, taxMinor }],
    totals: { netMinor, taxMinor, grossMinor },
  };
  const [row] = await tx
    .insert(schema.invoices)
    .values({
      kind: "credit_note",
      number: issued.number,
      series: issued.series,
      seq: issued.seq,
      issuerOrganisationId: invoice.issuerOrganisationId,
      recipientOrganisationId: invoice.recipientOrganisationId,
      orderId,
      creditsInvoiceId: invoice.id,
      currency: invoice.currency,
      netMinor,
      taxMinor,
      totalMinor: grossMinor,
      document,
      sourceKey: creditNoteKey(refund.id),
      issuedAt: now,
    })
    .returning();
  return row;
}

/**
 * The credit note's line: the refund's reason as the buyer reads it. A dispute's refund carries the ledger's memo
 * ("Dispute decision: refund. <the admin's reason>"), which is written out in words instead.
 */
function creditLine(orderNumber: string, reason: string) {
  const dispute = /^Dispute decision: refund\.\s*/.exec(reason);
  if (dispute)
    return `Refund on order ${orderNumber} after the dispute decision${reason.length > dispute[0].length ? `: ${reason.slice(dispute[0].length)}` : ""}`;
  return `Refund on order ${orderNumber}${reason ? `: ${reason}` : ""}`.trim();
}

/** An order's invoice (null before it is paid) and its credit notes, oldest first. */
export async function documentsOfOrder(orderId: string) {
  const invoice = await ensureInvoice(orderId);
  if (!invoice) return null;
  const creditNotes = await db
    .select()
    .from(schema.invoices)
    .where(and(eq(schema.invoices.creditsInvoiceId, invoice.id), eq(schema.invoices.kind, "credit_note")))
    .orderBy(asc(schema.invoices.seq));
  return { invoice, creditNotes };
}

/** One credit note of an order by its number, or null. */
export async function creditNoteOfOrder(orderId: string, number: string) {
  const [row] = await db
    .select()
    .from(schema.invoices)
    .where(and(eq(schema.invoices.orderId, orderId), eq(schema.invoices.kind, "credit_note"), eq(schema.invoices.number, number)));
  return row ?? null;
}

/** The download links of an order's documents for its pages; null before it is paid. */
export async function orderDocumentLinks(orderId: string) {
  const found = await documentsOfOrder(orderId);
  if (!found) return null;
  return {
    invoice: { number: found.invoice.number, grossMinor: found.invoice.totalMinor, url: `/api/orders/${orderId}/invoice?format=pdf` },
    creditNotes: found.creditNotes.map((c) => ({
      number: c.number,
      grossMinor: c.totalMinor,
      url: `/api/orders/${orderId}/credit-notes/${encodeURIComponent(c.number)}?format=pdf`,
    })),
  };
}
