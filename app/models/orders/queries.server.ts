// Reading orders: the timeline, an organisation's side of an order, its order list and the shipment; the
// payments, payouts and disputes the order screens list.
import { and, asc, desc, eq, inArray, lte, or, type SQL, sql } from "drizzle-orm";
import { alias } from "drizzle-orm/pg-core";
import { db, schema } from "~/db/client.server";
import { isUuid } from "~/domain/ids";
import { ORDER_STATES, type OrderState } from "~/domain/order-states";
import { OWING_STATES } from "~/domain/receipt";
import type { OrderSort } from "~/components/orders-table";
import { pageOf, type TableQuery } from "~/utils/table";
import { paymentStanding } from "~/domain/payment-standing";
import { heldForOrder } from "~/models/payments/ledger.server";

export async function orderTimeline(orderId: string) {
  return db
    .select({
      id: schema.orderEvents.id,
      fromState: schema.orderEvents.fromState,
      toState: schema.orderEvents.toState,
      note: schema.orderEvents.note,
      at: schema.orderEvents.at,
      actor: schema.users.name,
    })
    .from(schema.orderEvents)
    .leftJoin(schema.users, eq(schema.users.id, schema.orderEvents.actorUserId))
    .where(eq(schema.orderEvents.orderId, orderId))
    .orderBy(asc(schema.orderEvents.id));
}

/**
 * The signed-in person's side of an order: the client organisation that placed it or the lab that
 * measures it. Anyone else — including other organisations — gets the same 404 as for a missing order.
 */
export async function orderForOrganisation(orderId: string, organisationId: string) {
  if (!isUuid(orderId)) return null;
  const [order] = await db.select().from(schema.orders).where(eq(schema.orders.id, orderId));
  if (!order) return null;
  if (order.clientOrganisationId === organisationId) return { order, side: "client" as const };
  if (order.labId === organisationId) return { order, side: "lab" as const };
  return null;
}

/**
 * One page of an organisation's orders, with the other party's name (the lab for a client, the client for a lab),
 * sorted in SQL as the orders table asks (app/components/orders-table.tsx); one count and one page of rows.
 */
export async function ordersPage(side: "client" | "lab", organisationId: string, q: TableQuery<OrderSort>) {
  const own = side === "client" ? schema.orders.clientOrganisationId : schema.orders.labId;
  const other = side === "client" ? schema.orders.labId : schema.orders.clientOrganisationId;
  const [{ n }] = await db.select({ n: sql<number>`count(*)::int` }).from(schema.orders).where(eq(own, organisationId));
  const info = pageOf(n, q);
  const d = (e: SQL) => (q.dir === "asc" ? sql`${e} asc` : sql`${e} desc`);
  const o = schema.orders;
  const byKey: Record<OrderSort, SQL[]> = {
    number: [d(sql`${o.number}`)],
    title: [d(sql`lower(${schema.requests.title})`)],
    // Amounts in different currencies are not compared by value: currency first, then amount.
    amount: [d(sql`${o.currency}`), d(sql`${o.amountMinor}`)],
    // States in the order an order moves through them.
    state: [d(sql`array_position(${sql.raw(`ARRAY[${ORDER_STATES.map((st) => `'${st}'`).join(",")}]::text[]`)}, ${o.state}::text)`)],
    updated: [d(sql`${o.updatedAt}`)],
    // Orders without a due date, and those no longer owed (delivered), come last either way.
    due: [
      sql`${d(
        sql`case when ${o.state} in (${sql.join(
          OWING_STATES.map((st) => sql`${st}`),
          sql`, `,
        )}) then ${o.dueAt} end`,
      )} nulls last`,
    ],
  };
  const rows = await db
    .select({
      id: o.id,
      number: o.number,
      state: o.state,
      amountMinor: o.amountMinor,
      currency: o.currency,
      updatedAt: o.updatedAt,
      dueAt: o.dueAt,
      title: schema.requests.title,
      counterpart: schema.organisations.name,
    })
    .from(o)
    .innerJoin(schema.requests, eq(schema.requests.id, o.requestId))
    .innerJoin(schema.organisations, eq(schema.organisations.id, other))
    .where(eq(own, organisationId))
    // Ties keep the newest change first, then a fixed order, so a row never moves between pages.
    .orderBy(...byKey[q.sort], desc(o.updatedAt), asc(o.id))
    .limit(info.pageSize)
    .offset(info.offset);
  return { rows, info };
}

