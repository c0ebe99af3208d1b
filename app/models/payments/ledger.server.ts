// The double-entry ledger: every money movement is a transaction whose entries sum to zero per currency.
import { and, eq, inArray, sql, type SQL } from "drizzle-orm";
import { db, schema } from "~/db/client.server";
import type { Tx } from "~/db/client.server";

/**
 * Accounts, with signed amounts (debit +, credit −):
 * `platform_cash` — money at the payment provider; `funds_held` — owed to a client or a lab until an order
 * settles; `platform_fees` — the platform's revenue.
 */
export const ACCOUNTS = { cash: "platform_cash", held: "funds_held", fees: "platform_fees" } as const;

export interface LedgerPosting {
  kind: (typeof schema.ledgerKind.enumValues)[number];
  orderId: string | null;
  currency: string;
  /** The provider's object (charge, transfer, refund) or a key of ours; unique per kind. */
  providerObjectId: string;
  memo: string;
  entries: { account: string; amountMinor: number }[];
}

export class UnbalancedPosting extends Error {}

/** Posts a transaction once: a second posting for the same provider object is ignored (returns false). */
export async function postLedger(tx: Tx, posting: LedgerPosting): Promise<boolean> {
  const sum = posting.entries.reduce((s, e) => s + e.amountMinor, 0);
  if (sum !== 0 || posting.entries.some((e) => !Number.isInteger(e.amountMinor))) {
    throw new UnbalancedPosting(`Ledger posting ${posting.kind} for ${posting.providerObjectId} does not balance (${sum}).`);
  }
  const [row] = await tx
    .insert(schema.ledgerTransactions)
    .values({ kind: posting.kind, orderId: posting.orderId, currency: posting.currency, providerObjectId: posting.providerObjectId, memo: posting.memo })
    .onConflictDoNothing()
    .returning({ id: schema.ledgerTransactions.id });
  if (!row) return false;
  await tx
    .insert(schema.ledgerEntries)
    .values(posting.entries.map((e) => ({ transactionId: row.id, account: e.account, amountMinor: e.amountMinor, currency: posting.currency })));
  return true;
}

/** What is still held for each of the given orders (minor units of its currency), in one query; 0 for an order with nothing. */
export async function heldForOrders(orderIds: string[], tx: Tx | typeof db = db): Promise<Map<string, number>> {
  const held = new Map<string, number>(orderIds.map((id) => [id, 0]));
  if (orderIds.length === 0) return held;
  const rows = await tx
    .select({ orderId: schema.ledgerTransactions.orderId, held: sql<string>`coalesce(-sum(${schema.ledgerEntries.amountMinor}), 0)` })
    .from(schema.ledgerEntries)
    .innerJoin(schema.ledgerTransactions, eq(schema.ledgerTransactions.id, schema.ledgerEntries.transactionId))
    .where(and(inArray(schema.ledgerTransactions.orderId, orderIds), eq(schema.ledgerEntries.account, ACCOUNTS.held)))
    .groupBy(schema.ledgerTransactions.orderId);
  for (const r of rows) if (r.orderId) held.set(r.orderId, Number(r.held));
  return held;
}

/** What is still held for an order (minor units of its currency). */
export async function heldForOrder(tx: Tx | typeof db, orderId: string): Promise<number> {
  return (await heldForOrders([orderId], tx)).get(orderId) ?? 0;
}

export interface LedgerTotals {
  /** Paid in by clients (the provider's charges), before anything left again. */
  takenInMinor: number;
  /** Still held: taken in minus paid to labs, platform fees and refunds. */
  heldMinor: number;
  paidOutMinor: number;
  feesMinor: number;
  refundedMinor: number;
}

