// Organisation and lab profiles on the real PostgreSQL: owners and managers save the invoicing details (a VAT number
// refused by its format saves nothing), add and change parcel addresses with one default per kind, an admin confirms
// a client's kind (changing it asks again), and the packing slip carries the lab's receiving address.
import { and, eq, sql } from "drizzle-orm";
import { beforeAll, describe, expect, it } from "vitest";
import { db, schema } from "~/db/client.server";
import { seedDemoProfiles } from "~/demo/seed-profiles.server";
import { seedDemo } from "~/demo/seed.server";
import { action as usersAction, loader as usersLoader } from "~/routes/admin/users";
import { action as clientProfileAction, loader as clientProfileLoader } from "~/routes/client/profile";
import { loader as clientOrderLoader } from "~/routes/client/order";
import { loader as packingSlipLoader } from "~/routes/client/packing-slip";
import { action as labProfileAction, loader as labProfileLoader } from "~/routes/lab/profile";
import { acceptedQuoteAndOrder } from "./order-fixtures";
import { callRoute, formRequest, getRequest, sessionCookies } from "./route-call";

const as = sessionCookies();
const org = async (slug: string) => (await db.select().from(schema.organisations).where(eq(schema.organisations.slug, slug)))[0];
const addressesOf = (organisationId: string) =>
  db.select().from(schema.organisationAddresses).where(eq(schema.organisationAddresses.organisationId, organisationId));
// The whole form, as the page posts it (an absent kind is "not stated").
const profile = (fields: Record<string, string>) => ({
  intent: "profile",
  line1: "Fjordkanten 14",
  postcode: "9120",
  city: "Tromsvik",
  country: "NO",
  clientKind: "industry",
  ...fields,
});
const reception = (fields: Record<string, string> = {}) => ({
  intent: "add-address",
  kind: "receiving",
  label: "Goods-in",
  line1: "410 Quarrystone Avenue",
  postcode: "X0E 1B7",
  city: "Granite Falls",
  country: "CA",
  contactName: "Marcus Tillery",
  contactPhone: "+1 867 555 0142",
  openingHours: "Mon–Fri 08:00–16:00",
  ...fields,
});

beforeAll(async () => {
  await seedDemo();
});

describe("the client's profile", () => {
  it("refuses a German VAT number of the wrong shape in one sentence on its field and saves nothing", async () => {
    const halvorsen = await org("halvorsen-cathode-works");
    const answer = await callRoute(
      clientProfileAction,
      formRequest("/client/profile", profile({ country: "DE", taxId: "DE12345", legalName: "Changed GmbH" }), await as("owner@halvorsen.example")),
    );
    expect(answer.status).toBe(400);
    const result = (answer.body as { result: { error: Record<string, string[]> } }).result;
    // The German format: DE followed by 9 digits (VIES number formats, from memory; app/domain/tax-id.ts).
    expect(result.error.taxId).toEqual(["A German VAT number is DE followed by 9 digits, e.g. DE123456789."]);
    expect(Object.keys(result.error)).toEqual(["taxId"]);
    expect((await org("halvorsen-cathode-works")).legalName).toBe(halvorsen.legalName);
  });

  it("saves a valid VAT number compact, the billing address, the invoice e-mail and the purchase-order rule, audit-logged", async () => {
    const answer = await callRoute(
      clientProfileAction,
      formRequest(
        "/client/profile",
        profile({
          legalName: "Halvorsen Cathode Works AS",
          line1: "Katzenbuckelweg 3",
          postcode: "99999",
          city: "Lindenhagen",
          country: "DE",
          taxId: "de 123 456 789",
          invoiceEmail: "Invoices@Halvorsen.example",
          clientKind: "industry",
          requiresPurchaseOrder: "on",
        }),
        await as("owner@halvorsen.example"),
      ),
    );
    expect(answer.status).toBe(302);
    const saved = await org("halvorsen-cathode-works");
    expect(saved).toMatchObject({
      legalName: "Halvorsen Cathode Works AS",
      taxId: "DE123456789",
      invoiceEmail: "invoices@halvorsen.example",
      clientKind: "industry",
      clientKindConfirmedAt: null,
      requiresPurchaseOrder: true,
      billingAddress: { line1: "Katzenbuckelweg 3", postcode: "99999", city: "Lindenhagen", country: "DE" },
    });
    const [logged] = await db
      .select()
      .from(schema.auditLog)
      .where(and(eq(schema.auditLog.organisationId, saved.id), eq(schema.auditLog.action, "profile_saved")));
    expect(logged.details).toMatchObject({ taxId: "DE123456789" });
  });

  it("keeps a non-EU tax id as written, trimmed", async () => {
    await callRoute(clientProfileAction, formRequest("/client/profile", profile({ taxId: "  NO 912 345 678 MVA " }), await as("owner@halvorsen.example")));
    expect((await org("halvorsen-cathode-works")).taxId).toBe("NO 912 345 678 MVA");
  });

  it("lets a member read it but not change it", async () => {
    const read = await callRoute(clientProfileLoader, getRequest("/client/profile", await as("member@halvorsen.example")));
    expect(read.status).toBe(200);
    expect(read.body).toMatchObject({ canEdit: false, taxId: "NO 912 345 678 MVA" });
    const write = await callRoute(clientProfileAction, formRequest("/client/profile", profile({ taxId: "" }), await as("member@halvorsen.example")));
    expect(write.status).toBe(403);
    expect((await org("halvorsen-cathode-works")).taxId).toBe("NO 912 345 678 MVA");
  });

  it("is confirmed by an admin, audit-logged; changing the kind clears the confirmation; a stale confirmation is refused", async () => {
    const halvorsen = await org("halvorsen-cathode-works");
    const admin = await as("admin@diffractory.example");
    const listed = await callRoute(usersLoader, getRequest("/admin/users", admin));
    expect((listed.body as { clientKinds: { name: string; confirmedAt: Date | null }[] }).clientKinds).toContainEqual(
      expect.objectContaining({ name: "Halvorsen Cathode Works", confirmedAt: null }),
    );
    const stale = await callRoute(usersAction, formRequest("/admin/users", { organisationId: halvorsen.id, clientKind: "academic" }, admin));
    expect(stale.status).toBe(409);
    const ok = await callRoute(usersAction, formRequest("/admin/users", { organisationId: halvorsen.id, clientKind: "industry" }, admin));
    expect(ok.status).toBe(302);
    expect((await org("halvorsen-cathode-works")).clientKindConfirmedAt).not.toBeNull();
    const [logged] = await db
      .select()
      .from(schema.auditLog)
      .where(and(eq(schema.auditLog.organisationId, halvorsen.id), eq(schema.auditLog.action, "client_kind_confirmed")));
    expect(logged.details).toEqual({ clientKind: "industry" });
    // Saving the same kind keeps the confirmation; another kind clears it.
    await callRoute(clientProfileAction, formRequest("/client/profile", profile({ clientKind: "industry" }), await as("owner@halvorsen.example")));
    expect((await org("halvorsen-cathode-works")).clientKindConfirmedAt).not.toBeNull();
    await callRoute(clientProfileAction, formRequest("/client/profile", profile({ clientKind: "academic" }), await as("owner@halvorsen.example")));
    expect((await org("halvorsen-cathode-works")).clientKindConfirmedAt).toBeNull();
  });
});

