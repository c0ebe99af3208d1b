// The platform's monthly fee invoice to each lab (docs/design.md#platform-fee-invoices): one per lab, month and
// currency, drawn from the platform fees the ledger kept from that lab's payouts in the month (UTC), numbered in the
// platform's own gap-free series (FEE-2026-0001) and frozen as a document when issued.
import { and, asc, desc, eq, gte, lt, sql } from "drizzle-orm";
import { config } from "~/config.server";
import { db, schema } from "~/db/client.server";
import { feeInvoiceDocument, type FeeKept, monthOf, monthRange } from "~/domain/fee-invoice";
import type { InvoiceParty } from "~/domain/invoice-document";
import { formatMoney } from "~/domain/money";
import { COUNTRY_CODES, countryName } from "~/domain/tax-id";
import { decideTax, type TaxParty } from "~/domain/vat";
import { takeDocumentNumber } from "~/models/invoices/numbering.server";
import { ACCOUNTS } from "~/models/payments/ledger.server";

/** The key that makes a fee invoice once only: the lab, the month and the currency. */
export const feeSourceKey = (labId: string, month: string, currency: string) => `fee:${labId}:${month}:${currency}`;

/** The platform as the seller of its service to labs, from the configuration. */
export function platformParty(): InvoiceParty & { country: string } {
  const p = config.platform;
  return { name: p.legalName, address: { ...p.address }, taxId: p.vatId, country: p.address.country };
}

/** An ISO country code from what a profile holds: a code, or a country's English name as sign-up stores it. */
function countryCodeOf(text: string | null | undefined): string | null {
  const t = text?.trim();
  if (!t) return null;
  if (COUNTRY_CODES.includes(t.toUpperCase())) return t.toUpperCase();
  return COUNTRY_CODES.find((code) => countryName(code).toLowerCase() === t.toLowerCase()) ?? null;
}

/** An organisation as a party: its legal name (or name), billing address and tax id; its country for the tax rules. */
async function organisationParty(organisationId: string): Promise<{ party: InvoiceParty; tax: TaxParty }> {
  const [org] = await db.select().from(schema.organisations).where(eq(schema.organisations.id, organisationId));
  if (!org) throw new Error(`No organisation ${organisationId}`);
  // The billing address decides; without one, the country given at sign-up.
  const country = countryCodeOf(org.billingAddress?.country) ?? countryCodeOf(org.country);
  return {
    party: { name: org.legalName || org.name, address: org.billingAddress ?? null, taxId: org.taxId || null },
    tax: { country, taxId: org.taxId || null },
  };
}

/** Every platform fee the ledger kept in [from, to), with its lab, order number and currency. */
async function feesKept(from: Date, to: Date, labId?: string) {
  const t = schema.ledgerTransactions;
  const rows = await db
    .select({
      labId: schema.orders.labId,
      orderNumber: schema.orders.number,
      currency: t.currency,
      at: t.createdAt,
      // The fee account is credited (negative) with what the platform kept.
      feeMinor: sql<number>`(-${schema.ledgerEntries.amountMinor})::int`,
    })
    .from(t)
    .innerJoin(schema.ledgerEntries, and(eq(schema.ledgerEntries.transactionId, t.id), eq(schema.ledgerEntries.account, ACCOUNTS.fees)))
    .innerJoin(schema.orders, eq(schema.orders.id, t.orderId))
    .where(and(eq(t.kind, "platform_fee"), gte(t.createdAt, from), lt(t.createdAt, to), labId ? eq(schema.orders.labId, labId) : undefined))
    .orderBy(asc(t.createdAt));
  return rows;
}

class AlreadyIssued extends Error {}

export interface FeeInvoiceRun {
  month: string;
  issued: string[];
  alreadyIssued: number;
}

/**
 * Issues the fee invoices of a month that has ended: one per lab and currency with platform fees in it. Running it
 * again issues nothing new (each is keyed by lab, month and currency); a number is taken inside the transaction
 * that stores its invoice, so a run that fails halfway leaves no gap.
 */
