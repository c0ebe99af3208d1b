// /client/orders — the organisation's orders with their state, lab and amount.
import { desc, eq } from "drizzle-orm";
import { Link, useLoaderData } from "react-router";
import { Badge, EmptyState, PageHeader, TableCard } from "~/components/ui";
import { db, schema } from "~/db/client.server";
import { ORDER_STATE_LABELS, ORDER_STATE_TONES } from "~/models/order-states";
import { formatMoney } from "~/models/money";
import { requireOrgRole } from "~/utils/permissions.server";
import type { Route } from "./+types/orders";

export async function loader({ request }: Route.LoaderArgs) {
  const { membership } = await requireOrgRole(request, "client");
  const orders = await db
    .select({ id: schema.orders.id, state: schema.orders.state, amountMinor: schema.orders.amountMinor, currency: schema.orders.currency, updatedAt: schema.orders.updatedAt, title: schema.requests.title, lab: schema.organisations.name })
    .from(schema.orders)
    .innerJoin(schema.requests, eq(schema.requests.id, schema.orders.requestId))
    .innerJoin(schema.organisations, eq(schema.organisations.id, schema.orders.labId))
    .where(eq(schema.orders.clientOrganisationId, membership.organisation.id))
    .orderBy(desc(schema.orders.updatedAt))
    .limit(200);
  return { orders };
}

export default function ClientOrders() {
  const { orders } = useLoaderData<typeof loader>();
  return (
    <div>
      <PageHeader title="Orders" subtitle="Accepted quotes, from payment to delivered data." />
      {orders.length === 0 ? (
        <EmptyState title="No orders yet">An order appears here when you accept a lab's quote on one of your requests.</EmptyState>
      ) : (
        <TableCard columns={["Request", "Lab", "Amount", "State", "Updated"]} caption="Orders">
          {orders.map((o) => (
            <tr key={o.id}>
              <td>
                <Link to={`/client/orders/${o.id}`} className="font-medium text-beam-700 hover:underline">
                  {o.title}
                </Link>
              </td>
              <td>{o.lab}</td>
              <td>{formatMoney(o.amountMinor, o.currency)}</td>
              <td>
                <Badge tone={ORDER_STATE_TONES[o.state]}>{ORDER_STATE_LABELS[o.state]}</Badge>
              </td>
              <td>{new Date(o.updatedAt).toLocaleDateString()}</td>
            </tr>
          ))}
        </TableCard>
      )}
    </div>
  );
}

export function meta(_: Route.MetaArgs) {
  return [{ title: "Orders — Diffractory" }];
}
