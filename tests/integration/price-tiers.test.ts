// Price tiers by client kind on the real PostgreSQL (docs/design.md#price-tiers): the lab sets academic prices on its
// price-list screen (clear sentences for bad ones), a quote for a confirmed academic client drafts from them, an
// unconfirmed one from the base list, and the lab sees which; the client's match estimate and the public profile agree.
// The rule is the product's own; the amounts are invented.
import { and, eq } from "drizzle-orm";
import { beforeAll, describe, expect, it } from "vitest";
import { db, schema } from "~/db/client.server";
import { seedDemo } from "~/demo/seed.server";
import { matchLabsForRequest } from "~/models/labs/matching.server";
import { action as priceListAction, loader as priceListLoader } from "~/routes/lab/price-list";
import { action as labRequestAction, loader as labRequestLoader } from "~/routes/lab/request";
import { loader as labProfileLoader } from "~/routes/public/lab-profile";
import { callRoute, formRequest, getRequest, sessionCookies } from "./route-call";

const as = sessionCookies();
const LAKESIDE = "lab@lakeside.example";
let lakesideId: string;
let halvorsenId: string;
let requestId: string;

/** Lakeside's price list as its form sends it (USD; base 210.00 per transmission sample, 110.00 per hour). */
const baseFields = {
  currency: "USD",
  "perSample.powder_transmission": "210.00",
  perExtraTemperaturePoint: "50.00",
  perInstrumentHour: "110.00",
  samplePreparation: "20.00",
  hazardousHandling: "80.00",
  rushMultiplier: "1.50",
  turnaroundDays: "12",
};

const savePrices = async (fields: Record<string, string>) => callRoute(priceListAction, formRequest("/lab/price-list", fields, await as(LAKESIDE)));

async function setKind(clientKind: string | null, confirmed: boolean) {
  await db
    .update(schema.organisations)
    .set({ clientKind, clientKindConfirmedAt: confirmed ? new Date() : null })
    .where(eq(schema.organisations.id, halvorsenId));
}

async function draft() {
  const page = await callRoute(labRequestLoader, getRequest(`/lab/requests/${requestId}`, await as(LAKESIDE)), { id: requestId });
  expect(page.status).toBe(200);
  return page.body as {
    tier: { used: string | null; confirmed: boolean; statedKind: string | null; note: string };
    defaults: { items: { description: string; quantity: string; unitPrice: string }[] };
    match: { estimatedPriceMinor: number | null } | null;
  };
}

beforeAll(async () => {
  await seedDemo();
  const orgId = async (slug: string) => (await db.select().from(schema.organisations).where(eq(schema.organisations.slug, slug)))[0].id;
  lakesideId = await orgId("lakeside-institute-x-ray-core");
  halvorsenId = await orgId("halvorsen-cathode-works");
  const [owner] = await db.select().from(schema.users).where(eq(schema.users.email, "owner@halvorsen.example"));
  // One transmission sample, no hazard, one temperature: the draft is the per-sample line plus preparation.
  const [r] = await db
    .insert(schema.requests)
    .values({
      organisationId: halvorsenId,
      createdBy: owner.id,
      title: "Capillary check of a tier-priced sample",
      technique: "powder_transmission",
      state: "open",
      visibility: "invited",
      rangeMin: 5,
      rangeMax: 60,
      openedAt: new Date(),
    })
    .returning();
  requestId = r.id;
  await db.insert(schema.samples).values({ requestId, label: "T-1", formula: "NaCl", elements: ["Cl", "Na"], form: "capillary", massMg: 20 });
  await db.insert(schema.requestInvitations).values({ requestId, labId: lakesideId });
  const ack = await callRoute(labRequestAction, formRequest(`/lab/requests/${requestId}`, { intent: "acknowledge" }, await as(LAKESIDE)), { id: requestId });
  expect(ack.status).toBe(302);
}, 60_000);