export async function issueFeeInvoicesForMonth(month: string, at: Date = new Date()): Promise<FeeInvoiceRun> {
  const { from, to } = monthRange(month);
  if (to.getTime() > at.getTime()) throw new Error(`The month ${month} has not ended yet; its fee invoices are issued from the 1st of the next month.`);
  const groups = new Map<string, { labId: string; currency: string; fees: FeeKept[] }>();
  for (const f of await feesKept(from, to)) {
    if (f.feeMinor === 0) continue;
    const key = `${f.labId}:${f.currency}`;
    const group = groups.get(key) ?? { labId: f.labId, currency: f.currency, fees: [] };
    group.fees.push({ orderNumber: f.orderNumber, feeMinor: f.feeMinor, at: f.at });
    groups.set(key, group);
  }
  const seller = platformParty();
  const run: FeeInvoiceRun = { month, issued: [], alreadyIssued: 0 };
  for (const g of [...groups.values()].sort((a, b) => a.labId.localeCompare(b.labId) || a.currency.localeCompare(b.currency))) {
    const sourceKey = feeSourceKey(g.labId, month, g.currency);
    const [existing] = await db.select({ id: schema.invoices.id }).from(schema.invoices).where(eq(schema.invoices.sourceKey, sourceKey));
    if (existing) {
      run.alreadyIssued++;
      continue;
    }
    const buyer = await organisationParty(g.labId);
    const decision = decideTax({ country: seller.country, taxId: seller.taxId }, buyer.tax);
    try {
      const number = await db.transaction(async (tx) => {
        const taken = await takeDocumentNumber(tx, "fee_invoice", null, at);
        const doc = feeInvoiceDocument({
          number: taken.number,
          issuedAt: at,
          month,
          currency: g.currency,
          seller: { name: seller.name, address: seller.address, taxId: seller.taxId },
          buyer: buyer.party,
          decision,
          fees: g.fees,
          formatMoney,
        });
        const [row] = await tx
          .insert(schema.invoices)
          .values({
            kind: "fee_invoice",
            number: taken.number,
            series: taken.series,
            seq: taken.seq,
            issuerOrganisationId: null,
            recipientOrganisationId: g.labId,
            orderId: null,
            period: month,
            currency: g.currency,
            netMinor: doc.totals.netMinor,
            taxMinor: doc.totals.taxMinor,
            totalMinor: doc.totals.grossMinor,
            document: doc,
            sourceKey,
            issuedAt: at,
          })
          .onConflictDoNothing({ target: schema.invoices.sourceKey })
          .returning({ number: schema.invoices.number });
        // Another run issued it meanwhile: roll back, which gives the number back to the series.
        if (!row) throw new AlreadyIssued();
        return row.number;
      });
      run.issued.push(number);
    } catch (err) {
      if (!(err instanceof AlreadyIssued)) throw err;
      run.alreadyIssued++;
    }
  }
  return run;
}

/**
 * What the monthly job runs on the 1st (UTC): last month's fee invoices, and those of any earlier month a missed
 * run left out. Idempotent, so running it again, or on another day, is harmless.
 */
export async function issueDueFeeInvoices(at: Date = new Date()): Promise<FeeInvoiceRun[]> {
  const runs: FeeInvoiceRun[] = [];
  for (const month of await monthsWithFeesUninvoiced(at)) runs.push(await issueFeeInvoicesForMonth(month, at));
  return runs;
}

/** Every month before the current one with platform fees but a lab and currency still without its fee invoice. */
async function monthsWithFeesUninvoiced(at: Date = new Date()): Promise<string[]> {
  const current = monthRange(monthOf(at)).from;
  const rows = await db.execute<{ month: string }>(sql`
    select distinct to_char(t.created_at at time zone 'UTC', 'YYYY-MM') as month
    from ledger_transactions t join orders o on o.id = t.order_id
    where t.kind = 'platform_fee' and t.created_at < ${current.toISOString()}
      and not exists (
        select 1 from invoices i
        where i.source_key = 'fee:' || o.lab_id || ':' || to_char(t.created_at at time zone 'UTC', 'YYYY-MM') || ':' || t.currency)
    order by month`);
  return rows.rows.map((r) => r.month);
}

/** A lab's fee invoices, newest month first. */
export function feeInvoicesOfLab(labId: string) {
  const i = schema.invoices;
  return db
    .select({
      number: i.number,
      period: i.period,
      currency: i.currency,
      netMinor: i.netMinor,
      taxMinor: i.taxMinor,
      totalMinor: i.totalMinor,
      issuedAt: i.issuedAt,
    })
    .from(i)
    .where(and(eq(i.kind, "fee_invoice"), eq(i.recipientOrganisationId, labId)))
    .orderBy(desc(i.period), asc(i.currency));
}

/** A fee invoice by its number, with the lab it was issued to; null when there is none. */
export async function feeInvoiceByNumber(number: string) {
  const [row] = await db
    .select()
    .from(schema.invoices)
    .where(and(eq(schema.invoices.kind, "fee_invoice"), eq(schema.invoices.number, number)));
  return row ?? null;
}
