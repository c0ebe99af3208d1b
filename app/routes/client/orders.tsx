// /client/orders — the organisation's orders with their state, lab and amount.
import { Link } from "react-router";
import { ORDERS_TABLE, OrdersTable } from "~/components/orders-table";
import { EmptyState, PageHeader } from "~/components/ui";
import { ordersPage } from "~/models/orders/queries.server";
import { requireOrgRole } from "~/utils/permissions.server";
import { readTableQuery } from "~/utils/table";
import type { Route } from "./+types/orders";

export async function loader({ request }: Route.LoaderArgs) {
  const { membership } = await requireOrgRole(request, "client");
  const q = readTableQuery(request, ORDERS_TABLE);
  const { rows, info } = await ordersPage("client", membership.organisation.id, q);
  return { orders: rows, sort: q.sort, dir: q.dir, info };
}

export default function ClientOrders({ loaderData }: Route.ComponentProps) {
  const { orders, sort, dir, info } = loaderData;
  return (
    <div>
      <PageHeader title="Orders" subtitle="Accepted quotes, from payment to delivered data." />
      {orders.length === 0 ? (
        <EmptyState
          title="No orders yet"
          action={
            <Link to="/client/requests" className="btn-primary">
              Go to your requests
            </Link>
          }
        >
          An order appears here when you accept a lab's quote on one of your requests.
        </EmptyState>
      ) : (
        <OrdersTable orders={orders} hrefBase="/client/orders" counterpart="Lab" sort={sort} dir={dir} info={info} />
      )}
    </div>
  );
}

export function meta(_: Route.MetaArgs) {
  return [{ title: "Orders — Diffractory" }, { name: "description", content: "Your organisation's orders with their state, lab and amount." }];
}
