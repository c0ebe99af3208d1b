// Reading orders: the timeline, an organisation's side of an order, its order list and the shipment; the
// payments, payouts and disputes the order screens list.
import { and, asc, desc, eq, inArray, sql } from "drizzle-orm";
import { alias } from "drizzle-orm/pg-core";
import { db, schema } from "~/db/client.server";
import { isUuid } from "~/domain/ids";
import type { OrderState } from "~/domain/order-states";
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

/** An organisation's orders, newest change first, with the other party's name: the lab for a client, the client for a lab. */
export async function ordersOf(side: "client" | "lab", organisationId: string, limit = 200) {
  const own = side === "client" ? schema.orders.clientOrganisationId : schema.orders.labId;
  const other = side === "client" ? schema.orders.labId : schema.orders.clientOrganisationId;
  return db
    .select({
      id: schema.orders.id,
      number: schema.orders.number,
      state: schema.orders.state,
      amountMinor: schema.orders.amountMinor,
      currency: schema.orders.currency,
      updatedAt: schema.orders.updatedAt,
      dueAt: schema.orders.dueAt,
      title: schema.requests.title,
      counterpart: schema.organisations.name,
    })
    .from(schema.orders)
    .innerJoin(schema.requests, eq(schema.requests.id, schema.orders.requestId))
    .innerJoin(schema.organisations, eq(schema.organisations.id, other))
    .where(eq(own, organisationId))
    .orderBy(desc(schema.orders.updatedAt))
    .limit(limit);
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

/** Every dispute, newest first, with its order, the request's title, both parties' names and who opened it. */
export async function disputesWithOrders() {
  const labOrg = alias(schema.organisations, "lab_org");
  return db
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
    .orderBy(desc(schema.disputes.openedAt));
}

/** What is still held for the order (minor units of its currency), read outside any transaction. */
export function heldMoneyOf(orderId: string) {
  return heldForOrder(db, orderId);
}

/**
 * The payouts a lab received, newest first, each with its order's title and the platform fee kept from it.
 * Both are read from their side of the funds-held account.
 */
export async function payoutsOfLab(labId: string) {
  const orders = await db
    .select({ id: schema.orders.id, number: schema.orders.number, title: schema.requests.title })
    .from(schema.orders)
    .innerJoin(schema.requests, eq(schema.requests.id, schema.orders.requestId))
    .where(eq(schema.orders.labId, labId));
  const ledgerOf = (kind: "payout" | "platform_fee") =>
    db
      .select({
        id: schema.ledgerTransactions.id,
        orderId: schema.ledgerTransactions.orderId,
        transferId: schema.ledgerTransactions.providerObjectId,
        at: schema.ledgerTransactions.createdAt,
        currency: schema.ledgerTransactions.currency,
        amount: schema.ledgerEntries.amountMinor,
      })
      .from(schema.ledgerTransactions)
      .innerJoin(
        schema.ledgerEntries,
        and(eq(schema.ledgerEntries.transactionId, schema.ledgerTransactions.id), eq(schema.ledgerEntries.account, "funds_held")),
      )
      .where(
        and(
          eq(schema.ledgerTransactions.kind, kind),
          inArray(
            schema.ledgerTransactions.orderId,
            orders.map((o) => o.id),
          ),
        ),
      )
      .orderBy(desc(schema.ledgerTransactions.createdAt));
  const [paid, fees] = orders.length ? await Promise.all([ledgerOf("payout"), ledgerOf("platform_fee")]) : [[], []];
  // A fee belongs to the transfer it was kept from: its provider id is "fee:" and the transfer's id.
  return paid.map((p) => ({
    ...p,
    title: orders.find((o) => o.id === p.orderId)?.title ?? "",
    orderNumber: orders.find((o) => o.id === p.orderId)?.number ?? "",
    feeMinor: fees.find((f) => f.transferId === `fee:${p.transferId}`)?.amount ?? null,
  }));
}

/** The client organisation's paid and unfinished payments, newest first, each with what has been refunded on its order. */
export async function paymentsOfClient(organisationId: string) {
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
    .where(and(eq(schema.orders.clientOrganisationId, organisationId), inArray(schema.payments.status, ["paid", "open"])))
    .orderBy(desc(schema.payments.updatedAt));
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
