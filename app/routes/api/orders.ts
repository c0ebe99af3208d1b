// GET /api/orders?state= — the active organisation's orders (as client or as lab), newest change first.
import { and, desc, eq, inArray } from "drizzle-orm";
import { alias } from "drizzle-orm/pg-core";
import { db, schema } from "~/db/client.server";
import { ORDER_STATES, type OrderState } from "~/domain/order-states";
import { requireUser } from "~/utils/permissions.server";
import type { Route } from "./+types/orders";

export async function loader({ request }: Route.LoaderArgs) {
  const actor = await requireUser(request);
  const organisation = actor.active?.organisation;
  if (!organisation) return Response.json({ error: "You belong to no organisation." }, { status: 403 });
  const asked = new URL(request.url).searchParams.getAll("state").flatMap((s) => s.split(",")).map((s) => s.trim()).filter(Boolean);
  const unknown = asked.filter((s) => !ORDER_STATES.includes(s as OrderState));
  if (unknown.length) {
    return Response.json({ error: `Unknown state "${unknown[0]}"; use one of ${ORDER_STATES.join(", ")}.` }, { status: 400 });
  }
  const side = organisation.kind === "lab" ? schema.orders.labId : schema.orders.clientOrganisationId;
  const labOrg = alias(schema.organisations, "lab_org");
  const rows = await db
    .select({
      id: schema.orders.id,
      state: schema.orders.state,
      labName: labOrg.name,
      requestTitle: schema.requests.title,
      updatedAt: schema.orders.updatedAt,
    })
    .from(schema.orders)
    .innerJoin(schema.requests, eq(schema.requests.id, schema.orders.requestId))
    .innerJoin(labOrg, eq(labOrg.id, schema.orders.labId))
    .where(and(eq(side, organisation.id), asked.length ? inArray(schema.orders.state, asked as OrderState[]) : undefined))
    .orderBy(desc(schema.orders.updatedAt));
  return Response.json(
    { orders: rows.map((r) => ({ ...r, updatedAt: r.updatedAt.toISOString() })) },
    { headers: { "Cache-Control": "private, no-store" } },
  );
}
