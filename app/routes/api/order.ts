// GET /api/orders/:id — the order's state, amount and timeline, for the client organisation and the lab on it.
import { orderForOrganisation, orderTimeline } from "~/models/orders/lifecycle.server";
import { notFound, requireUser } from "~/utils/permissions.server";
import type { Route } from "./+types/order";

export async function loader({ request, params }: Route.LoaderArgs) {
  const actor = await requireUser(request);
  for (const m of actor.memberships) {
    const found = await orderForOrganisation(params.id, m.organisation.id);
    if (!found) continue;
    const { order } = found;
    const timeline = await orderTimeline(order.id);
    return Response.json(
      { id: order.id, state: order.state, amountMinor: order.amountMinor, currency: order.currency, timeline },
      { headers: { "Cache-Control": "private, no-store" } },
    );
  }
  notFound("No such order for your organisations.");
}
