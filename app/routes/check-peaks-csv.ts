// GET /checks/:id/peaks.csv — the check's peaks table as CSV, for the order's client organisation and its lab
// (and an admin when the order is disputed, audit-logged).
import { peaksTable, type StoredCheckResult } from "~/domain/check-result";
import { requireCheckAccess } from "~/utils/permissions.server";
import { csvText } from "~/utils/csv.server";
import type { Route } from "./+types/check-peaks-csv";

export async function loader({ request, params, context }: Route.LoaderArgs) {
  const { check, file } = await requireCheckAccess(request, params.id, { what: "peaks table", clientAddress: context.clientAddress });
  if (check.status !== "done" || !check.result) {
    return new Response("The check has not finished, so there is no peaks table yet.\n", {
      status: 409,
      headers: { "Content-Type": "text/plain; charset=utf-8" },
    });
  }
  const base = file.name.replace(/\.[^.]+$/, "").replace(/[^A-Za-z0-9._-]+/g, "_") || "scan";
  return new Response(csvText(peaksTable(check.result as unknown as StoredCheckResult)), {
    headers: {
      "Content-Type": "text/csv; charset=utf-8",
      "Content-Disposition": `attachment; filename="${base}-v${file.version}-peaks.csv"`,
      "Cache-Control": "private, no-store",
    },
  });
}
