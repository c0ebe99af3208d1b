// /admin/ledger — every money movement as balanced double-entry rows, with filters and totals.
import { Form, Link, useSearchParams } from "react-router";
import { DateField } from "~/components/date-field";
import { PageNav, SortableTable } from "~/components/data-table";
import { SubmitButton } from "~/components/pending";
import { Badge, EmptyState, PageHeader } from "~/components/ui";
import { LEDGER_KINDS, parseLedgerFilter } from "~/domain/ledger-filter";
import { ledgerRows, ledgerSummary, ledgerTransactionCount } from "~/models/payments/ledger.server";
import { requireAdmin } from "~/utils/permissions.server";
import type { Route } from "./+types/ledger";
import { useFormat } from "~/components/locale";
import { pageOf, readTableQuery, type TableSpec } from "~/utils/table";

const TABLE: TableSpec<"at" | "kind"> = { sorts: ["at", "kind"], defaultSort: "at", firstDir: { at: "desc" }, pageSize: 50 };

export async function loader({ request }: Route.LoaderArgs) {
  await requireAdmin(request);
  const params = new URL(request.url).searchParams;
  const q = readTableQuery(params, TABLE);
  // The table's own parameters are not filters.
  const filters = new URLSearchParams([...params].filter(([k]) => !["sort", "dir", "page"].includes(k)));
  const parsed = parseLedgerFilter(filters);
  const total = parsed.ok ? await ledgerTransactionCount(parsed.filter) : 0;
  const info = pageOf(total, q);
  const [summary, rows] = await Promise.all([
    ledgerSummary(),
    parsed.ok ? ledgerRows(parsed.filter, info.pageSize, { offset: info.offset, sort: q.sort, dir: q.dir }) : Promise.resolve([]),
  ]);
  return { summary, rows, info, sort: q.sort, dir: q.dir, error: parsed.ok ? null : parsed.error };
}

export default function Ledger({ loaderData }: Route.ComponentProps) {
  const fmt = useFormat();
  const { summary, rows, info, sort, dir, error } = loaderData;
  const [params] = useSearchParams();
  return (
    <div>
      <PageHeader
        title="Ledger"
        subtitle={`${summary.transactions} transactions`}
        actions={
          <>
            <Badge tone={summary.balanced ? "ok" : "danger"}>{summary.balanced ? "Every transaction balances" : "Unbalanced transactions!"}</Badge>
            <Link to={`/admin/ledger/export?${params.toString()}`} reloadDocument className="btn-secondary">
              Download CSV
            </Link>
          </>
        }
      />
      {Object.entries(summary.byCurrency).map(([currency, t]) => {
        const figures = [
          ["taken-in", "Taken in from clients", t.takenInMinor],
          ["paid-out", "Paid to labs", t.paidOutMinor],
          ["fees", "Platform fees", t.feesMinor],
          ["refunded", "Refunded", t.refundedMinor],
          ["held", "Still held", t.heldMinor],
        ] as const;
        const addsUp = t.takenInMinor === t.paidOutMinor + t.feesMinor + t.refundedMinor + t.heldMinor;
        return (
          <section key={currency} className="card mb-6 py-4" aria-labelledby={`totals-${currency}`}>
            <div className="mb-3 flex flex-wrap items-baseline justify-between gap-2">
              <h2 id={`totals-${currency}`} className="text-sm font-semibold text-ink-800">
                Totals in {currency}
              </h2>
              <Badge tone={addsUp ? "ok" : "danger"}>{addsUp ? "Taken in = paid to labs + fees + refunded + still held" : "Totals do not add up!"}</Badge>
            </div>
            <dl className="grid gap-4 sm:grid-cols-3 lg:grid-cols-5">
              {figures.map(([key, label, v]) => (
                <div key={key}>
                  <dt className="text-xs text-ink-600">{label}</dt>
                  <dd className="text-xl font-bold" data-total={key}>
                    {fmt.money(v, currency)}
                  </dd>
                </div>
              ))}
            </dl>
          </section>
        );
      })}
      <Form method="get" className="card mb-6 grid gap-3 sm:grid-cols-6" aria-label="Filter the ledger">
        <div>
          <label className="label" htmlFor="kind">
            Movement
          </label>
          <select id="kind" name="kind" className="input" defaultValue={params.get("kind") ?? ""}>
            <option value="">All</option>
            {LEDGER_KINDS.map((k) => (
              <option key={k} value={k}>
                {k.replace("_", " ")}
              </option>
            ))}
          </select>
        </div>
        <div>
          <label className="label" htmlFor="currency">
            Currency
          </label>
          <input id="currency" name="currency" className="input" defaultValue={params.get("currency") ?? ""} placeholder="EUR" />
        </div>
        <div>
          <label className="label" htmlFor="order">
            Order
          </label>
          <input id="order" name="order" className="input" defaultValue={params.get("order") ?? ""} placeholder="HCW-2026-0042" />
        </div>
        <div>
          <label className="label" htmlFor="from">
            From
          </label>
          <DateField id="from" name="from" defaultValue={params.get("from") ?? ""} />
        </div>
        <div>
          <label className="label" htmlFor="to">
            To
          </label>
          <DateField id="to" name="to" defaultValue={params.get("to") ?? ""} />
        </div>
        <div className="flex items-end">
          <SubmitButton className="btn-primary w-full" pendingText="Filtering…">
            Filter
          </SubmitButton>
        </div>
        <p className="min-h-5 text-sm text-danger-700 sm:col-span-6" role={error ? "alert" : undefined}>
          {error}
        </p>
      </Form>
      {rows.length === 0 ? (
        <EmptyState title="No movements">Money movements appear here as clients pay, labs are paid and refunds go out.</EmptyState>
      ) : (
        <>
          <SortableTable
            columns={[
              { label: "When", sort: "at", firstDir: "desc" },
              { label: "Movement", sort: "kind" },
              { label: "Order" },
              { label: "Account" },
              { label: "Amount", className: "text-right" },
              { label: "Provider object" },
            ]}
            sort={sort}
            dir={dir}
            caption="Ledger entries"
          >
            {rows.map((r, i) => (
              <tr key={`${r.id}-${i}`}>
                <td className="whitespace-nowrap">{fmt.dateTime(r.created_at)}</td>
                <td>{r.kind.replace("_", " ")}</td>
                <td className="whitespace-nowrap font-mono text-xs">
                  {r.order_number ?? "—"}
                  {r.purchase_order_number ? <span className="block text-ink-600">PO {r.purchase_order_number}</span> : null}
                </td>
                <td className="font-mono text-xs">{r.account}</td>
                <td className={`text-right font-mono ${r.amount_minor < 0 ? "text-danger-700" : ""}`}>{fmt.money(r.amount_minor, r.currency)}</td>
                <td className="font-mono text-xs">{r.provider_object_id}</td>
              </tr>
            ))}
          </SortableTable>
          <PageNav info={info} noun={["transaction", "transactions"]} />
        </>
      )}
    </div>
  );
}

export function meta(_: Route.MetaArgs) {
  return [
    { title: "Ledger — Diffractory" },
    { name: "description", content: "Every money movement on Diffractory as balanced double-entry rows, with filters and totals." },
  ];
}
