// /lab/work-queue — the lab's orders, from paid and waiting for samples to delivered, most recent first.
import { desc, eq } from "drizzle-orm";
import { Link, useLoaderData } from "react-router";
import { Badge, EmptyState, PageHeader, TableCard } from "~/components/ui";
import { db, schema } from "~/db/client.server";
import { formatMoney } from "~/models/money";
import { ORDER_STATE_LABELS, ORDER_STATE_TONES } from "~/models/order-states";
import { requireOrgRole } from "~/utils/permissions.server";
import type { Route } from "./+types/work-queue";

export async function loader({ request }: Route.LoaderArgs) {
  const { membership } = await requireOrgRole(request, "lab");
  const orders = await db
    .select({ id: schema.orders.id, state: schema.orders.state, amountMinor: schema.orders.amountMinor, currency: schema.orders.currency, updatedAt: schema.orders.updatedAt, title: schema.requests.title, client: schema.organisations.name })
    .from(schema.orders)
    .innerJoin(schema.requests, eq(schema.requests.id, schema.orders.requestId))
    .innerJoin(schema.organisations, eq(schema.organisations.id, schema.orders.clientOrganisationId))
    .where(eq(schema.orders.labId, membership.organisation.id))
    .orderBy(desc(schema.orders.updatedAt))
    .limit(200);
  return { orders };
}

export default function WorkQueue() {
  const { orders } = useLoaderData<typeof loader>();
  return (
    <div>
      <PageHeader title="Work queue" subtitle="Orders of your lab and where each one stands." />
      {orders.length === 0 ? (
        <EmptyState title="No orders to work on">Accepted and paid orders appear here, from samples in transit to data delivered.</EmptyState>
      ) : (
        <TableCard columns={["Request", "Client", "Amount", "State", "Updated"]} caption="Orders">
          {orders.map((o) => (
            <tr key={o.id}>
              <td>
                <Link to={`/lab/orders/${o.id}`} className="font-medium text-beam-700 hover:underline">
                  {o.title}
                </Link>
              </td>
              <td>{o.client}</td>
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
  return [{ title: "Work queue — Diffractory" }];
}
