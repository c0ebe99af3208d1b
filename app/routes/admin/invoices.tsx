// /admin/invoices — the documents issued in a period (invoices, credit notes, platform fee invoices), with totals
// per currency and kind, and the period's CSV for the accounts. Days are UTC; both the first and last are included.
import { Form, Link, useSearchParams } from "react-router";
import { DateField } from "~/components/date-field";
import { useFormat } from "~/components/locale";
import { SubmitButton } from "~/components/pending";
import { EmptyState, PageHeader, TableCard } from "~/components/ui";
import type { InvoiceKind } from "~/domain/invoice-document";
import { documentsIssuedBetween, parsePeriod, periodTotals } from "~/models/statements/period-export.server";
import { requireAdmin } from "~/utils/permissions.server";
import type { Route } from "./+types/invoices";

const KIND_WORDS: Record<InvoiceKind, string> = { invoice: "Invoice", credit_note: "Credit note", fee_invoice: "Platform fee invoice" };

const TREATMENT_WORDS: Record<string, string> = {
  domestic: "VAT charged",
  reverse_charge: "Reverse charge",
  outside_eu: "Outside the EU",
  no_vat_seller: "Seller without EU VAT number",
};

export async function loader({ request }: Route.LoaderArgs) {
  await requireAdmin(request);
  const params = new URL(request.url).searchParams;
  if (!params.has("from") && !params.has("to")) {
    // The current month so far, by default.
    const now = new Date();
    const first = new Date(Date.UTC(now.getUTCFullYear(), now.getUTCMonth(), 1));
    params.set("from", first.toISOString().slice(0, 10));
    params.set("to", now.toISOString().slice(0, 10));
  }
  const period = parsePeriod(params);
  if (!period.ok) return { error: period.error, from: params.get("from") ?? "", to: params.get("to") ?? "", docs: [], totals: [] };
  const docs = await documentsIssuedBetween(period.from, period.to);
  return { error: null, from: period.fromDay, to: period.toDay, docs: docs.slice(0, 500), count: docs.length, totals: periodTotals(docs) };
}

export default function Invoices({ loaderData }: Route.ComponentProps) {
  const fmt = useFormat();
  const { error, from, to, docs, totals } = loaderData;
  const count = ("count" in loaderData ? loaderData.count : 0) ?? 0;
  const [params] = useSearchParams();
  const exportQuery = new URLSearchParams({ from, to });
  return (
    <div>
      <PageHeader
        title="Invoices"
        subtitle="Invoices, credit notes and platform fee invoices issued in a period (days in UTC, both included)."
        actions={
          error ? null : (
            <Link to={`/admin/invoices/export?${exportQuery.toString()}`} reloadDocument className="btn-secondary">
              Download CSV
            </Link>
          )
        }
      />
      <Form method="get" className="card mb-6 grid gap-3 sm:grid-cols-4" aria-label="Choose the period">
        <div>
          <label className="label" htmlFor="from">
            First day
          </label>
          <DateField id="from" name="from" defaultValue={params.get("from") ?? from} />
        </div>
        <div>
          <label className="label" htmlFor="to">
            Last day
          </label>
          <DateField id="to" name="to" defaultValue={params.get("to") ?? to} />
        </div>
        <div className="flex items-end">
          <SubmitButton className="btn-primary w-full" pendingText="Reading…">
            Show the period
          </SubmitButton>
        </div>
        <p className="min-h-5 text-sm text-danger-700 sm:col-span-4" role={error ? "alert" : undefined}>
          {error}
        </p>
      </Form>
      {totals.length ? (
        <TableCard columns={["Currency", "Kind", "Documents", "Net", "Tax", "Gross"]} caption="Totals per currency">
          {totals.map((t) => (
            <tr key={`${t.currency}-${t.kind}`} data-total={`${t.currency}-${t.kind}`}>
              <td className="font-mono">{t.currency}</td>
              <td>{KIND_WORDS[t.kind]}</td>
              <td>{fmt.number(t.documents)}</td>
              <td>{fmt.money(t.netMinor, t.currency)}</td>
              <td>{fmt.money(t.taxMinor, t.currency)}</td>
              <td className="font-medium">{fmt.money(t.grossMinor, t.currency)}</td>
            </tr>
          ))}
        </TableCard>
      ) : null}
      {docs.length === 0 ? (
        error ? null : (
          <EmptyState title="Nothing issued in this period">
            Invoices are issued when orders are paid, credit notes with refunds, fee invoices on the 1st of each month.
          </EmptyState>
        )
      ) : (
        <div className="mt-6">
          <TableCard
            columns={["Number", "Kind", "Issued", "Seller", "Buyer", "Order", "Net", "Tax", "Gross", "Tax treatment"]}
            caption="Documents issued"
            scrolls
          >
            {docs.map((d) => (
              <tr key={d.number}>
                <td className="whitespace-nowrap font-mono text-xs">
                  {d.number}
                  {d.refersTo ? <span className="block text-ink-600">corrects {d.refersTo}</span> : null}
                </td>
                <td>{KIND_WORDS[d.kind]}</td>
                <td className="whitespace-nowrap">{fmt.date(d.issuedAt)}</td>
                <td>{d.seller}</td>
                <td>
                  {d.buyer}
                  {d.buyerTaxId ? <span className="block font-mono text-xs text-ink-600">{d.buyerTaxId}</span> : null}
                </td>
                <td className="whitespace-nowrap font-mono text-xs">
                  {d.orderNumber ?? (d.period ? `fees ${d.period}` : "—")}
                  {d.purchaseOrderNumber ? <span className="block text-ink-600">PO {d.purchaseOrderNumber}</span> : null}
                </td>
                <td className="text-right">{fmt.money(d.netMinor, d.currency)}</td>
                <td className="text-right">{fmt.money(d.taxMinor, d.currency)}</td>
                <td className="text-right font-medium">{fmt.money(d.grossMinor, d.currency)}</td>
                <td>{TREATMENT_WORDS[d.treatment] ?? d.treatment}</td>
              </tr>
            ))}
          </TableCard>
          {count > docs.length ? (
            <p className="mt-2 text-sm text-ink-600">
              The first {docs.length} of {count} are shown; the CSV has them all.
            </p>
          ) : null}
        </div>
      )}
    </div>
  );
}

export function meta(_: Route.MetaArgs) {
  return [
    { title: "Invoices — Diffractory" },
    {
      name: "description",
      content: "Invoices, credit notes and platform fee invoices issued in a period, with totals per currency and a CSV for the accounts.",
    },
  ];
}
