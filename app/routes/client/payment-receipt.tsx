// /client/payments/:id/receipt — a printable receipt for one payment of the organisation, with what has been refunded
// since; its reference is the order number and the payment's date (never the payment provider's ids).
import { Formula } from "~/components/symbols";
import { isUuid } from "~/domain/ids";
import { DiffractionRingsIcon } from "~/components/ui";
import { documentsOfOrder } from "~/models/invoices/invoices.server";
import { ratePercent } from "~/domain/vat";
import { paidReceipt, refundedOnOrder } from "~/models/orders/queries.server";
import { PAYMENT_METHOD_LABELS, PAYMENT_STANDING_LABELS, paymentStanding } from "~/domain/payment-standing";
import { notFound, requireOrgRole } from "~/utils/permissions.server";
import type { Route } from "./+types/payment-receipt";
import { useFormat } from "~/components/locale";

export async function loader({ request, params }: Route.LoaderArgs) {
  const { membership } = await requireOrgRole(request, "client");
  if (!isUuid(params.id)) notFound("No such payment.");
  const row = await paidReceipt(params.id, membership.organisation.id);
  if (!row) notFound("No such payment in your organisation.");
  // The reference people read is the invoice's number, never the payment provider's id (docs/design.md#invoices).
  const documents = await documentsOfOrder(row.payment.orderId);
  const refundedMinor = await refundedOnOrder(row.payment.orderId);
  return {
    invoice: documents
      ? {
          number: documents.invoice.number,
          url: `/api/orders/${row.payment.orderId}/invoice?format=pdf`,
          tax: documents.invoice.document.taxPerRate.filter((r) => r.taxMinor !== 0),
          notes: documents.invoice.document.notes,
          creditNotes: documents.creditNotes.map((c) => ({
            number: c.number,
            grossMinor: c.totalMinor,
            url: `/api/orders/${row.payment.orderId}/credit-notes/${encodeURIComponent(c.number)}?format=pdf`,
          })),
        }
      : null,
    receipt: {
      id: row.payment.id,
      at: row.payment.updatedAt,
      refundedMinor,
      standing: paymentStanding({ status: row.payment.status, amountMinor: row.payment.amountMinor, refundedMinor }),
      method: PAYMENT_METHOD_LABELS[row.payment.method] ?? row.payment.method,
      amountMinor: row.payment.amountMinor,
      currency: row.payment.currency,
      orderNumber: row.orderNumber,
      purchaseOrderNumber: row.purchaseOrderNumber,
      title: row.title,
      lab: row.lab,
      lines: row.quote.lineItems,
      client: membership.organisation.name,
    },
  };
}

export default function Receipt({ loaderData }: Route.ComponentProps) {
  const fmt = useFormat();
  const { receipt, invoice } = loaderData;
  return (
    <article className="card mx-auto max-w-2xl print:border-0 print:shadow-none">
      <header className="flex items-center justify-between">
        <div className="flex items-center gap-2 font-bold">
          <DiffractionRingsIcon className="h-7 w-7 text-beam-600" /> Diffractory
        </div>
        <button type="button" className="btn-secondary print:hidden" onClick={() => window.print()}>
          Print
        </button>
      </header>
      <h1 className="mt-6 text-2xl font-bold">Receipt</h1>
      <dl className="mt-4 grid grid-cols-2 gap-y-1 text-sm">
        <dt className="text-ink-600">Client</dt>
        <dd>{receipt.client}</dd>
        <dt className="text-ink-600">Order</dt>
        <dd className="font-mono">{receipt.orderNumber}</dd>
        {receipt.purchaseOrderNumber ? (
          <>
            <dt className="text-ink-600">Purchase order</dt>
            <dd className="font-mono">{receipt.purchaseOrderNumber}</dd>
          </>
        ) : null}
        <dt className="text-ink-600">For</dt>
        <dd>
          <Formula>{receipt.title}</Formula> — {receipt.lab}
        </dd>
        <dt className="text-ink-600">Date</dt>
        <dd>{fmt.dateTime(receipt.at)}</dd>
        <dt className="text-ink-600">Payment method</dt>
        <dd>{receipt.method}</dd>
        {invoice ? (
          <>
            <dt className="text-ink-600">Invoice</dt>
            <dd>
              <a className="font-mono text-beam-700 underline" href={invoice.url} download>
                {invoice.number} (PDF)
              </a>
            </dd>
            {invoice.creditNotes.map((c) => (
              <CreditNoteRow key={c.number} note={c} currency={receipt.currency} />
            ))}
          </>
        ) : null}
        <dt className="text-ink-600">Reference</dt>
        <dd className="font-mono text-xs">
          {receipt.orderNumber} / {fmt.date(receipt.at)}
        </dd>
        <dt className="text-ink-600">State</dt>
        <dd>{PAYMENT_STANDING_LABELS[receipt.standing]}</dd>
      </dl>
      <table className="table mt-6">
        <thead>
          <tr>
            <th scope="col">Item</th>
            <th scope="col">Qty</th>
            <th scope="col" className="text-right">
              Amount
            </th>
          </tr>
        </thead>
        <tbody>
          {receipt.lines.map((l, i) => (
            <tr key={i}>
              <td>{l.description}</td>
              <td>{l.quantity}</td>
              <td className="text-right">{fmt.money(l.totalMinor, receipt.currency)}</td>
            </tr>
          ))}
          {invoice?.tax.map((r) => (
            <tr key={r.taxRateBps}>
              <td colSpan={2}>VAT {ratePercent(r.taxRateBps)}</td>
              <td className="text-right">{fmt.money(r.taxMinor, receipt.currency)}</td>
            </tr>
          ))}
          <tr>
            <td colSpan={2} className="font-semibold">
              {receipt.refundedMinor > 0 ? "Total charged" : "Total charged (held until delivery is accepted)"}
            </td>
            <td className="text-right font-semibold">{fmt.money(receipt.amountMinor, receipt.currency)}</td>
          </tr>
          {receipt.refundedMinor > 0 ? (
            <>
              <tr>
                <td colSpan={2}>Refunded to you</td>
                <td className="text-right">−{fmt.money(receipt.refundedMinor, receipt.currency)}</td>
              </tr>
              <tr>
                <td colSpan={2} className="font-semibold">
                  Net after refunds
                </td>
                <td className="text-right font-semibold">{fmt.money(receipt.amountMinor - receipt.refundedMinor, receipt.currency)}</td>
              </tr>
            </>
          ) : null}
        </tbody>
      </table>
      {invoice?.notes.length ? <p className="mt-3 text-sm text-ink-600">{invoice.notes.join(" ")}</p> : null}
    </article>
  );
}

function CreditNoteRow({ note, currency }: { note: { number: string; grossMinor: number; url: string }; currency: string }) {
  const fmt = useFormat();
  return (
    <>
      <dt className="text-ink-600">Credit note</dt>
      <dd>
        <a className="font-mono text-beam-700 underline" href={note.url} download>
          {note.number} (PDF)
        </a>{" "}
        — {fmt.money(note.grossMinor, currency)} refunded
      </dd>
    </>
  );
}

export function meta(_: Route.MetaArgs) {
  return [{ title: "Receipt — Diffractory" }, { name: "description", content: "A printable receipt for one payment, with anything refunded since." }];
}