describe("the price-list screen's tiers", () => {
  it("refuses a tier price for a technique the lab does not offer, naming the field, and saves nothing", async () => {
    const before = (await db.select().from(schema.priceLists).where(eq(schema.priceLists.labId, lakesideId)))[0];
    const answer = await savePrices({ ...baseFields, "tiers.academic.perSample.thin_film": "90.00" });
    expect(answer.status).toBe(400);
    const errors = (answer.body as { result: { error: Record<string, string[]> } }).result.error;
    expect(errors["tiers.academic.perSample.thin_film"]).toEqual([
      "Give a base price for thin film first; the academic prices only change techniques you offer.",
    ]);
    const bad = await savePrices({ ...baseFields, "tiers.non_profit.perInstrumentHour": "-3" });
    expect((bad.body as { result: { error: Record<string, string[]> } }).result.error["tiers.non_profit.perInstrumentHour"]).toEqual([
      "Prices cannot be negative.",
    ]);
    const after = (await db.select().from(schema.priceLists).where(eq(schema.priceLists.labId, lakesideId)))[0];
    expect(after.tiers).toEqual(before.tiers);
  });

  it("saves academic and non-profit prices; empty fields fall back to the base list", async () => {
    const answer = await savePrices({
      ...baseFields,
      "tiers.academic.perSample.powder_transmission": "105.00",
      "tiers.academic.perInstrumentHour": "55.00",
      "tiers.non_profit.perSample.powder_transmission": "160.00",
      "tiers.industry.perSample.powder_transmission": "",
    });
    expect(answer.status).toBe(302);
    const [row] = await db.select().from(schema.priceLists).where(eq(schema.priceLists.labId, lakesideId));
    expect(row.tiers).toEqual({
      academic: { perSampleMinor: { powder_transmission: 10_500 }, perInstrumentHourMinor: 5_500 },
      non_profit: { perSampleMinor: { powder_transmission: 16_000 } },
    });
    // The screen shows them again as typed, in major units.
    const page = await callRoute(priceListLoader, getRequest("/lab/price-list", await as(LAKESIDE)));
    const values = (page.body as { values: { tiers: Record<string, { perSample: Record<string, string>; perInstrumentHour: string }> } }).values;
    expect(values.tiers.academic).toEqual({ perSample: { powder_transmission: "105.00" }, perInstrumentHour: "55.00" });
    expect(values.tiers.industry).toEqual({ perSample: {}, perInstrumentHour: "" });
  });
});

describe("a quote drafts from the client's confirmed tier", () => {
  it("a confirmed academic client gets the academic price, and the lab sees that tier and the confirmation", async () => {
    await setKind("academic", true);
    const page = await draft();
    expect(page.defaults.items[0]).toMatchObject({ quantity: "1", unitPrice: "105.00" });
    // What the tier leaves out (preparation) is the base price.
    expect(page.defaults.items.find((i) => i.description.startsWith("Sample preparation"))?.unitPrice).toBe("20.00");
    expect(page.tier).toMatchObject({ used: "academic", confirmed: true, statedKind: "academic" });
    // The client's estimate for this lab is the same price: 105.00 + 20.00 preparation.
    expect(page.match?.estimatedPriceMinor).toBe(12_500);
    const matches = await matchLabsForRequest(requestId);
    expect(matches.find((m) => m.labId === lakesideId)?.estimatedPriceMinor).toBe(12_500);
  });

  it("an academic client not yet confirmed gets the base price, and the lab is told why", async () => {
    await setKind("academic", false);
    const page = await draft();
    expect(page.defaults.items[0]).toMatchObject({ quantity: "1", unitPrice: "210.00" });
    expect(page.tier).toMatchObject({ used: null, confirmed: false, statedKind: "academic" });
    expect(page.tier.note).toContain("not confirmed");
    expect(page.match?.estimatedPriceMinor).toBe(23_000);
  });

  it("a confirmed kind without prices of its own, and a client with no kind, get the base price", async () => {
    await setKind("industry", true);
    expect((await draft()).defaults.items[0].unitPrice).toBe("210.00");
    await setKind(null, false);
    const page = await draft();
    expect(page.defaults.items[0].unitPrice).toBe("210.00");
    expect(page.tier).toMatchObject({ used: null, statedKind: null });
  });

  it("a confirmed non-profit client gets the non-profit price", async () => {
    await setKind("non_profit", true);
    expect((await draft()).defaults.items[0].unitPrice).toBe("160.00");
  });
});

describe("the public lab profile", () => {
  it("shows the base prices and each tier's own prices", async () => {
    const page = await callRoute(labProfileLoader, getRequest("/labs/lakeside-institute-x-ray-core"), { slug: "lakeside-institute-x-ray-core" });
    expect(page.status).toBe(200);
    const lab = (page.body as { lab: { priceList: { perSampleMinor: Record<string, number> }; tiers: { kind: string; label: string; tier: unknown }[] } }).lab;
    // The public list is the base list, whoever looks.
    expect(lab.priceList.perSampleMinor.powder_transmission).toBe(21_000);
    expect(lab.tiers.map((t) => t.label)).toEqual(["Academic", "Non-profit"]);
    expect(lab.tiers[0].tier).toEqual({ perSampleMinor: { powder_transmission: 10_500 }, perInstrumentHourMinor: 5_500 });
    // The saved list is only this lab's.
    const others = await db
      .select()
      .from(schema.priceLists)
      .where(and(eq(schema.priceLists.labId, halvorsenId)));
    expect(others).toEqual([]);
  });
});
