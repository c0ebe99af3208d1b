// GET /api/orders/:id — the order's state, amount and timeline, for the client organisation and the lab on it. The
// amount comes as money text (`amount`) beside its integer minor units (`amountMinor`, for programs); the client's
// purchase-order number as `purchaseOrderNumber` (null when none was given).
import { formatMoney } from "~/domain/money";
import { orderTimeline } from "~/models/orders/queries.server";
import { requireOrderParty } from "~/utils/permissions.server";
import type { Route } from "./+types/order";

export async function loader({ request, params }: Route.LoaderArgs) {
  const { order } = await requireOrderParty(request, params.id);
  const timeline = await orderTimeline(order.id);
  return Response.json(
    {
      id: order.id,
      number: order.number,
      state: order.state,
      amount: formatMoney(order.amountMinor, order.currency),
      amountMinor: order.amountMinor,
      currency: order.currency,
      purchaseOrderNumber: order.purchaseOrderNumber ?? null,
      timeline,
    },
    { headers: { "Cache-Control": "private, no-store" } },
  );
}
