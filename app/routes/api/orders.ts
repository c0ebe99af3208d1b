// GET /api/orders?state= — the active organisation's orders (as client or as lab), newest change first; each with its
// number, purchase-order number (null when none), state, lab, request title and last change.
import { ORDER_STATES, type OrderState } from "~/domain/order-states";
import { ordersInStates } from "~/models/orders/queries.server";
import { requireUser } from "~/utils/permissions.server";
import type { Route } from "./+types/orders";

export async function loader({ request }: Route.LoaderArgs) {
  const actor = await requireUser(request);
  const organisation = actor.active?.organisation;
  if (!organisation) return Response.json({ error: "You belong to no organisation." }, { status: 403 });
  const asked = new URL(request.url).searchParams
    .getAll("state")
    .flatMap((s) => s.split(","))
    .map((s) => s.trim())
    .filter(Boolean);
  const unknown = asked.filter((s) => !ORDER_STATES.includes(s as OrderState));
  if (unknown.length) {
    return Response.json({ error: `Unknown state "${unknown[0]}"; use one of ${ORDER_STATES.join(", ")}.` }, { status: 400 });
  }
  const rows = await ordersInStates(organisation.kind === "lab" ? "lab" : "client", organisation.id, asked as OrderState[]);
  return Response.json({ orders: rows.map((r) => ({ ...r, updatedAt: r.updatedAt.toISOString() })) }, { headers: { "Cache-Control": "private, no-store" } });
}
