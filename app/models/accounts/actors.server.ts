// The signed-in person with the organisations they belong to, as every guard and workspace screen sees them.
import { asc, eq, sql } from "drizzle-orm";
import { db, schema } from "~/db/client.server";
import type { MembershipRole, Organisation, User } from "~/db/schema";

export interface OrgMembership {
  organisation: Organisation;
  role: MembershipRole;
}

export interface Actor {
  user: User;
  memberships: OrgMembership[];
  /** The organisation the person is working in now (they switch between them). */
  active: OrgMembership | null;
}

// Read on every signed-in page: a named prepared statement, built once and planned once per connection.
const membershipsOf = db
  .select({ organisation: schema.organisations, role: schema.memberships.role })
  .from(schema.memberships)
  .innerJoin(schema.organisations, eq(schema.organisations.id, schema.memberships.organisationId))
  .where(eq(schema.memberships.userId, sql.placeholder("userId")))
  .orderBy(asc(schema.memberships.createdAt))
  .prepare("memberships_of_user");

/** A person with their memberships; the active organisation is the given one, else their first. */
export async function actorFor(user: User, activeOrganisationId: string | null): Promise<Actor> {
  const rows = await membershipsOf.execute({ userId: user.id });
  const active = rows.find((m) => m.organisation.id === activeOrganisationId) ?? rows[0] ?? null;
  return { user, memberships: rows, active };
}
