// Client and lab organisations as other screens name them: the counterpart on an order or request, a parcel's address.
import { eq } from "drizzle-orm";
import { db, schema } from "~/db/client.server";

/** The organisation's name, or null when there is no such organisation. */
export async function organisationNameOf(organisationId: string): Promise<string | null> {
  const [row] = await db.select({ name: schema.organisations.name }).from(schema.organisations).where(eq(schema.organisations.id, organisationId));
  return row?.name ?? null;
}

/** Where a parcel goes: the organisation's name, city and country; undefined when there is no such organisation. */
export async function organisationAddressOf(organisationId: string) {
  const [row] = await db
    .select({ name: schema.organisations.name, city: schema.organisations.city, country: schema.organisations.country })
    .from(schema.organisations)
    .where(eq(schema.organisations.id, organisationId));
  return row;
}
