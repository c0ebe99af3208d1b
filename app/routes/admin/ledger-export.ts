// GET /admin/ledger/export — the filtered ledger as CSV (admins only).
import { parseLedgerFilter } from "~/domain/ledger-filter";
import { ledgerRows } from "~/models/payments/ledger.server";
import { requireAdmin } from "~/utils/permissions.server";
import type { Route } from "./+types/ledger-export";

/** RFC 4180 quoting; a leading = + - @ is prefixed so spreadsheets never run a cell as a formula. */
function cell(v: unknown) {
  let s = v === null || v === undefined ? "" : String(v);
  if (/^[=+\-@]/.test(s) && !/^-?\d+$/.test(s)) s = `'${s}`;
  return /[",\n\r]/.test(s) ? `"${s.replace(/"/g, '""')}"` : s;
}

export async function loader({ request }: Route.LoaderArgs) {
  await requireAdmin(request);
  const parsed = parseLedgerFilter(new URL(request.url).searchParams);
  if (!parsed.ok) return new Response(`${parsed.error}\n`, { status: 400, headers: { "Content-Type": "text/plain; charset=utf-8" } });
  const rows = await ledgerRows(parsed.filter, 100_000);
  const lines = [["transaction_id", "created_at", "kind", "order_id", "account", "amount_minor", "currency", "provider_object_id", "memo"].join(",")];
  for (const r of rows) lines.push([r.id, new Date(r.created_at).toISOString(), r.kind, r.order_id, r.account, r.amount_minor, r.currency, r.provider_object_id, r.memo].map(cell).join(","));
  return new Response(lines.join("\r\n") + "\r\n", {
    headers: { "Content-Type": "text/csv; charset=utf-8", "Content-Disposition": `attachment; filename="diffractory-ledger.csv"`, "Cache-Control": "private, no-store" },
  });
}
