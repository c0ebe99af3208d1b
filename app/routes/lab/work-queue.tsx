// /lab/work-queue — the lab's orders, from paid and waiting for samples to delivered, most recent first.
import { useLoaderData } from "react-router";
import { OrdersTable } from "~/components/orders-table";
import { EmptyState, PageHeader } from "~/components/ui";
import { ordersOf } from "~/models/orders.server";
import { requireOrgRole } from "~/utils/permissions.server";
import type { Route } from "./+types/work-queue";

export async function loader({ request }: Route.LoaderArgs) {
  const { membership } = await requireOrgRole(request, "lab");
  return { orders: await ordersOf("lab", membership.organisation.id) };
}

export default function WorkQueue() {
  const { orders } = useLoaderData<typeof loader>();
  return (
    <div>
      <PageHeader title="Work queue" subtitle="Orders of your lab and where each one stands." />
      {orders.length === 0 ? (
        <EmptyState title="No orders to work on">Accepted and paid orders appear here, from samples in transit to data delivered.</EmptyState>
      ) : (
        <OrdersTable orders={orders} hrefBase="/lab/orders" counterpart="Client" />
      )}
    </div>
  );
}

export function meta(_: Route.MetaArgs) {
  return [{ title: "Work queue — Diffractory" }];
}
