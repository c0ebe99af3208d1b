// /lab/statements — the lab's payout statements per month (UTC): the payouts of each month with their orders, what
// the client paid, refunds, the platform fee and what the lab received, as PDF and CSV, and the month's fee invoices.
import { Formula } from "~/components/symbols";
import { Link } from "react-router";
import { useFormat } from "~/components/locale";
import { EmptyState, PageHeader, TableCard } from "~/components/ui";
import { isMonth, monthName } from "~/domain/fee-invoice";
import { feeInvoicesOfLab } from "~/models/invoices/fee-invoices.server";
import { labStatement, statementMonthsOfLab } from "~/models/statements/statements.server";
import { requireOrgRole } from "~/utils/permissions.server";
import type { Route } from "./+types/statements";

export async function loader({ request }: Route.LoaderArgs) {
  const { membership } = await requireOrgRole(request, "lab");
  const labId = membership.organisation.id;
  const asked = new URL(request.url).searchParams.get("month");
  const [months, feeInvoices] = await Promise.all([statementMonthsOfLab(labId), feeInvoicesOfLab(labId)]);
  const error = asked && !isMonth(asked) ? "Choose a month from the list." : null;
  const month = asked && !error ? asked : (months[0]?.month ?? null);
  const statement = month ? await labStatement(labId, month) : null;
  return {
    months: months.map((m) => ({ ...m, name: monthName(m.month), feeInvoices: feeInvoices.filter((f) => f.period === m.month).map((f) => f.number) })),
    statement: statement ? { ...statement, name: monthName(statement.month) } : null,
    error,
  };
}

const feeInvoiceHref = (number: string) => `/lab/statements/fee-invoices/${encodeURIComponent(number)}.pdf`;

export default function Statements({ loaderData }: Route.ComponentProps) {
  const fmt = useFormat();
  const { months, statement, error } = loaderData;
  return (
    <div>
      <PageHeader
        title="Statements"
        subtitle="What the platform paid your lab each month (UTC), order by order, with the platform fee kept and the month's fee invoice."
      />
      {error ? (
        <p className="mb-4 text-sm text-danger-700" role="alert">
          {error}
        </p>
      ) : null}
      {months.length === 0 ? (
        <EmptyState
          title="No statements yet"
          action={
            <Link to="/lab/payouts" className="btn-secondary">
              See payouts
            </Link>
          }
        >
          A month's statement appears here once your lab has been paid for an order in it.
        </EmptyState>
      ) : (
        <TableCard columns={["Month", "Payouts", "Statement", "Fee invoice"]} caption="Months with payouts">
          {months.map((m) => (
            <tr key={m.month}>
              <td>
                <Link to={`/lab/statements?month=${m.month}`} className="text-beam-700 underline">
                  {m.name}
                </Link>
              </td>
              <td>
                {fmt.number(m.payouts)} {m.payouts === 1 ? "payout" : "payouts"}
              </td>
              <td className="space-x-3 whitespace-nowrap">
                <a href={`/lab/statements/${m.month}.pdf`} className="text-beam-700 underline" aria-label={`Statement of ${m.name} as PDF`}>
                  PDF
                </a>
                <a href={`/lab/statements/${m.month}.csv`} className="text-beam-700 underline" aria-label={`Statement of ${m.name} as CSV`}>
                  CSV
                </a>
              </td>
              <td>
                {m.feeInvoices.length === 0 ? (
                  <span className="text-ink-600">Issued on the 1st of the next month</span>
                ) : (
                  m.feeInvoices.map((n) => (
                    <a key={n} href={feeInvoiceHref(n)} className="mr-3 font-mono text-xs text-beam-700 underline">
                      {n}
                    </a>
                  ))
                )}
              </td>
            </tr>
          ))}
        </TableCard>
      )}
      {statement ? (
        <section className="mt-8" aria-labelledby="statement-title">
          <h2 id="statement-title" className="mb-3 text-lg font-semibold">
            {statement.name}
          </h2>
          <div className="mb-4 grid gap-4 sm:grid-cols-2 lg:grid-cols-4">
            {statement.totals.map((t) => (
              <div key={t.currency} className="card py-4" data-currency={t.currency}>
                <p className="text-xs text-ink-600">Paid to your lab in {t.currency}</p>
                <p className="text-xl font-bold">{fmt.money(t.netMinor, t.currency)}</p>
                <p className="text-xs text-ink-600">
                  Clients paid {fmt.money(t.grossMinor, t.currency)} · refunded {fmt.money(t.refundedMinor, t.currency)} · platform fee{" "}
                  {fmt.money(t.feeMinor, t.currency)}
                </p>
              </div>
            ))}
          </div>
          <TableCard
            columns={["Order", "Purchase order", "Transfer date", "Paid by client", "Refunded", "Platform fee", "Paid to you"]}
            caption={`Payouts in ${statement.name}`}
          >
            {statement.rows.map((r) => (
              <tr key={`${r.orderNumber}-${r.paidAt}`}>
                <td>
                  <span className="font-mono text-xs">{r.orderNumber}</span> <Formula>{r.title}</Formula>
                </td>
                <td className="font-mono text-xs">{r.purchaseOrderNumber ?? "—"}</td>
                <td className="whitespace-nowrap">{fmt.date(r.paidAt)}</td>
                <td>{fmt.money(r.grossMinor, r.currency)}</td>
                <td>{fmt.money(r.refundedMinor, r.currency)}</td>
                <td>{fmt.money(r.feeMinor, r.currency)}</td>
                <td className="font-medium">{fmt.money(r.netMinor, r.currency)}</td>
              </tr>
            ))}
          </TableCard>
          <p className="mt-3 text-sm text-ink-700">
            {statement.feeInvoices.length === 0
              ? "The fee invoice for this month is issued on the 1st of the next month."
              : statement.feeInvoices.map((f) => (
                  <span key={f.number} className="mr-4">
                    Fee invoice{" "}
                    <a href={feeInvoiceHref(f.number)} className="font-mono text-beam-700 underline">
                      {f.number}
                    </a>
                    : {fmt.money(f.totalMinor, f.currency)}
                    {f.taxMinor > 0 ? ` (VAT ${fmt.money(f.taxMinor, f.currency)} included)` : ""}
                  </span>
                ))}
          </p>
        </section>
      ) : null}
    </div>
  );
}

export function meta(_: Route.MetaArgs) {
  return [
    { title: "Statements — Diffractory" },
    {
      name: "description",
      content: "Monthly payout statements: payouts with their orders, refunds, the platform fee and what your lab received, as PDF and CSV.",
    },
  ];
}