/** Totals and the balance check over the whole ledger, overall and per currency. */
export async function ledgerSummary() {
  const [counts] = await db.select({ n: sql<string>`count(*)` }).from(schema.ledgerTransactions);
  const unbalanced = await db.execute<{ n: string }>(sql`
    select count(*) as n from (
      select e.transaction_id from ledger_entries e group by e.transaction_id, e.currency having sum(e.amount_minor) <> 0
    ) x`);
  const rows = await db.execute<{ currency: string; taken_in: string; held: string; paid_out: string; fees: string; refunded: string }>(sql`
    select e.currency,
      coalesce(sum(e.amount_minor) filter (where e.account = ${ACCOUNTS.cash} and t.kind = 'payment_held'), 0) as taken_in,
      coalesce(-sum(e.amount_minor) filter (where e.account = ${ACCOUNTS.held}), 0) as held,
      coalesce(-sum(e.amount_minor) filter (where e.account = ${ACCOUNTS.cash} and t.kind = 'payout'), 0) as paid_out,
      coalesce(-sum(e.amount_minor) filter (where e.account = ${ACCOUNTS.fees}), 0) as fees,
      coalesce(-sum(e.amount_minor) filter (where e.account = ${ACCOUNTS.cash} and t.kind = 'refund'), 0) as refunded
    from ledger_entries e join ledger_transactions t on t.id = e.transaction_id
    group by e.currency order by e.currency`);
  const byCurrency: Record<string, LedgerTotals> = {};
  for (const r of rows.rows) {
    byCurrency[r.currency] = {
      takenInMinor: Number(r.taken_in),
      heldMinor: Number(r.held),
      paidOutMinor: Number(r.paid_out),
      feesMinor: Number(r.fees),
      refundedMinor: Number(r.refunded),
    };
  }
  const sum = (k: keyof LedgerTotals) => Object.values(byCurrency).reduce((s, t) => s + t[k], 0);
  return {
    transactions: Number(counts.n),
    balanced: Number(unbalanced.rows[0].n) === 0,
    takenInMinor: sum("takenInMinor"),
    heldMinor: sum("heldMinor"),
    paidOutMinor: sum("paidOutMinor"),
    feesMinor: sum("feesMinor"),
    refundedMinor: sum("refundedMinor"),
    byCurrency,
  };
}

export interface LedgerFilter {
  kind?: string;
  currency?: string;
  orderId?: string;
  orderNumber?: string;
  from?: Date;
  to?: Date;
}

/** Ledger transactions with their entries, newest first (or by kind), a page at a time, for the admin screen and CSV export. */
export async function ledgerRows(f: LedgerFilter, limit = 500, page: { offset?: number; sort?: "at" | "kind"; dir?: "asc" | "desc" } = {}) {
  const where = ledgerWhere(f);
  const dir = page.dir === "asc" ? sql`asc` : sql`desc`;
  const order = page.sort === "kind" ? sql`t.kind ${dir}, t.created_at desc, t.id` : sql`t.created_at ${dir}, t.id`;
  const result = await db.execute<{
    id: string;
    kind: string;
    order_id: string | null;
    order_number: string | null;
    purchase_order_number: string | null;
    currency: string;
    provider_object_id: string;
    memo: string;
    created_at: string;
    account: string;
    amount_minor: number;
  }>(sql`
    select t.id, t.kind, t.order_id, o.number as order_number, o.purchase_order_number, t.currency, t.provider_object_id, t.memo, t.created_at, e.account, e.amount_minor
    from (select * from ledger_transactions t ${where.length ? sql`where ${sql.join(where, sql` and `)}` : sql``} order by ${order} limit ${limit} offset ${page.offset ?? 0}) t
    join ledger_entries e on e.transaction_id = t.id
    left join orders o on o.id = t.order_id
    order by ${order}, e.id`);
  return result.rows;
}

/** How many transactions the filter matches (the ledger screen pages by transaction, each with all its entries). */
export async function ledgerTransactionCount(f: LedgerFilter) {
  const where = ledgerWhere(f);
  const result = await db.execute<{ n: string }>(
    sql`select count(*) as n from ledger_transactions t ${where.length ? sql`where ${sql.join(where, sql` and `)}` : sql``}`,
  );
  return Number(result.rows[0].n);
}

function ledgerWhere(f: LedgerFilter) {
  const where: SQL[] = [];
  if (f.kind) where.push(sql`t.kind = ${f.kind}`);
  if (f.currency) where.push(sql`t.currency = ${f.currency}`);
  if (f.orderId) where.push(sql`t.order_id = ${f.orderId}`);
  if (f.orderNumber) where.push(sql`t.order_id = (select o.id from orders o where o.number = ${f.orderNumber})`);
  if (f.from) where.push(sql`t.created_at >= ${f.from.toISOString()}`);
  if (f.to) where.push(sql`t.created_at < ${f.to.toISOString()}`);
  return where;
}
