// /lab/work-queue — the lab's orders, from paid and waiting for samples to delivered, most recent first.
import { Link } from "react-router";
import { ORDERS_TABLE, OrdersTable } from "~/components/orders-table";
import { EmptyState, PageHeader } from "~/components/ui";
import { ordersPage } from "~/models/orders/queries.server";
import { requireOrgRole } from "~/utils/permissions.server";
import { readTableQuery } from "~/utils/table";
import { dueStatus } from "~/domain/receipt";
import type { Route } from "./+types/work-queue";

export async function loader({ request }: Route.LoaderArgs) {
  const { membership } = await requireOrgRole(request, "lab");
  const q = readTableQuery(request, ORDERS_TABLE);
  const now = new Date();
  const { rows, info } = await ordersPage("lab", membership.organisation.id, q);
  const orders = rows.map(({ dueAt, ...o }) => ({ ...o, due: { at: dueAt?.toISOString() ?? null, ...dueStatus(dueAt, o.state, now) } }));
  return { orders, sort: q.sort, dir: q.dir, info };
}

export default function WorkQueue({ loaderData }: Route.ComponentProps) {
  const { orders, sort, dir, info } = loaderData;
  return (
    <div>
      <PageHeader title="Work queue" subtitle="Orders of your lab, where each one stands and when its data is due." />
      {orders.length === 0 ? (
        <EmptyState
          title="No orders to work on"
          action={
            <Link to="/lab/inbox" className="btn-primary">
              Find requests to quote in the inbox
            </Link>
          }
        >
          Accepted and paid orders appear here, from samples in transit to data delivered.
        </EmptyState>
      ) : (
        <OrdersTable orders={orders} hrefBase="/lab/orders" counterpart="Client" sort={sort} dir={dir} info={info} showDue />
      )}
    </div>
  );
}

export function meta(_: Route.MetaArgs) {
  return [
    { title: "Work queue — Diffractory" },
    { name: "description", content: "Your lab's orders from paid and waiting for samples to delivered, most recent first." },
  ];
}
