// Everyone with an account, as the platform's admins list them: a page of people and the organisations they belong to.
import { asc, count, desc, eq, inArray } from "drizzle-orm";
import { db, schema } from "~/db/client.server";

export type PeopleSort = "name" | "email" | "joined";

/** How many people have an account. */
export async function peopleCount() {
  const [{ total }] = await db.select({ total: count() }).from(schema.users);
  return total;
}

/** One page of people, sorted by the given column and then by e-mail (unique, so pages never overlap). */
export async function peoplePage(page: { sort: PeopleSort; dir: "asc" | "desc"; limit: number; offset: number }) {
  const by = page.dir === "asc" ? asc : desc;
  const column = { name: schema.users.name, email: schema.users.email, joined: schema.users.createdAt }[page.sort];
  return db
    .select({ id: schema.users.id, name: schema.users.name, email: schema.users.email, isAdmin: schema.users.isAdmin, joined: schema.users.createdAt })
    .from(schema.users)
    .orderBy(by(column), asc(schema.users.email))
    .limit(page.limit)
    .offset(page.offset);
}

/** The memberships of the given people, with each organisation's name and kind, by organisation name. */
export async function membershipsOfPeople(userIds: string[]) {
  if (userIds.length === 0) return [];
  return db
    .select({ userId: schema.memberships.userId, organisation: schema.organisations.name, kind: schema.organisations.kind, role: schema.memberships.role })
    .from(schema.memberships)
    .innerJoin(schema.organisations, eq(schema.organisations.id, schema.memberships.organisationId))
    .where(inArray(schema.memberships.userId, userIds))
    .orderBy(asc(schema.organisations.name));
}
