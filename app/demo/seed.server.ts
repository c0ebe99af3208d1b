// Seeds the invented demo scenario of DESIGN.md; running it again changes nothing that is already there.
import { and, eq, sql } from "drizzle-orm";
import { db, schema } from "~/db/client.server";
import type { MembershipRole, OrganisationKind } from "~/db/schema";
import { slugify } from "~/utils/auth.server";
import { hashPassword } from "~/utils/password.server";

export const DEMO_PASSWORD = "diffractory-demo";

interface DemoOrg {
  name: string;
  kind: OrganisationKind;
  city: string;
  country: string;
}

const ORGS: DemoOrg[] = [
  { name: "Halvorsen Cathode Works", kind: "client", city: "Tromsvik", country: "Norway" },
  { name: "Pinecrest Solid Forms", kind: "client", city: "Ashbourne Vale", country: "United Kingdom" },
  { name: "Granite Ridge Characterisation", kind: "lab", city: "Granite Falls", country: "Canada" },
  { name: "Lakeside Institute X-ray Core", kind: "lab", city: "Lakeside", country: "United States" },
  { name: "Meridian Analytical", kind: "lab", city: "Porto Meridiano", country: "Portugal" },
];

interface DemoPerson {
  email: string;
  name: string;
  isAdmin?: boolean;
  memberships: [string, MembershipRole][];
}

export const DEMO_PEOPLE: DemoPerson[] = [
  { email: "owner@halvorsen.example", name: "Ingrid Halvorsen-Lund", memberships: [["Halvorsen Cathode Works", "owner"]] },
  { email: "member@halvorsen.example", name: "Tobias Rekdal", memberships: [["Halvorsen Cathode Works", "member"]] },
  { email: "owner@pinecrest.example", name: "Amara Whitcombe", memberships: [["Pinecrest Solid Forms", "owner"]] },
  { email: "member@pinecrest.example", name: "Jonah Peverell", memberships: [["Pinecrest Solid Forms", "member"]] },
  {
    email: "consultant@fieldnotes.example",
    name: "Rosalind Okafor-Brandt",
    memberships: [
      ["Halvorsen Cathode Works", "member"],
      ["Pinecrest Solid Forms", "member"],
    ],
  },
  { email: "lab@graniteridge.example", name: "Marcus Tillery", memberships: [["Granite Ridge Characterisation", "manager"]] },
  { email: "operator@graniteridge.example", name: "Priya Castellanos", memberships: [["Granite Ridge Characterisation", "operator"]] },
  { email: "lab@lakeside.example", name: "Dana Whitford", memberships: [["Lakeside Institute X-ray Core", "manager"]] },
  { email: "lab@meridian.example", name: "Tiago Amaral Sousa", memberships: [["Meridian Analytical", "manager"]] },
  { email: "admin@diffractory.example", name: "Platform Admin", isAdmin: true, memberships: [] },
];

export async function seedDemo() {
  const passwordHash = await hashPassword(DEMO_PASSWORD);
  const orgIds = new Map<string, string>();
  for (const org of ORGS) {
    const slug = slugify(org.name);
    await db
      .insert(schema.organisations)
      .values({ ...org, slug })
      .onConflictDoNothing();
    const [row] = await db.select().from(schema.organisations).where(eq(schema.organisations.slug, slug));
    orgIds.set(org.name, row.id);
  }
  for (const person of DEMO_PEOPLE) {
    await db
      .insert(schema.users)
      .values({ email: person.email, name: person.name, passwordHash, isAdmin: person.isAdmin ?? false })
      .onConflictDoNothing();
    const [user] = await db
      .select()
      .from(schema.users)
      .where(sql`lower(${schema.users.email}) = ${person.email}`);
    for (const [orgName, role] of person.memberships) {
      const organisationId = orgIds.get(orgName)!;
      const existing = await db
        .select()
        .from(schema.memberships)
        .where(and(eq(schema.memberships.userId, user.id), eq(schema.memberships.organisationId, organisationId)));
      if (existing.length === 0) await db.insert(schema.memberships).values({ userId: user.id, organisationId, role });
    }
  }
  return { organisations: ORGS.length, people: DEMO_PEOPLE.length };
}
