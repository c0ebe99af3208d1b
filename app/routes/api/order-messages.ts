// GET/POST /api/orders/:id/messages — an order's thread between its client and its lab. Anyone else — other
// organisations and admins — gets the same 404 as for a missing order (docs/design.md#messages).
import { noThread, orderThreadOfActor, postToThread, threadJson } from "~/utils/messages.server";
import { requireUser } from "~/utils/permissions.server";
import type { Route } from "./+types/order-messages";

export async function loader({ request, params }: Route.LoaderArgs) {
  const actor = await requireUser(request);
  const found = await orderThreadOfActor(actor, params.id);
  return found ? threadJson(actor, found) : noThread("order");
}

export async function action({ request, params }: Route.ActionArgs) {
  if (request.method !== "POST") return Response.json({ error: "Only GET and POST are answered here." }, { status: 405 });
  const actor = await requireUser(request);
  const found = await orderThreadOfActor(actor, params.id);
  return found ? postToThread(request, actor, found) : noThread("order");
}
