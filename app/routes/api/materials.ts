// GET /api/materials — the active client organisation's materials (archived ones left out), each with its product
// code, name, main phase and approximate cell, further phases, acceptance window, lots on record and last lot.
import { materialsJson } from "~/models/materials/materials.server";
import { requireUser } from "~/utils/permissions.server";
import type { Route } from "./+types/materials";

export async function loader({ request }: Route.LoaderArgs) {
  const actor = await requireUser(request);
  const organisation = actor.active?.organisation;
  if (organisation?.kind !== "client") return Response.json({ error: "Materials belong to client organisations; switch to one." }, { status: 403 });
  return Response.json({ materials: await materialsJson(organisation.id) }, { headers: { "Cache-Control": "private, no-store" } });
}