export async function shipmentOf(orderId: string) {
  const [row] = await db.select().from(schema.shipments).where(eq(schema.shipments.orderId, orderId));
  return row ?? null;
}

/** An organisation's orders in the given states (every state when none is given), newest change first, with the lab's name and the request's title. */
export async function ordersInStates(side: "client" | "lab", organisationId: string, states: OrderState[]) {
  const own = side === "lab" ? schema.orders.labId : schema.orders.clientOrganisationId;
  const labOrg = alias(schema.organisations, "lab_org");
  return db
    .select({
      id: schema.orders.id,
      number: schema.orders.number,
      purchaseOrderNumber: schema.orders.purchaseOrderNumber,
      state: schema.orders.state,
      labName: labOrg.name,
      requestTitle: schema.requests.title,
      updatedAt: schema.orders.updatedAt,
    })
    .from(schema.orders)
    .innerJoin(schema.requests, eq(schema.requests.id, schema.orders.requestId))
    .innerJoin(labOrg, eq(labOrg.id, schema.orders.labId))
    .where(and(eq(own, organisationId), states.length ? inArray(schema.orders.state, states) : undefined))
    .orderBy(desc(schema.orders.updatedAt));
}

/** The order's state now, or null when there is no such order. */
export async function orderStateOf(orderId: string): Promise<OrderState | null> {
  const [row] = await db.select({ state: schema.orders.state }).from(schema.orders).where(eq(schema.orders.id, orderId));
  return row?.state ?? null;
}

/** The order's most recent payment attempt, if any: a declined card leaves its reason here. */
export async function latestPaymentOf(orderId: string) {
  const [row] = await db.select().from(schema.payments).where(eq(schema.payments.orderId, orderId)).orderBy(desc(schema.payments.createdAt)).limit(1);
  return row;
}

/** The order's dispute, if the client opened one. */
export async function disputeOf(orderId: string) {
  const [row] = await db.select().from(schema.disputes).where(eq(schema.disputes.orderId, orderId));
  return row;
}

/** How many disputes the admin's list shows to a page. */
export const DISPUTES_PAGE_SIZE = 20;

/** How many disputes are open and how many resolved. */
export async function disputeCountsByState() {
  const rows = await db.select({ state: schema.disputes.state, n: sql<number>`count(*)::int` }).from(schema.disputes).groupBy(schema.disputes.state);
  return Object.fromEntries(rows.map((r) => [r.state, r.n])) as Partial<Record<(typeof rows)[number]["state"], number>>;
}

/**
 * One page of disputes, open ones first, then resolved ones, each newest first (oldest first with
 * `dir: "asc"`), with its order, the request's title, both parties' names and who opened it.
 */
export async function disputesWithOrders(page: { limit: number; offset: number; dir?: "asc" | "desc" }) {
  const labOrg = alias(schema.organisations, "lab_org");
  const by = page.dir === "asc" ? asc : desc;
  return (
    db
      .select({
        dispute: schema.disputes,
        order: schema.orders,
        title: schema.requests.title,
        client: schema.organisations.name,
        lab: labOrg.name,
        openedBy: schema.users.name,
      })
      .from(schema.disputes)
      .innerJoin(schema.orders, eq(schema.orders.id, schema.disputes.orderId))
      .innerJoin(schema.requests, eq(schema.requests.id, schema.orders.requestId))
      .innerJoin(schema.organisations, eq(schema.organisations.id, schema.orders.clientOrganisationId))
      .innerJoin(labOrg, eq(labOrg.id, schema.orders.labId))
      .leftJoin(schema.users, eq(schema.users.id, schema.disputes.openedBy))
      // The enum's order puts "open" before "resolved"; the id keeps equal times in one order from page to page.
      .orderBy(asc(schema.disputes.state), by(schema.disputes.openedAt), by(schema.disputes.id))
      .limit(page.limit)
      .offset(page.offset)
  );
}

/** What is still held for the order (minor units of its currency), read outside any transaction. */
export function heldMoneyOf(orderId: string) {
  return heldForOrder(db, orderId);
}

/**
 * The timelines of the given orders in one query, oldest event first, grouped by order: the whole timeline of
 * the orders in `whole`, the last `last` events of the others; with each order's number of events.
 */
