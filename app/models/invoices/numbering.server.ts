// Document numbers without gaps (docs/design.md#invoices): each series (a lab's invoices of a year, its credit
// notes of a year, the platform's fee invoices of a year) has one counter row, taken inside the transaction that
// stores the document. The upsert keeps the row locked until that transaction ends, so concurrent documents of one
// series wait for each other and a rolled-back document gives its number back.
import { sql } from "drizzle-orm";
import { schema, type Tx } from "~/db/client.server";
import type { InvoiceKind } from "~/domain/invoice-document";
import { orderPrefixOf } from "~/models/orders/numbers.server";

/** What starts a document number of each kind: INV-GRC-2026-0007, CN-GRC-2026-0001, FEE-2026-0012. */
const KIND_LETTERS: Record<InvoiceKind, string> = { invoice: "INV", credit_note: "CN", fee_invoice: "FEE" };

export interface DocumentNumber {
  series: string;
  seq: number;
  number: string;
}

/** "INV", "GRC", 2026, 7 → "INV-GRC-2026-0007"; a platform document has no issuer letters. */
export function formatDocumentNumber(kind: InvoiceKind, issuerPrefix: string | null, year: number, seq: number) {
  return [KIND_LETTERS[kind], issuerPrefix, year, String(seq).padStart(4, "0")].filter((p) => p !== null).join("-");
}

/**
 * Takes the next number of a series inside the caller's transaction. A lab's documents carry its letters (the
 * same initials its organisation would use for order numbers, given once); the platform's fee invoices have none.
 */
export async function takeDocumentNumber(tx: Tx, kind: InvoiceKind, issuerOrganisationId: string | null, at: Date = new Date()): Promise<DocumentNumber> {
  const year = at.getUTCFullYear();
  const prefix = issuerOrganisationId ? await orderPrefixOf(tx, issuerOrganisationId) : null;
  const series = `${kind}:${issuerOrganisationId ?? "platform"}:${year}`;
  const c = schema.documentNumberCounters;
  const [row] = await tx
    .insert(c)
    .values({ series, lastSeq: 1 })
    .onConflictDoUpdate({ target: c.series, set: { lastSeq: sql`${c.lastSeq} + 1` } })
    .returning({ seq: c.lastSeq });
  return { series, seq: row.seq, number: formatDocumentNumber(kind, prefix, year, row.seq) };
}

/**
 * The next standing-agreement number of a client organisation for the year of `at` (UTC), from the same
 * counter table in a series of its own: SA-<the client's order letters>-<year>-<seq>, e.g. SA-HCW-2026-0003.
 */
export async function takeAgreementNumber(tx: Tx, clientOrganisationId: string, at: Date = new Date()): Promise<string> {
  const year = at.getUTCFullYear();
  const prefix = await orderPrefixOf(tx, clientOrganisationId);
  const c = schema.documentNumberCounters;
  const [row] = await tx
    .insert(c)
    .values({ series: `agreement:${clientOrganisationId}:${year}`, lastSeq: 1 })
    .onConflictDoUpdate({ target: c.series, set: { lastSeq: sql`${c.lastSeq} + 1` } })
    .returning({ seq: c.lastSeq });
  return `SA-${prefix}-${year}-${String(row.seq).padStart(4, "0")}`;
}
