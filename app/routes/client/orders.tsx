// /client/orders — the organisation's orders with their state, lab and amount.
import { useLoaderData } from "react-router";
import { OrdersTable } from "~/components/orders-table";
import { EmptyState, PageHeader } from "~/components/ui";
import { ordersOf } from "~/models/orders.server";
import { requireOrgRole } from "~/utils/permissions.server";
import type { Route } from "./+types/orders";

export async function loader({ request }: Route.LoaderArgs) {
  const { membership } = await requireOrgRole(request, "client");
  return { orders: await ordersOf("client", membership.organisation.id) };
}

export default function ClientOrders() {
  const { orders } = useLoaderData<typeof loader>();
  return (
    <div>
      <PageHeader title="Orders" subtitle="Accepted quotes, from payment to delivered data." />
      {orders.length === 0 ? (
        <EmptyState title="No orders yet">An order appears here when you accept a lab's quote on one of your requests.</EmptyState>
      ) : (
        <OrdersTable orders={orders} hrefBase="/client/orders" counterpart="Lab" />
      )}
    </div>
  );
}

export function meta(_: Route.MetaArgs) {
  return [{ title: "Orders — Diffractory" }];
}