export async function orderTimelines(orderIds: string[], { whole, last }: { whole: string[]; last: number }) {
  const timelines = new Map<string, { rows: Awaited<ReturnType<typeof orderTimeline>>; total: number }>(orderIds.map((id) => [id, { rows: [], total: 0 }]));
  if (orderIds.length === 0) return timelines;
  const ranked = db
    .select({
      id: schema.orderEvents.id,
      orderId: schema.orderEvents.orderId,
      fromState: schema.orderEvents.fromState,
      toState: schema.orderEvents.toState,
      note: schema.orderEvents.note,
      at: schema.orderEvents.at,
      actorUserId: schema.orderEvents.actorUserId,
      fromEnd: sql<number>`row_number() over (partition by ${schema.orderEvents.orderId} order by ${schema.orderEvents.id} desc)`.as("from_end"),
      total: sql<number>`(count(*) over (partition by ${schema.orderEvents.orderId}))::int`.as("total"),
    })
    .from(schema.orderEvents)
    .where(inArray(schema.orderEvents.orderId, orderIds))
    .as("ranked");
  const rows = await db
    .select({
      id: ranked.id,
      orderId: ranked.orderId,
      fromState: ranked.fromState,
      toState: ranked.toState,
      note: ranked.note,
      at: ranked.at,
      actor: schema.users.name,
      total: ranked.total,
    })
    .from(ranked)
    .leftJoin(schema.users, eq(schema.users.id, ranked.actorUserId))
    .where(whole.length ? or(lte(ranked.fromEnd, last), inArray(ranked.orderId, whole)) : lte(ranked.fromEnd, last))
    .orderBy(asc(ranked.orderId), asc(ranked.id));
  for (const { orderId, total, ...event } of rows) {
    const t = timelines.get(orderId);
    if (!t) continue;
    t.rows.push(event);
    t.total = total;
  }
  return timelines;
}

/**
 * The payouts a lab received, newest first, each with its order's title and the platform fee kept from it.
 * Both are read from their side of the funds-held account.
 */
/** How many payouts the lab's payouts list shows to a page. */
export const PAYOUTS_PAGE_SIZE = 25;

/**
 * One page of the payouts the lab received, newest first, each with its order and the platform fee kept from it
 * (a fee's provider id is "fee:" and the transfer's id), and how many there are: one count and one page in SQL.
 */
export async function payoutsOfLab(labId: string, q: Pick<TableQuery, "page" | "pageSize">) {
  const tx = schema.ledgerTransactions;
  const held = and(eq(schema.ledgerEntries.transactionId, tx.id), eq(schema.ledgerEntries.account, "funds_held"));
  const ofLab = and(eq(tx.kind, "payout"), eq(schema.orders.labId, labId));
  const [{ n }] = await db
    .select({ n: sql<number>`count(*)::int` })
    .from(tx)
    .innerJoin(schema.ledgerEntries, held)
    .innerJoin(schema.orders, eq(schema.orders.id, tx.orderId))
    .where(ofLab);
  const info = pageOf(n, q);
  const feeTx = alias(schema.ledgerTransactions, "fee_tx");
  const feeEntry = alias(schema.ledgerEntries, "fee_entry");
  const rows = await db
    .select({
      id: tx.id,
      orderId: tx.orderId,
      transferId: tx.providerObjectId,
      at: tx.createdAt,
      currency: tx.currency,
      amount: schema.ledgerEntries.amountMinor,
      title: schema.requests.title,
      orderNumber: schema.orders.number,
      feeMinor: feeEntry.amountMinor,
    })
    .from(tx)
    .innerJoin(schema.ledgerEntries, held)
    .innerJoin(schema.orders, eq(schema.orders.id, tx.orderId))
    .innerJoin(schema.requests, eq(schema.requests.id, schema.orders.requestId))
    .leftJoin(feeTx, and(eq(feeTx.kind, "platform_fee"), eq(feeTx.orderId, tx.orderId), eq(feeTx.providerObjectId, sql`'fee:' || ${tx.providerObjectId}`)))
    .leftJoin(feeEntry, and(eq(feeEntry.transactionId, feeTx.id), eq(feeEntry.account, "funds_held")))
    .where(ofLab)
    .orderBy(desc(tx.createdAt), desc(tx.id))
    .limit(info.pageSize)
    .offset(info.offset);
  return { payouts: rows, info };
}

/** How many payments the client's payments list shows to a page. */
export const PAYMENTS_PAGE_SIZE = 25;

/** Paid and unfinished payments are listed; failed and expired checkout attempts are not. */
const listedPayment = (organisationId: string) =>
  and(eq(schema.orders.clientOrganisationId, organisationId), inArray(schema.payments.status, ["paid", "open"]));

