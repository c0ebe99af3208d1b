// Price tiers in the demo (docs/design.md#price-tiers): Lakeside's university core facility charges academic and
// non-profit clients less, and an invented university group is a client whose academic kind the demo admin has
// confirmed, with an open request invited to Lakeside, so Lakeside's quote drafts from the academic prices. Every
// name, address and number here is invented. Idempotent: the tiers and the kind are set again, the rest made once.
import { and, eq, sql } from "drizzle-orm";
import { db, schema } from "~/db/client.server";
import type { PriceTier } from "~/db/schema";
import { hashPassword } from "~/models/accounts/password.server";
import { acknowledgeHazards } from "~/models/requests/requests.server";
import { DEMO_PASSWORD } from "./demo-secrets";

const TIER_LAB_SLUG = "lakeside-institute-x-ray-core";
const ACADEMIC_CLIENT = { name: "Kestrelmoor University Solid-State Group", slug: "kestrelmoor-university-solid-state-group" };
const ACADEMIC_OWNER = { email: "owner@kestrelmoor.example", name: "Elin Varga-Thornquist" };
export const TIER_REQUEST_TITLE = "Capillary pattern of zeolite film KSU-0412";

/** Lakeside's tiers (USD minor units): the base list is 210.00 per transmission sample and 110.00 per hour. */
const LAKESIDE_TIERS: Partial<Record<"academic" | "non_profit" | "industry", PriceTier>> = {
  academic: { perSampleMinor: { powder_transmission: 10_500 }, perInstrumentHourMinor: 5_500 },
  non_profit: { perSampleMinor: { powder_transmission: 16_000 } },
};

export async function seedDemoTiers() {
  const [lab] = await db.select({ id: schema.organisations.id }).from(schema.organisations).where(eq(schema.organisations.slug, TIER_LAB_SLUG));
  if (!lab) return { tiers: false };
  await db.update(schema.priceLists).set({ tiers: LAKESIDE_TIERS, updatedAt: new Date() }).where(eq(schema.priceLists.labId, lab.id));

  // The academic client, confirmed by the demo admin.
  const [admin] = await db.select({ id: schema.users.id }).from(schema.users).where(eq(schema.users.email, "admin@diffractory.example"));
  await db
    .insert(schema.organisations)
    .values({ kind: "client", name: ACADEMIC_CLIENT.name, slug: ACADEMIC_CLIENT.slug, city: "Kestrelmoor", country: "United States" })
    .onConflictDoNothing();
  const [client] = await db.select().from(schema.organisations).where(eq(schema.organisations.slug, ACADEMIC_CLIENT.slug));
  await db
    .update(schema.organisations)
    .set({
      legalName: "Board of Regents of Kestrelmoor University",
      billingAddress: {
        line1: "77 Heathfield Mall",
        line2: "Sponsored Research Accounts",
        postcode: "53999",
        city: "Kestrelmoor",
        region: "WI",
        country: "US",
      },
      // An employer identification number, as written there.
      taxId: "98-7654321",
      invoiceEmail: "research-accounts@kestrelmoor.example",
      clientKind: "academic",
      clientKindConfirmedAt: client.clientKindConfirmedAt ?? new Date(),
      clientKindConfirmedBy: client.clientKindConfirmedBy ?? admin?.id ?? null,
    })
    .where(eq(schema.organisations.id, client.id));
  await db
    .insert(schema.users)
    .values({ email: ACADEMIC_OWNER.email, name: ACADEMIC_OWNER.name, passwordHash: await hashPassword(DEMO_PASSWORD) })
    .onConflictDoNothing();
  const [owner] = await db.select().from(schema.users).where(sql`lower(${schema.users.email}) = ${ACADEMIC_OWNER.email}`);
  await db.insert(schema.memberships).values({ userId: owner.id, organisationId: client.id, role: "owner" }).onConflictDoNothing();

  // An open request invited to Lakeside, its hazards acknowledged by Lakeside's manager: the quote builder is ready.
  const [existing] = await db
    .select({ id: schema.requests.id })
    .from(schema.requests)
    .where(and(eq(schema.requests.organisationId, client.id), eq(schema.requests.title, TIER_REQUEST_TITLE)));
  if (existing) return { tiers: true, requestId: existing.id };
  const [request] = await db
    .insert(schema.requests)
    .values({
      organisationId: client.id,
      createdBy: owner.id,
      title: TIER_REQUEST_TITLE,
      technique: "powder_transmission",
      state: "open",
      draftStep: "review",
      rangeKind: "two_theta",
      rangeMin: 3,
      rangeMax: 50,
      preferredSource: "any",
      atmosphere: "air",
      quality: "standard",
      currency: "USD",
      visibility: "invited",
      openedAt: new Date(),
    })
    .returning();
  await db.insert(schema.samples).values({
    requestId: request.id,
    position: 0,
    label: "KSU-0412-a",
    formula: "SiO2",
    elements: ["O", "Si"],
    form: "capillary",
    massMg: 15,
    expectedPhase: "Silicalite-1 (MFI framework)",
  });
  await db.insert(schema.requestInvitations).values({ requestId: request.id, labId: lab.id }).onConflictDoNothing();
  const [manager] = await db.select({ id: schema.users.id }).from(schema.users).where(eq(schema.users.email, "lab@lakeside.example"));
  if (manager) await acknowledgeHazards(request.id, lab.id, manager.id);
  return { tiers: true, requestId: request.id };
}
