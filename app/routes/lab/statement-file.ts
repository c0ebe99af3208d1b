// GET /lab/statements/:month.pdf and /lab/statements/:month.csv — the lab's payout statement of one month (UTC) as a
// PDF or a CSV (csv-stringify, docs/decisions/010-csv-with-csv-stringify.md); members of the lab only.
import { isMonth } from "~/domain/fee-invoice";
import { statementPdf } from "~/models/statements/statement-pdf.server";
import { labStatement, statementTable } from "~/models/statements/statements.server";
import { csvText } from "~/utils/csv.server";
import { requireOrgRole } from "~/utils/permissions.server";
import type { Route } from "./+types/statement-file";

const refuse = (message: string, status = 404) => new Response(`${message}\n`, { status, headers: { "Content-Type": "text/plain; charset=utf-8" } });

export async function loader({ request, params }: Route.LoaderArgs) {
  const { membership } = await requireOrgRole(request, "lab");
  const m = /^(.+)\.(pdf|csv)$/.exec(params.file);
  if (!m) return refuse("There is no such statement: ask for a month's .pdf or .csv, as the statements page links them.");
  const [, month, format] = m;
  if (!isMonth(month)) return refuse("There is no such statement: the month is written as YYYY-MM.", 400);
  const statement = await labStatement(membership.organisation.id, month);
  const name = `diffractory-statement-${month}`;
  const headers = { "Cache-Control": "private, no-store" };
  if (format === "csv") {
    return new Response(csvText(statementTable(statement)), {
      headers: { ...headers, "Content-Type": "text/csv; charset=utf-8", "Content-Disposition": `attachment; filename="${name}.csv"` },
    });
  }
  return new Response(new Uint8Array(await statementPdf(statement)), {
    headers: { ...headers, "Content-Type": "application/pdf", "Content-Disposition": `inline; filename="${name}.pdf"` },
  });
}