/** How many payments the client organisation's list holds. */
export async function paymentCountOfClient(organisationId: string): Promise<number> {
  const [row] = await db
    .select({ n: sql<number>`count(*)::int` })
    .from(schema.payments)
    .innerJoin(schema.orders, eq(schema.orders.id, schema.payments.orderId))
    .where(listedPayment(organisationId));
  return row?.n ?? 0;
}

/**
 * One page of the client organisation's paid and unfinished payments, newest first (oldest first with
 * `dir: "asc"`), each with what has been refunded on its order.
 */
export async function paymentsOfClient(organisationId: string, page: { limit: number; offset: number; dir?: "asc" | "desc" }) {
  const by = page.dir === "asc" ? asc : desc;
  const payments = await db
    .select({
      id: schema.payments.id,
      orderId: schema.payments.orderId,
      status: schema.payments.status,
      method: schema.payments.method,
      receivedMinor: schema.payments.receivedMinor,
      amountMinor: schema.payments.amountMinor,
      currency: schema.payments.currency,
      at: schema.payments.updatedAt,
      orderNumber: schema.orders.number,
      title: schema.requests.title,
      lab: schema.organisations.name,
    })
    .from(schema.payments)
    .innerJoin(schema.orders, eq(schema.orders.id, schema.payments.orderId))
    .innerJoin(schema.requests, eq(schema.requests.id, schema.orders.requestId))
    .innerJoin(schema.organisations, eq(schema.organisations.id, schema.orders.labId))
    .where(listedPayment(organisationId))
    .orderBy(by(schema.payments.updatedAt), by(schema.payments.id))
    .limit(page.limit)
    .offset(page.offset);
  const orderIds = [...new Set(payments.map((p) => p.orderId))];
  const refunds = orderIds.length
    ? await db
        .select({ orderId: schema.ledgerTransactions.orderId, amount: schema.ledgerEntries.amountMinor })
        .from(schema.ledgerTransactions)
        .innerJoin(
          schema.ledgerEntries,
          and(eq(schema.ledgerEntries.transactionId, schema.ledgerTransactions.id), eq(schema.ledgerEntries.account, "funds_held")),
        )
        .where(and(eq(schema.ledgerTransactions.kind, "refund"), inArray(schema.ledgerTransactions.orderId, orderIds)))
    : [];
  const refunded = new Map<string, number>();
  for (const r of refunds) if (r.orderId) refunded.set(r.orderId, (refunded.get(r.orderId) ?? 0) + r.amount);
  return payments.map((p) => {
    const refundedMinor = p.status === "paid" ? (refunded.get(p.orderId) ?? 0) : 0;
    return { ...p, refundedMinor, standing: paymentStanding({ ...p, refundedMinor }) };
  });
}

/** What has been refunded on the order so far (minor units), from the ledger's refunds. */
export async function refundedOnOrder(orderId: string): Promise<number> {
  const [row] = await db
    .select({ refunded: sql<string>`coalesce(sum(${schema.ledgerEntries.amountMinor}), 0)` })
    .from(schema.ledgerTransactions)
    .innerJoin(schema.ledgerEntries, and(eq(schema.ledgerEntries.transactionId, schema.ledgerTransactions.id), eq(schema.ledgerEntries.account, "funds_held")))
    .where(and(eq(schema.ledgerTransactions.kind, "refund"), eq(schema.ledgerTransactions.orderId, orderId)));
  return Number(row?.refunded ?? 0);
}

/** A paid payment of the client organisation with its order's title, lab and quote (the receipt's lines); undefined otherwise. */
export async function paidReceipt(paymentId: string, clientOrganisationId: string) {
  const [row] = await db
    .select({
      payment: schema.payments,
      orderNumber: schema.orders.number,
      purchaseOrderNumber: schema.orders.purchaseOrderNumber,
      title: schema.requests.title,
      lab: schema.organisations.name,
      quote: schema.quotes,
    })
    .from(schema.payments)
    .innerJoin(schema.orders, eq(schema.orders.id, schema.payments.orderId))
    .innerJoin(schema.requests, eq(schema.requests.id, schema.orders.requestId))
    .innerJoin(schema.quotes, eq(schema.quotes.id, schema.orders.quoteId))
    .innerJoin(schema.organisations, eq(schema.organisations.id, schema.orders.labId))
    .where(and(eq(schema.payments.id, paymentId), eq(schema.orders.clientOrganisationId, clientOrganisationId), eq(schema.payments.status, "paid")));
  return row;
}
