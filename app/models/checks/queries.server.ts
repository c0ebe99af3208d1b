// Who may see a lattice check: the client organisation of the order and its lab; everyone else gets a 404.
import { eq } from "drizzle-orm";
import { db, schema } from "~/db/client.server";
import { checkWithOrder } from "~/models/checks/scan-check.server";
import { orderForOrganisation } from "~/models/orders/lifecycle.server";
import { notFound, requireUser } from "~/utils/permissions.server";

/**
 * The check with its file, order and the viewer's side. The active organisation is tried first, then the
 * person's other organisations; a check of anyone else's order is the same 404 as a missing one.
 */
export async function requireCheckAccess(request: Request, checkId: string) {
  const actor = await requireUser(request);
  const found = await checkWithOrder(checkId);
  if (!found) notFound("There is no such check.");
  const ordered = [...actor.memberships].sort((a, b) => Number(b.organisation.id === actor.active?.organisation.id) - Number(a.organisation.id === actor.active?.organisation.id));
  for (const m of ordered) {
    const side = await orderForOrganisation(found.file.orderId, m.organisation.id);
    if (side) return { actor, ...found, order: side.order, side: side.side, organisation: m.organisation };
  }
  notFound("There is no such check.");
}

/** The sample the checked scan belongs to (label and declared phase), or null. */
export async function sampleOfFile(sampleId: string | null) {
  if (!sampleId) return null;
  const [sample] = await db.select().from(schema.samples).where(eq(schema.samples.id, sampleId));
  return sample ?? null;
}

/** The request's title, for headings. */
export async function requestTitle(requestId: string) {
  const [r] = await db.select({ title: schema.requests.title }).from(schema.requests).where(eq(schema.requests.id, requestId));
  return r?.title ?? "Order";
}
