// What a workspace's overview shows: the organisation's orders by state, and what waits for someone there.
import { and, eq, sql } from "drizzle-orm";
import { db, schema } from "~/db/client.server";
import { ORDER_STATES, type OrderState } from "~/domain/order-states";

export interface WaitingItem {
  count: number;
  label: string;
  to: string;
}

export interface Overview {
  orders: { state: OrderState; count: number }[];
  waiting: WaitingItem[];
  requestCount: number;
}

async function orderCounts(side: "client" | "lab", organisationId: string) {
  const own = side === "client" ? schema.orders.clientOrganisationId : schema.orders.labId;
  const rows = await db
    .select({ state: schema.orders.state, count: sql<number>`count(*)::int` })
    .from(schema.orders)
    .where(eq(own, organisationId))
    .groupBy(schema.orders.state);
  const by = new Map(rows.map((r) => [r.state, r.count]));
  return ORDER_STATES.map((state) => ({ state, count: by.get(state) ?? 0 })).filter((r) => r.count > 0);
}

const n = (orders: Overview["orders"], ...states: OrderState[]) => orders.filter((o) => states.includes(o.state)).reduce((s, o) => s + o.count, 0);
const plural = (count: number, one: string, many: string) => (count === 1 ? one : many);

export async function clientOverview(organisationId: string): Promise<Overview> {
  const orders = await orderCounts("client", organisationId);
  const [requests] = await db
    .select({ total: sql<number>`count(*)::int`, drafts: sql<number>`(count(*) filter (where ${schema.requests.state} = 'draft'))::int` })
    .from(schema.requests)
    .where(eq(schema.requests.organisationId, organisationId));
  const [quotes] = await db
    .select({ count: sql<number>`count(*)::int` })
    .from(schema.quotes)
    .innerJoin(schema.requests, eq(schema.requests.id, schema.quotes.requestId))
    .where(and(eq(schema.requests.organisationId, organisationId), eq(schema.requests.state, "open"), eq(schema.quotes.state, "sent")));
  const waiting: WaitingItem[] = [
    { count: quotes.count, label: plural(quotes.count, "quote to compare and decide on", "quotes to compare and decide on"), to: "/client/requests" },
    { count: n(orders, "awaiting_payment"), label: plural(n(orders, "awaiting_payment"), "order to pay", "orders to pay"), to: "/client/orders" },
    {
      count: n(orders, "funds_held"),
      label: plural(n(orders, "funds_held"), "order whose samples are to ship", "orders whose samples are to ship"),
      to: "/client/orders",
    },
    {
      count: n(orders, "data_delivered"),
      label: plural(n(orders, "data_delivered"), "delivery to review: accept it or open a dispute", "deliveries to review: accept them or open a dispute"),
      to: "/client/data-room",
    },
    { count: requests.drafts, label: plural(requests.drafts, "draft request to finish", "draft requests to finish"), to: "/client/requests" },
  ].filter((w) => w.count > 0);
  return { orders, waiting, requestCount: requests.total };
}

export async function labOverview(labId: string): Promise<Overview> {
  const orders = await orderCounts("lab", labId);
  const [quotes] = await db
    .select({ count: sql<number>`count(*)::int` })
    .from(schema.quotes)
    .where(and(eq(schema.quotes.labId, labId), eq(schema.quotes.state, "sent")));
  const waiting: WaitingItem[] = [
    {
      count: n(orders, "samples_in_transit"),
      label: plural(
        n(orders, "samples_in_transit"),
        "parcel on its way: check it against its declaration on arrival",
        "parcels on their way: check each against its declaration on arrival",
      ),
      to: "/lab/work-queue",
    },
    {
      count: n(orders, "samples_received", "measuring"),
      label: plural(n(orders, "samples_received", "measuring"), "order to measure and deliver", "orders to measure and deliver"),
      to: "/lab/work-queue",
    },
    {
      count: n(orders, "disputed"),
      label: plural(n(orders, "disputed"), "order in dispute (an admin decides)", "orders in dispute (an admin decides)"),
      to: "/lab/work-queue",
    },
    {
      count: quotes.count,
      label: plural(quotes.count, "quote waiting for the client's decision", "quotes waiting for the clients' decisions"),
      to: "/lab/quotes",
    },
  ].filter((w) => w.count > 0);
  return { orders, waiting, requestCount: 0 };
}
