// GET /admin/invoices/export?from=YYYY-MM-DD&to=YYYY-MM-DD — every invoice, credit note and platform fee invoice
// issued in the period (both days included, UTC) as CSV through csv-stringify; admins only.
import { documentsIssuedBetween, parsePeriod, periodTable } from "~/models/statements/period-export.server";
import { csvText } from "~/utils/csv.server";
import { requireAdmin } from "~/utils/permissions.server";
import type { Route } from "./+types/invoices-export";

export async function loader({ request }: Route.LoaderArgs) {
  await requireAdmin(request);
  const period = parsePeriod(new URL(request.url).searchParams);
  if (!period.ok) return new Response(`${period.error}\n`, { status: 400, headers: { "Content-Type": "text/plain; charset=utf-8" } });
  const docs = await documentsIssuedBetween(period.from, period.to);
  return new Response(csvText(periodTable(docs)), {
    headers: {
      "Content-Type": "text/csv; charset=utf-8",
      "Content-Disposition": `attachment; filename="diffractory-invoices-${period.fromDay}-to-${period.toDay}.csv"`,
      "Cache-Control": "private, no-store",
    },
  });
}
