// A lab's payout statement per calendar month, UTC (docs/design.md#statements): every payout the ledger made to the
// lab in the month, with its order, what the client paid, what was refunded, the platform fee kept and what the lab
// received, and the month's fee invoices. Everything is read from the ledger, so the statement and the money agree.
import { sql } from "drizzle-orm";
import { db } from "~/db/client.server";
import { monthRange } from "~/domain/fee-invoice";
import { feeInvoicesOfLab } from "~/models/invoices/fee-invoices.server";
import { ACCOUNTS } from "~/models/payments/ledger.server";

export interface StatementRow {
  orderNumber: string;
  purchaseOrderNumber: string | null;
  title: string;
  /** When the transfer to the lab was made (the payout's ledger time). */
  paidAt: Date;
  currency: string;
  /** What the client paid for the order. */
  grossMinor: number;
  /** Refunded to the client by the end of the month. */
  refundedMinor: number;
  /** The platform fee kept from this payout. */
  feeMinor: number;
  /** What the lab received with this payout. */
  netMinor: number;
}

export interface StatementTotals {
  currency: string;
  orders: number;
  grossMinor: number;
  refundedMinor: number;
  feeMinor: number;
  netMinor: number;
}

export interface LabStatement {
  month: string;
  lab: { name: string };
  rows: StatementRow[];
  totals: StatementTotals[];
  feeInvoices: { number: string; currency: string; netMinor: number; taxMinor: number; totalMinor: number; issuedAt: Date }[];
}

/** The months (UTC) in which the lab received payouts, newest first, with the number of payouts in each. */
export async function statementMonthsOfLab(labId: string) {
  const rows = await db.execute<{ month: string; payouts: string }>(sql`
    select to_char(t.created_at at time zone 'UTC', 'YYYY-MM') as month, count(*) as payouts
    from ledger_transactions t join orders o on o.id = t.order_id
    where t.kind = 'payout' and o.lab_id = ${labId}
    group by 1 order by 1 desc`);
  return rows.rows.map((r) => ({ month: r.month, payouts: Number(r.payouts) }));
}

/** The lab's statement of one month: its payouts, their totals per currency, and the month's fee invoices. */
export async function labStatement(labId: string, month: string): Promise<LabStatement> {
  const { from, to } = monthRange(month);
  const [lab] = (await db.execute<{ name: string }>(sql`select coalesce(nullif(legal_name, ''), name) as name from organisations where id = ${labId}`)).rows;
  // A payout's fee is the platform_fee transaction whose provider id is "fee:" and the payout's (provider.server.ts).
  const result = await db.execute<{
    order_number: string;
    purchase_order_number: string | null;
    title: string;
    paid_at: string;
    currency: string;
    gross: number;
    refunded: string;
    fee: string;
    net: string;
  }>(sql`
    select o.number as order_number, o.purchase_order_number, r.title, t.created_at as paid_at, t.currency,
      o.amount_minor as gross,
      (select coalesce(sum(e.amount_minor), 0) from ledger_transactions rt join ledger_entries e on e.transaction_id = rt.id
        where rt.kind = 'refund' and rt.order_id = o.id and e.account = ${ACCOUNTS.held} and rt.created_at < ${to.toISOString()}) as refunded,
      (select coalesce(sum(e.amount_minor), 0) from ledger_transactions ft join ledger_entries e on e.transaction_id = ft.id
        where ft.kind = 'platform_fee' and ft.provider_object_id = 'fee:' || t.provider_object_id and e.account = ${ACCOUNTS.held}) as fee,
      (select coalesce(sum(e.amount_minor), 0) from ledger_entries e where e.transaction_id = t.id and e.account = ${ACCOUNTS.held}) as net
    from ledger_transactions t
    join orders o on o.id = t.order_id
    join requests r on r.id = o.request_id
    where t.kind = 'payout' and o.lab_id = ${labId} and t.created_at >= ${from.toISOString()} and t.created_at < ${to.toISOString()}
    order by t.created_at, o.number`);
  const rows: StatementRow[] = result.rows.map((r) => ({
    orderNumber: r.order_number,
    purchaseOrderNumber: r.purchase_order_number,
    title: r.title,
    paidAt: new Date(r.paid_at),
    currency: r.currency,
    grossMinor: Number(r.gross),
    refundedMinor: Number(r.refunded),
    feeMinor: Number(r.fee),
    netMinor: Number(r.net),
  }));
  const totals = new Map<string, StatementTotals>();
  for (const r of rows) {
    const t = totals.get(r.currency) ?? { currency: r.currency, orders: 0, grossMinor: 0, refundedMinor: 0, feeMinor: 0, netMinor: 0 };
    t.orders++;
    t.grossMinor += r.grossMinor;
    t.refundedMinor += r.refundedMinor;
    t.feeMinor += r.feeMinor;
    t.netMinor += r.netMinor;
    totals.set(r.currency, t);
  }
  const feeInvoices = (await feeInvoicesOfLab(labId)).filter((f) => f.period === month);
  return {
    month,
    lab: { name: lab?.name ?? "" },
    rows,
    totals: [...totals.values()].sort((a, b) => a.currency.localeCompare(b.currency)),
    feeInvoices: feeInvoices.map(({ period: _, ...f }) => f),
  };
}

/** Minor units as a plain decimal for spreadsheets ("1234.50"); the currency has its own column. */
export function decimal(minor: number) {
  const sign = minor < 0 ? "-" : "";
  const abs = Math.abs(minor);
  return `${sign}${Math.trunc(abs / 100)}.${String(abs % 100).padStart(2, "0")}`;
}

/** Text people typed (a title, a PO number) never starts a spreadsheet formula: a leading = + - @ gets a ' (as the ledger export does). */
export const formulaSafe = (v: string | null) => (v && /^[=+\-@\t\r]/.test(v) ? `'${v}` : v);

export const STATEMENT_CSV_HEADER = [
  "row",
  "month",
  "order",
  "purchase_order",
  "title",
  "transfer_date",
  "currency",
  "gross",
  "refunded",
  "platform_fee",
  "net_paid",
  "fee_invoice",
] as const;

/**
 * The statement as a table for the CSV download: a "payout" row per payout, a "total" row per currency and a
 * "fee_invoice" row per fee invoice of the month (its total in platform_fee). Amounts are decimals of the row's
 * currency, never minor units; dates are UTC days.
 */
export function statementTable(s: LabStatement): (string | number | null)[][] {
  const day = (d: Date) => d.toISOString().slice(0, 10);
  return [
    [...STATEMENT_CSV_HEADER],
    ...s.rows.map((r) => [
      "payout",
      s.month,
      r.orderNumber,
      formulaSafe(r.purchaseOrderNumber),
      formulaSafe(r.title),
      day(r.paidAt),
      r.currency,
      decimal(r.grossMinor),
      decimal(r.refundedMinor),
      decimal(r.feeMinor),
      decimal(r.netMinor),
      null,
    ]),
    ...s.totals.map((t) => [
      "total",
      s.month,
      null,
      null,
      `${t.orders} ${t.orders === 1 ? "payout" : "payouts"}`,
      null,
      t.currency,
      decimal(t.grossMinor),
      decimal(t.refundedMinor),
      decimal(t.feeMinor),
      decimal(t.netMinor),
      null,
    ]),
    ...s.feeInvoices.map((f) => ["fee_invoice", s.month, null, null, null, day(f.issuedAt), f.currency, null, null, decimal(f.totalMinor), null, f.number]),
  ];
}
