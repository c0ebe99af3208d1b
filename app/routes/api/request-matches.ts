// GET /api/requests/:id/matches — for the requesting organisation: every approved lab, whether it fits and why.
import { isUuid } from "~/domain/ids";
import { matchLabsForRequest, loadMatchRequest } from "~/models/labs/matching.server";
import { notFound, requireOrgRole } from "~/utils/permissions.server";
import type { Route } from "./+types/request-matches";

export async function loader({ request, params }: Route.LoaderArgs) {
  const { membership } = await requireOrgRole(request, "client");
  const id = params.id;
  // Another organisation's request looks exactly like a missing one.
  const found = isUuid(id) ? await loadMatchRequest(id) : null;
  if (!found || found.organisationId !== membership.organisation.id) notFound("No such request in your organisation.");
  const matches = await matchLabsForRequest(id);
  return Response.json({ requestId: id, matches }, { headers: { "Cache-Control": "private, no-store" } });
}
