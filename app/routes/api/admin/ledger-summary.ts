// GET /api/admin/ledger/summary — ledger totals and whether every transaction balances (admins only).
import { ledgerSummary } from "~/models/payments/ledger.server";
import { requireAdmin } from "~/utils/permissions.server";
import type { Route } from "./+types/ledger-summary";

export async function loader({ request }: Route.LoaderArgs) {
  await requireAdmin(request);
  return Response.json(await ledgerSummary(), { headers: { "Cache-Control": "private, no-store" } });
}
