// GET /admin/ledger/export — the filtered ledger as CSV (admins only); each row names its order by number and then the
// order's purchase-order number (columns added at the end so the earlier ones keep their places; the id stays for
// matching with the provider).
import { parseLedgerFilter } from "~/domain/ledger-filter";
import { ledgerRows } from "~/models/payments/ledger.server";
import { csvText, type CsvField } from "~/utils/csv.server";
import { requireAdmin } from "~/utils/permissions.server";
import type { Route } from "./+types/ledger-export";

/**
 * A leading = + - @ gets a ' so spreadsheets never run a cell as a formula; whole numbers such as
 * negative amounts stay numbers. csv-stringify's escape_formulas draws the line elsewhere (it marks a
 * memo of "-5" and leading tabs), so the export keeps its own rule and its files stay as they were.
 */
function formulaSafe(v: CsvField): string {
  const s = v === null || v === undefined ? "" : String(v);
  return /^[=+\-@]/.test(s) && !/^-?\d+$/.test(s) ? `'${s}` : s;
}

export async function loader({ request }: Route.LoaderArgs) {
  await requireAdmin(request);
  const parsed = parseLedgerFilter(new URL(request.url).searchParams);
  if (!parsed.ok) return new Response(`${parsed.error}\n`, { status: 400, headers: { "Content-Type": "text/plain; charset=utf-8" } });
  const rows = await ledgerRows(parsed.filter, 100_000);
  const table = [
    [
      "transaction_id",
      "created_at",
      "kind",
      "order_id",
      "account",
      "amount_minor",
      "currency",
      "provider_object_id",
      "memo",
      "order_number",
      "purchase_order_number",
    ],
  ];
  for (const r of rows)
    table.push(
      [
        r.id,
        new Date(r.created_at).toISOString(),
        r.kind,
        r.order_id,
        r.account,
        r.amount_minor,
        r.currency,
        r.provider_object_id,
        r.memo,
        r.order_number,
        r.purchase_order_number,
      ].map(formulaSafe),
    );
  return new Response(csvText(table), {
    headers: {
      "Content-Type": "text/csv; charset=utf-8",
      "Content-Disposition": `attachment; filename="diffractory-ledger.csv"`,
      "Cache-Control": "private, no-store",
    },
  });
}
