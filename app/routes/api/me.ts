// GET /api/me — the signed-in person, their organisations and roles (401 when signed out).
import { summariseActor } from "~/models/accounts/me.server";
import { requireUser } from "~/utils/permissions.server";
import type { Route } from "./+types/me";

export async function loader({ request }: Route.LoaderArgs) {
  const actor = await requireUser(request);
  return Response.json(summariseActor(actor), { headers: { "Cache-Control": "private, no-store" } });
}