describe("the lab's parcel addresses", () => {
  it("refuses an address without street or city, one sentence per field, and adds nothing", async () => {
    const granite = await org("granite-ridge-characterisation");
    const before = (await addressesOf(granite.id)).length;
    const answer = await callRoute(
      labProfileAction,
      formRequest("/lab/profile", reception({ line1: "", city: "", contactPhone: "call Marcus" }), await as("lab@graniteridge.example")),
    );
    expect(answer.status).toBe(400);
    const error = (answer.body as { result: { error: Record<string, string[]> } }).result.error;
    expect(error).toEqual({
      line1: ["Enter the street and number."],
      city: ["Enter the city."],
      contactPhone: ["Write the phone number with digits, spaces and + ( ) - only, e.g. +47 555 01 234."],
    });
    expect(await addressesOf(granite.id)).toHaveLength(before);
  });

  it("makes the first receiving address the default, moves the default on request and after a removal", async () => {
    const granite = await org("granite-ridge-characterisation");
    const manager = await as("lab@graniteridge.example");
    await callRoute(labProfileAction, formRequest("/lab/profile", reception({ label: "Front desk" }), manager));
    await callRoute(labProfileAction, formRequest("/lab/profile", reception({ label: "Dock 2" }), manager));
    let rows = await addressesOf(granite.id);
    const front = rows.find((r) => r.label === "Front desk")!;
    const dock = rows.find((r) => r.label === "Dock 2")!;
    expect([front.isDefault, dock.isDefault]).toEqual([true, false]);
    await callRoute(labProfileAction, formRequest("/lab/profile", { intent: "default-address", addressId: dock.id }, manager));
    rows = await addressesOf(granite.id);
    expect(rows.filter((r) => r.isDefault).map((r) => r.label)).toEqual(["Dock 2"]);
    await callRoute(labProfileAction, formRequest("/lab/profile", { intent: "remove-address", addressId: dock.id }, manager));
    rows = await addressesOf(granite.id);
    expect(rows.filter((r) => r.isDefault).map((r) => r.label)).toEqual(["Front desk"]);
    // An edit keeps it the default and changes its hours.
    await callRoute(
      labProfileAction,
      formRequest(
        "/lab/profile",
        { ...reception({ label: "Front desk", openingHours: "Mon–Thu 09:00–12:00" }), intent: "edit-address", addressId: front.id },
        manager,
      ),
    );
    expect((await addressesOf(granite.id)).find((r) => r.id === front.id)).toMatchObject({ isDefault: true, openingHours: "Mon–Thu 09:00–12:00" });
  });

  it("answers another lab's address as not found, and an operator may not change addresses", async () => {
    const granite = await org("granite-ridge-characterisation");
    const [own] = await addressesOf(granite.id);
    const other = await callRoute(
      labProfileAction,
      formRequest("/lab/profile", { intent: "remove-address", addressId: own.id }, await as("lab@lakeside.example")),
    );
    expect(other.status).toBe(404);
    const operator = await callRoute(
      labProfileAction,
      formRequest("/lab/profile", { intent: "remove-address", addressId: own.id }, await as("operator@graniteridge.example")),
    );
    expect(operator.status).toBe(403);
    expect(await addressesOf(granite.id)).toContainEqual(expect.objectContaining({ id: own.id }));
    const read = await callRoute(labProfileLoader, getRequest("/lab/profile", await as("operator@graniteridge.example")));
    expect(read.body).toMatchObject({ canEdit: false });
  });
});

