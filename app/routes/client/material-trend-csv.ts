// GET /client/materials/:id/trend.csv — the material's record as CSV: one row per checked scan of a lot, with every
// cell parameter and its esd, the verdict, the window's answer and the control rules the lot breaks
// (docs/design.md#lots-and-trends). The client organisation's own materials only; any other is a 404.
import { CELL_KEYS } from "~/diffraction/phases";
import { rulesWords } from "~/domain/trends";
import { materialOfOrganisation, trendOf } from "~/models/materials/trends.server";
import { type CsvField, csvText } from "~/utils/csv.server";
import { orNotFound, requireOrgRole } from "~/utils/permissions.server";
import type { Route } from "./+types/material-trend-csv";

const HEADER = ["lot_no", "lot_code", "measured_at", ...CELL_KEYS.flatMap((k) => [k, `${k}_esd`]), "verdict", "within_window", "in_baseline", "rules_broken"];

export async function loader({ request, params }: Route.LoaderArgs) {
  const { membership } = await requireOrgRole(request, "client");
  const material = await orNotFound(materialOfOrganisation(params.id, membership.organisation.id));
  const trend = await trendOf(material);
  const rows: CsvField[][] = [HEADER];
  for (const lot of trend.lots) {
    const rules = rulesWords(lot.rulesBroken);
    for (const scan of lot.scans) {
      rows.push([
        lot.order,
        lot.lotCode,
        new Date(scan.measuredAt).toISOString(),
        ...CELL_KEYS.flatMap((k) => [scan.cell?.[k] ?? null, scan.esd?.[k] ?? null]),
        scan.verdict,
        scan.withinWindow === null ? null : scan.withinWindow ? "inside" : "outside",
        lot.inBaseline ? "yes" : "no",
        rules,
      ]);
    }
  }
  const name = material.productCode.replace(/[^A-Za-z0-9._-]+/g, "_") || "material";
  return new Response(csvText(rows), {
    headers: {
      "Content-Type": "text/csv; charset=utf-8",
      "Content-Disposition": `attachment; filename="${name}-lots.csv"`,
      "Cache-Control": "private, no-store",
    },
  });
}
