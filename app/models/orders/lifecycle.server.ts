// Orders: state moves under a row lock, each written to the order's timeline.
import { isUuid } from "~/domain/ids";
import { asc, desc, eq } from "drizzle-orm";
import { db, schema } from "~/db/client.server";
import type { Order } from "~/db/schema";
import { notify } from "~/models/notifications/outbox.server";
import { moveProblem, type Mover, type OrderState } from "~/domain/order-states";

export type Tx = Parameters<Parameters<typeof db.transaction>[0]>[0];

export class OrderMoveRefused extends Error {
  constructor(
    message: string,
    readonly status = 409,
  ) {
    super(message);
  }
}

/** Locks the order row for the rest of the transaction. */
export async function lockOrder(tx: Tx, orderId: string): Promise<Order> {
  const [order] = await tx.select().from(schema.orders).where(eq(schema.orders.id, orderId)).for("update");
  if (!order) throw new OrderMoveRefused("No such order.", 404);
  return order;
}

/**
 * Moves a locked order to `to` if the state machine allows this mover, and writes the timeline row.
 * Returns the updated order.
 */
export async function moveOrder(
  tx: Tx,
  order: Order,
  to: OrderState,
  mover: Mover,
  actorUserId: string | null,
  note = "",
  extra: Partial<Pick<Order, "deliveredAt">> = {},
): Promise<Order> {
  const problem = moveProblem(order.state, to, mover);
  if (problem) throw new OrderMoveRefused(problem);
  const [updated] = await tx
    .update(schema.orders)
    .set({ state: to, updatedAt: new Date(), ...extra })
    .where(eq(schema.orders.id, order.id))
    .returning();
  await tx.insert(schema.orderEvents).values({ orderId: order.id, fromState: order.state, toState: to, actorUserId, note });
  await notify(tx, { kind: "order_moved", order: updated, from: order.state, note });
  return updated;
}

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
    .select({ id: schema.orders.id, state: schema.orders.state, amountMinor: schema.orders.amountMinor, currency: schema.orders.currency, updatedAt: schema.orders.updatedAt, title: schema.requests.title, counterpart: schema.organisations.name })
    .from(schema.orders)
    .innerJoin(schema.requests, eq(schema.requests.id, schema.orders.requestId))
    .innerJoin(schema.organisations, eq(schema.organisations.id, other))
    .where(eq(own, organisationId))
    .orderBy(desc(schema.orders.updatedAt))
    .limit(limit);
}
