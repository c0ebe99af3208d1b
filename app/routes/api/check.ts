// GET /api/checks/:id — a lattice check's live status, for the order's client organisation and its lab
// (and an admin when the order is disputed, audit-logged).
import { checkStatusJson } from "~/domain/lattice-check";
import { requireCheckAccess } from "~/utils/permissions.server";
import type { Route } from "./+types/check";

export async function loader({ request, params, context }: Route.LoaderArgs) {
  // The status alone: the stored result stays in the database (this is asked every second while a check runs).
  const { check } = await requireCheckAccess(request, params.id, { what: "check status", clientAddress: context.clientAddress, statusOnly: true });
  return Response.json(checkStatusJson(check), { headers: { "Cache-Control": "private, no-store" } });
}
