// GET /api/orders/:id — the order's state, amount and timeline, for the client organisation and the lab on it.
import { orderTimeline } from "~/models/orders/queries.server";
import { requireOrderParty } from "~/utils/permissions.server";
import type { Route } from "./+types/order";

export async function loader({ request, params }: Route.LoaderArgs) {
  const { order } = await requireOrderParty(request, params.id);
  const timeline = await orderTimeline(order.id);
  return Response.json(
    { id: order.id, number: order.number, state: order.state, amountMinor: order.amountMinor, currency: order.currency, timeline },
    { headers: { "Cache-Control": "private, no-store" } },
  );
}
