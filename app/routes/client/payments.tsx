// /client/payments — what the organisation paid, what is held, what came back, with a receipt per payment.
import { and, desc, eq, inArray } from "drizzle-orm";
import { Link, useLoaderData } from "react-router";
import { Badge, EmptyState, PageHeader, TableCard } from "~/components/ui";
import { db, schema } from "~/db/client.server";
import { requireOrgRole } from "~/utils/permissions.server";
import type { Route } from "./+types/payments";
import { useFormat } from "~/components/locale";

export async function loader({ request }: Route.LoaderArgs) {
  const { membership } = await requireOrgRole(request, "client");
  const payments = await db
    .select({ id: schema.payments.id, orderId: schema.payments.orderId, status: schema.payments.status, amountMinor: schema.payments.amountMinor, currency: schema.payments.currency, at: schema.payments.updatedAt, chargeId: schema.payments.chargeId, title: schema.requests.title, lab: schema.organisations.name })
    .from(schema.payments)
    .innerJoin(schema.orders, eq(schema.orders.id, schema.payments.orderId))
    .innerJoin(schema.requests, eq(schema.requests.id, schema.orders.requestId))
    .innerJoin(schema.organisations, eq(schema.organisations.id, schema.orders.labId))
    .where(and(eq(schema.orders.clientOrganisationId, membership.organisation.id), inArray(schema.payments.status, ["paid", "open"])))
    .orderBy(desc(schema.payments.updatedAt));
  const orderIds = [...new Set(payments.map((p) => p.orderId))];
  const refunds = orderIds.length
    ? await db
        .select({ orderId: schema.ledgerTransactions.orderId, amount: schema.ledgerEntries.amountMinor })
        .from(schema.ledgerTransactions)
        .innerJoin(schema.ledgerEntries, and(eq(schema.ledgerEntries.transactionId, schema.ledgerTransactions.id), eq(schema.ledgerEntries.account, "funds_held")))
        .where(and(eq(schema.ledgerTransactions.kind, "refund"), inArray(schema.ledgerTransactions.orderId, orderIds)))
    : [];
  const refunded = new Map<string, number>();
  for (const r of refunds) if (r.orderId) refunded.set(r.orderId, (refunded.get(r.orderId) ?? 0) + r.amount);
  return { payments: payments.map((p) => ({ ...p, refundedMinor: refunded.get(p.orderId) ?? 0 })) };
}

export default function ClientPayments() {
  const fmt = useFormat();
  const { payments } = useLoaderData<typeof loader>();
  return (
    <div>
      <PageHeader title="Payments" subtitle="Payments are held by Diffractory until you accept the delivered data." />
      {payments.length === 0 ? (
        <EmptyState
          title="No payments yet"
          action={
            <Link to="/client/orders" className="btn-secondary">
              See your orders
            </Link>
          }
        >
          When you pay for an accepted quote, the payment and its receipt appear here.
        </EmptyState>
      ) : (
        <TableCard columns={["Date", "Order", "Lab", "Paid", "Refunded", "Status", ""]} caption="Payments">
          {payments.map((p) => (
            <tr key={p.id}>
              <td>{fmt.date(p.at)}</td>
              <td>
                <Link to={`/client/orders/${p.orderId}`} className="text-beam-700 hover:underline">
                  {p.title}
                </Link>
              </td>
              <td>{p.lab}</td>
              <td>{p.status === "paid" ? fmt.money(p.amountMinor, p.currency) : "—"}</td>
              <td>{p.refundedMinor ? fmt.money(p.refundedMinor, p.currency) : "—"}</td>
              <td>{p.status === "paid" ? <Badge tone="ok">Paid</Badge> : <Badge tone="caution">Not completed</Badge>}</td>
              <td>
                {p.status === "paid" ? (
                  <Link to={`/client/payments/${p.id}/receipt`} className="text-sm text-beam-700 underline">
                    Receipt
                  </Link>
                ) : null}
              </td>
            </tr>
          ))}
        </TableCard>
      )}
    </div>
  );
}

export function meta(_: Route.MetaArgs) {
  return [{ title: "Payments — Diffractory" }];
}
