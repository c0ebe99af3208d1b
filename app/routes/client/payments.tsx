// /client/payments — what the organisation paid, what is held, what came back, with a receipt per payment. Each
// payment's state comes from the ledger's refunds for its order (docs/design.md#payments-list): paid, partly refunded,
// refunded, part received (a bank transfer of which part has arrived) or not completed; and how it was paid.
// PAYMENTS_PAGE_SIZE (25) to a page, newest first, read a page at a time in SQL.
import { Formula } from "~/components/symbols";
import { Link } from "react-router";
import { Badge, EmptyState, PageHeader, TableCard } from "~/components/ui";
import { PageNav } from "~/components/data-table";
import { PAYMENTS_PAGE_SIZE, paymentCountOfClient, paymentsOfClient } from "~/models/orders/queries.server";
import { PAYMENT_METHOD_LABELS, PAYMENT_STANDING_LABELS, PAYMENT_STANDING_TONES } from "~/domain/payment-standing";
import { requireOrgRole } from "~/utils/permissions.server";
import type { Route } from "./+types/payments";
import { useFormat } from "~/components/locale";
import { pageOf, readTableQuery, type TableSpec } from "~/utils/table";

const TABLE: TableSpec<"at"> = { sorts: ["at"], defaultSort: "at", firstDir: { at: "desc" }, pageSize: PAYMENTS_PAGE_SIZE };

export async function loader({ request }: Route.LoaderArgs) {
  const { membership } = await requireOrgRole(request, "client");
  const q = readTableQuery(request, TABLE);
  // A page past the end shows the last one.
  const info = pageOf(await paymentCountOfClient(membership.organisation.id), q);
  const payments = await paymentsOfClient(membership.organisation.id, { limit: info.pageSize, offset: info.offset, dir: q.dir });
  return { payments, info };
}

export default function ClientPayments({ loaderData }: Route.ComponentProps) {
  const fmt = useFormat();
  const { payments, info } = loaderData;
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
        <>
          <TableCard columns={["Date", "Order", "Lab", "Method", "Amount", "Refunded", "State", ""]} caption="Payments">
            {payments.map((p) => (
              <tr key={p.id} data-standing={p.standing}>
                <td>{fmt.date(p.at)}</td>
                <td>
                  <Link to={`/client/orders/${p.orderId}`} className="text-beam-700 hover:underline">
                    <span className="font-mono text-xs">{p.orderNumber}</span> <Formula>{p.title}</Formula>
                  </Link>
                </td>
                <td>{p.lab}</td>
                <td>{PAYMENT_METHOD_LABELS[p.method] ?? p.method}</td>
                <td>{p.status === "paid" ? fmt.money(p.amountMinor, p.currency) : "—"}</td>
                <td>{p.refundedMinor ? fmt.money(p.refundedMinor, p.currency) : "—"}</td>
                <td>
                  <Badge tone={PAYMENT_STANDING_TONES[p.standing]}>{PAYMENT_STANDING_LABELS[p.standing]}</Badge>
                  {p.standing === "part_received" ? (
                    <span className="ml-2 text-sm">
                      {fmt.money(p.receivedMinor, p.currency)} of {fmt.money(p.amountMinor, p.currency)}
                    </span>
                  ) : null}
                </td>
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
          <PageNav info={info} noun={["payment", "payments"]} />
        </>
      )}
    </div>
  );
}

export function meta(_: Route.MetaArgs) {
  return [
    { title: "Payments — Diffractory" },
    { name: "description", content: "What your organisation paid, what is held until acceptance and what came back, with a receipt per payment." },
  ];
}