describe("the packing slip", () => {
  it("carries the lab's default receiving address with contact and hours, and says so plainly when the lab has none", async () => {
    const halvorsen = await org("halvorsen-cathode-works");
    const granite = await org("granite-ridge-characterisation");
    const lakeside = await org("lakeside-institute-x-ray-core");
    const owner = await db.select().from(schema.users).where(eq(schema.users.email, "owner@halvorsen.example"));
    const orderAt = async (labId: string) => {
      const [request] = await db
        .insert(schema.requests)
        .values({ organisationId: halvorsen.id, createdBy: owner[0].id, title: `Profile slip ${labId.slice(0, 4)}`, state: "awarded" })
        .returning();
      const [instrument] = await db.select().from(schema.instruments).where(eq(schema.instruments.labId, labId)).limit(1);
      return (
        await acceptedQuoteAndOrder({ requestId: request.id, clientOrganisationId: halvorsen.id, labId, instrumentId: instrument?.id, state: "funds_held" })
      ).order;
    };
    const atGranite = await orderAt(granite.id);
    await db.delete(schema.organisationAddresses).where(eq(schema.organisationAddresses.organisationId, lakeside.id));
    const atLakeside = await orderAt(lakeside.id);
    const cookie = await as("owner@halvorsen.example");
    const slip = await callRoute(packingSlipLoader, getRequest(`/client/orders/${atGranite.id}/packing-slip`, cookie), { id: atGranite.id });
    expect(slip.status).toBe(200);
    expect(slip.body).toMatchObject({
      receiving: {
        label: "Front desk",
        contactName: "Marcus Tillery",
        openingHours: "Mon–Thu 09:00–12:00",
        address: { city: "Granite Falls", country: "CA" },
      },
    });
    // The client's order page names the same address while the client still ships.
    const page = await callRoute(clientOrderLoader, getRequest(`/client/orders/${atGranite.id}`, cookie), { id: atGranite.id });
    expect(page.body).toMatchObject({ receiving: { label: "Front desk", lines: ["410 Quarrystone Avenue", "X0E 1B7 Granite Falls", "Canada"] } });
    const none = await callRoute(packingSlipLoader, getRequest(`/client/orders/${atLakeside.id}/packing-slip`, cookie), { id: atLakeside.id });
    expect((none.body as { receiving: unknown }).receiving).toBeUndefined();
  });
});

describe("the demo's profiles", () => {
  it("give every demo organisation a legal name, billing address, tax id, invoice e-mail and a parcel address, and run again without doubling", async () => {
    await seedDemoProfiles();
    const count = async () => Number((await db.execute(sql`select count(*)::int as n from organisation_addresses`)).rows[0].n);
    const first = await count();
    await seedDemoProfiles();
    expect(await count()).toBe(first);
    const orgs = await db.select().from(schema.organisations);
    for (const o of orgs.filter((x) =>
      ["halvorsen-cathode-works", "pinecrest-solid-forms", "granite-ridge-characterisation", "lakeside-institute-x-ray-core", "meridian-analytical"].includes(
        x.slug,
      ),
    )) {
      expect(o.legalName, o.slug).toBeTruthy();
      expect(o.billingAddress?.line1, o.slug).toBeTruthy();
      expect(o.taxId, o.slug).toBeTruthy();
      expect(o.invoiceEmail, o.slug).toMatch(/@/);
      expect((await addressesOf(o.id)).length, o.slug).toBeGreaterThan(0);
    }
    // Meridian's number fits the Portuguese VAT format (PT and 9 digits).
    expect(orgs.find((o) => o.slug === "meridian-analytical")?.taxId).toMatch(/^PT\d{9}$/);
  });
});
