// The check every order screen makes: the signed-in person works for this order's client (or lab) organisation.
import { notFound, requireOrgRole } from "~/utils/permissions.server";
import { orderForOrganisation } from "~/models/orders/lifecycle.server";

/**
 * The order as seen from one side, with the actor. Other organisations' orders, and ids that are no order,
 * are the same 404; a person of the other kind of organisation gets requireOrgRole's 403.
 */
export async function requireOrderSide(request: Request, side: "client" | "lab", orderId: string) {
  const actor = await requireOrgRole(request, side);
  const found = await orderForOrganisation(orderId, actor.membership.organisation.id);
  if (found?.side !== side) notFound(side === "client" ? "No such order in your organisation." : "No such order for your lab.");
  return { actor, order: found.order };
}
