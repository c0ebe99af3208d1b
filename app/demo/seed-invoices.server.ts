// The demo's invoices and credit notes (docs/design.md#invoices): every paid demo order has its invoice and every
// demo refund (the refusal on arrival, the decided dispute) its credit note. Paying and refunding through the app
// issue them already; this fills in any demo database seeded before invoices existed. Idempotent: each document
// is keyed by what caused it and issued once.
import { and, eq, isNotNull, isNull, type SQLWrapper, sql } from "drizzle-orm";
import { db, schema } from "~/db/client.server";
import { ensureInvoice, issueCreditNoteTx } from "~/models/invoices/invoices.server";

/** The credit note's source key of a refund posting, as issueCreditNoteTx writes it. */
const sqlRefundKey = (refundId: SQLWrapper) => sql`'refund:' || ${refundId}`;

export async function seedDemoInvoices() {
  const t = schema.ledgerTransactions;
  const paid = await db.selectDistinct({ orderId: t.orderId }).from(t).where(eq(t.kind, "payment_held"));
  for (const { orderId } of paid) if (orderId) await ensureInvoice(orderId);
  // Refunds posted without their credit note (older demo data): the refund's cash leaving is the amount credited.
  const refunds = await db
    .select({ orderId: t.orderId, refundId: t.providerObjectId, memo: t.memo, amount: schema.ledgerEntries.amountMinor })
    .from(t)
    .innerJoin(schema.ledgerEntries, and(eq(schema.ledgerEntries.transactionId, t.id), eq(schema.ledgerEntries.account, "funds_held")))
    .leftJoin(schema.invoices, eq(schema.invoices.sourceKey, sqlRefundKey(t.providerObjectId)))
    .where(and(eq(t.kind, "refund"), isNull(schema.invoices.id)));
  for (const r of refunds) {
    if (!r.orderId) continue;
    const orderId = r.orderId;
    await db.transaction((tx) => issueCreditNoteTx(tx, orderId, { id: r.refundId, amountMinor: r.amount, reason: r.memo }));
  }
  // The demo gives Pinecrest's orders their purchase-order numbers after paying them (seed-purchase-orders), where
  // a real client gives them on acceptance; their demo documents take the number as if it had been given then.
  const missing = await db
    .select({ id: schema.invoices.id, document: schema.invoices.document, po: schema.orders.purchaseOrderNumber })
    .from(schema.invoices)
    .innerJoin(schema.orders, eq(schema.orders.id, schema.invoices.orderId))
    .where(and(isNotNull(schema.orders.purchaseOrderNumber), sql`${schema.invoices.document}->>'purchaseOrderNumber' is null`));
  for (const m of missing) {
    await db
      .update(schema.invoices)
      .set({ document: { ...m.document, purchaseOrderNumber: m.po } })
      .where(eq(schema.invoices.id, m.id));
  }
  const [count] = await db.select({ n: sql<number>`count(*)::int` }).from(schema.invoices);
  return count.n;
}
