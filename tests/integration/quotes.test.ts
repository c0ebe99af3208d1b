// Quotes on the real PostgreSQL: the hazard acknowledgement before quoting, totals added up by the server,
// labs isolated from each other's quotes, the concurrent-accept race, and lapsing after the validity date.
import { and, eq, inArray } from "drizzle-orm";
import { beforeAll, describe, expect, it } from "vitest";
import { db, schema } from "~/db/client.server";
import { seedDemo } from "~/demo/seed.server";
import { lapseExpiredQuotes } from "~/models/requests/quotes.server";
import { action as clientRequestAction, loader as clientRequestLoader } from "~/routes/client/request";
import { loader as inboxLoader } from "~/routes/lab/inbox";
import { loader as labQuotesLoader } from "~/routes/lab/quotes";
import { action as labRequestAction, loader as labRequestLoader } from "~/routes/lab/request";
import { action as signInAction } from "~/routes/public/sign-in";
import { callRoute, cookieFrom, formRequest, getRequest, type RouteAnswer } from "./route-call";

const cookies: Record<string, string> = {};
async function as(email: string) {
  cookies[email] ??= cookieFrom(await callRoute(signInAction, formRequest("/sign-in", { email, password: "diffractory-demo" })))!;
  return cookies[email];
}
const CLIENT = "owner@halvorsen.example";
const OTHER_CLIENT = "owner@pinecrest.example";
const GRANITE = "lab@graniteridge.example";
const LAKESIDE = "lab@lakeside.example";
const MERIDIAN = "lab@meridian.example";

const orgId = async (name: string) => (await db.select().from(schema.organisations).where(eq(schema.organisations.name, name)))[0].id;
const instrumentOf = async (labName: string) =>
  (
    await db
      .select()
      .from(schema.instruments)
      .where(eq(schema.instruments.labId, await orgId(labName)))
  )[0].id;
const inDays = (days: number) => new Date(Date.now() + days * 86_400_000).toISOString().slice(0, 10);

let requestId: string;
let graniteId: string;
let lakesideId: string;

/** Opens a request of Halvorsen's with one sample declaring GHS07 (accepted by both demo labs that quote). */
async function openRequest(title: string) {
  const [owner] = await db.select().from(schema.users).where(eq(schema.users.email, CLIENT));
  const [r] = await db
    .insert(schema.requests)
    .values({
      organisationId: await orgId("Halvorsen Cathode Works"),
      createdBy: owner.id,
      title,
      state: "open",
      rangeMin: 10,
      rangeMax: 90,
      deadline: inDays(60),
      openedAt: new Date(),
      temperaturePointsK: [298, 573, 873],
    })
    .returning();
  await db.insert(schema.samples).values({
    requestId: r.id,
    label: "NMC-3",
    formula: "LiNi0.8Mn0.1Co0.1O2",
    elements: ["Li", "Ni", "Mn", "Co", "O"],
    form: "powder",
    massMg: 300,
    crystalSystem: "trigonal",
    centering: "R",
    cellA: 2.87,
    cellB: 2.87,
    cellC: 14.2,
    cellAlpha: 90,
    cellBeta: 90,
    cellGamma: 120,
    ghsPictograms: ["GHS07"],
    hStatements: ["H317"],
    sdsFileName: "nmc-sds.pdf",
    sdsStorageKey: "requests/fixture/nmc-sds.pdf",
  });
  return r.id;
}

function quoteFields(instrumentId: string, extra: Record<string, string> = {}) {
  return {
    intent: "send",
    "items[0].description": "Powder reflection, per sample",
    "items[0].quantity": "2",
    "items[0].unitPrice": "180.00",
    "items[1].description": "Hazardous handling",
    "items[1].quantity": "1",
    "items[1].unitPrice": "15.50",
    validUntil: inDays(14),
    turnaroundDays: "8",
    instrumentId,
    notes: "Measured on the Co tube to avoid fluorescence.",
    ...extra,
  };
}

const sendQuote = async (who: string, fields: Record<string, string>, id = requestId) =>
  callRoute(labRequestAction, formRequest(`/lab/requests/${id}`, fields, await as(who)), { id });
const acknowledge = async (who: string, id = requestId) =>
  callRoute(labRequestAction, formRequest(`/lab/requests/${id}`, { intent: "acknowledge" }, await as(who)), { id });
const formErrors = (a: RouteAnswer) => ((a.body as { result: { error: Record<string, string[]> } }).result.error?.[""] ?? []).join(" ");
const quotesOf = (id: string) => db.select().from(schema.quotes).where(eq(schema.quotes.requestId, id));

beforeAll(async () => {
  await seedDemo();
  graniteId = await orgId("Granite Ridge Characterisation");
  lakesideId = await orgId("Lakeside Institute X-ray Core");
  // Both approved labs have finished payout onboarding (a lab without it cannot quote: tested below).
  await db
    .update(schema.labs)
    .set({ payoutAccountId: "acct_fixture", payoutsEnabled: true })
    .where(inArray(schema.labs.organisationId, [graniteId, lakesideId]));
  requestId = await openRequest("Layered oxide NMC-3 lattice check");
  // Lakeside's transmission instrument does not fit this reflection request, so only an invitation lets it read
  // and quote: the client invites both demo labs.
  await db.update(schema.requests).set({ visibility: "invited" }).where(eq(schema.requests.id, requestId));
  await db.insert(schema.requestInvitations).values([
    { requestId, labId: graniteId },
    { requestId, labId: lakesideId },
  ]);
});

describe("quoting", () => {
  it("drafts line items from the price list (per sample, extra temperature points, preparation, hazardous handling)", async () => {
    const answer = await callRoute(labRequestLoader, getRequest(`/lab/requests/${requestId}`, await as(GRANITE)), { id: requestId });
    expect(answer.status).toBe(200);
    const { defaults } = answer.body as { defaults: { items: { description: string; quantity: string; unitPrice: string }[] } };
    // Granite Ridge's demo prices: 180.00 per sample, 45.00 per extra point, 15.00 preparation, 60.00 hazardous handling.
    expect(defaults.items.map((i) => [i.quantity, i.unitPrice])).toEqual([
      ["1", "180.00"],
      ["2", "45.00"],
      ["1", "15.00"],
      ["1", "60.00"],
    ]);
  });

  it("refuses a quote before the hazard declaration is acknowledged", async () => {
    const answer = await sendQuote(GRANITE, quoteFields(await instrumentOf("Granite Ridge Characterisation")));
    expect(answer.status).toBe(400);
    expect(formErrors(answer)).toMatch(/Acknowledge the hazard declaration/);
    expect(await quotesOf(requestId)).toHaveLength(0);
  });

  it("records who acknowledged the declaration and when", async () => {
    const before = Date.now();
    expect((await acknowledge(GRANITE)).status).toBe(302);
    const [ack] = await db
      .select()
      .from(schema.hazardAcknowledgements)
      .where(and(eq(schema.hazardAcknowledgements.requestId, requestId), eq(schema.hazardAcknowledgements.labId, graniteId)));
    const [marcus] = await db.select().from(schema.users).where(eq(schema.users.email, GRANITE));
    expect(ack.userId).toBe(marcus.id);
    expect(ack.acknowledgedAt.getTime()).toBeGreaterThanOrEqual(before - 5_000);
    expect(ack.acknowledgedAt.getTime()).toBeLessThanOrEqual(Date.now() + 5_000);
  });

  it("only approved labs acknowledge and quote", async () => {
    // A lab that is not approved does not get to read the request at all: the same 404 as a missing one.
    const answer = await acknowledge(MERIDIAN);
    expect(answer.status).toBe(404);
    const acks = await db.select().from(schema.hazardAcknowledgements).where(eq(schema.hazardAcknowledgements.requestId, requestId));
    expect(acks.map((a) => a.labId)).not.toContain(await orgId("Meridian Analytical"));
  });

  it("refuses a quote from a lab whose payout account is not connected yet", async () => {
    await db.update(schema.labs).set({ payoutsEnabled: false }).where(eq(schema.labs.organisationId, graniteId));
    const answer = await sendQuote(GRANITE, quoteFields(await instrumentOf("Granite Ridge Characterisation")));
    await db.update(schema.labs).set({ payoutsEnabled: true }).where(eq(schema.labs.organisationId, graniteId));
    expect(answer.status).toBe(400);
    expect(JSON.stringify(answer.body)).toContain("Connect your lab's payout account");
    expect(await quotesOf(requestId)).toEqual([]);
  });

  it("adds the total up on the server and ignores a tampered total", async () => {
    const answer = await sendQuote(
      GRANITE,
      quoteFields(await instrumentOf("Granite Ridge Characterisation"), { total: "1", totalMinor: "100", "items[0].totalMinor": "1" }),
    );
    expect(answer.status).toBe(302);
    const [quote] = await quotesOf(requestId);
    expect(quote.totalMinor).toBe(2 * 18000 + 1550);
    expect(quote.lineItems).toEqual([
      { description: "Powder reflection, per sample", quantity: 2, unitMinor: 18000, totalMinor: 36000 },
      { description: "Hazardous handling", quantity: 1, unitMinor: 1550, totalMinor: 1550 },
    ]);
    expect(quote).toMatchObject({ state: "sent", currency: "EUR", turnaroundDays: 8, labId: graniteId });
    // One live quote per lab and request.
    const again = await sendQuote(GRANITE, quoteFields(await instrumentOf("Granite Ridge Characterisation")));
    expect(formErrors(again)).toMatch(/already has a quote/);
  });

  it("refuses bad line items with field errors", async () => {
    await acknowledge(LAKESIDE);
    const answer = await sendQuote(
      LAKESIDE,
      quoteFields(await instrumentOf("Lakeside Institute X-ray Core"), {
        "items[0].unitPrice": "12,3.4",
        "items[1].quantity": "0",
        instrumentId: await instrumentOf("Granite Ridge Characterisation"),
      }),
    );
    expect(answer.status).toBe(400);
    const errors = (answer.body as { result: { error: Record<string, string[]> } }).result.error;
    expect(Object.keys(errors)).toEqual(expect.arrayContaining(["items[0].unitPrice", "items[1].quantity"]));
    const wrongInstrument = await sendQuote(LAKESIDE, quoteFields(await instrumentOf("Granite Ridge Characterisation")));
    expect((wrongInstrument.body as { result: { error: Record<string, string[]> } }).result.error.instrumentId.join(" ")).toMatch(/your lab's instruments/);
  });

  it("never shows a lab another lab's quotes", async () => {
    expect((await sendQuote(LAKESIDE, quoteFields(await instrumentOf("Lakeside Institute X-ray Core"), { "items[0].unitPrice": "150.00" }))).status).toBe(302);
    const granite = (await quotesOf(requestId)).find((q) => q.labId === graniteId)!;
    const withdraw = await sendQuote(LAKESIDE, { intent: "withdraw", quoteId: granite.id });
    expect(withdraw.status).toBe(404);
    const list = await callRoute(labQuotesLoader, getRequest("/lab/quotes", await as(LAKESIDE)));
    const ids = (list.body as { quotes: { id: string; labId: string }[] }).quotes.map((q) => q.labId);
    expect(ids.length).toBeGreaterThan(0);
    expect(ids.every((id) => id === lakesideId)).toBe(true);
    const page = await callRoute(labRequestLoader, getRequest(`/lab/requests/${requestId}`, await as(LAKESIDE)), { id: requestId });
    expect((page.body as { quotes: { labId: string }[] }).quotes.every((q) => q.labId === lakesideId)).toBe(true);
    expect((await db.select().from(schema.quotes).where(eq(schema.quotes.id, granite.id)))[0].state).toBe("sent");
  });

  it("shows the client both quotes with the labs' fit reasons; another organisation gets 404", async () => {
    const answer = await callRoute(clientRequestLoader, getRequest(`/client/requests/${requestId}`, await as(CLIENT)), { id: requestId });
    const body = answer.body as {
      quotes: { labName: string; totalMinor: number; source: string | null }[];
      matches: { labName: string; reasons: unknown[] }[];
    };
    expect(body.quotes.map((q) => q.labName).sort()).toEqual(["Granite Ridge Characterisation", "Lakeside Institute X-ray Core"]);
    expect(body.quotes.find((q) => q.labName.startsWith("Granite"))!.source).toBe("Cu Kα");
    expect(body.matches.find((m) => m.labName.startsWith("Granite"))!.reasons.length).toBeGreaterThan(0);
    const other = await callRoute(clientRequestLoader, getRequest(`/client/requests/${requestId}`, await as(OTHER_CLIENT)), { id: requestId });
    expect(other.status).toBe(404);
    const [q] = await quotesOf(requestId);
    const otherAccept = await callRoute(
      clientRequestAction,
      formRequest(`/client/requests/${requestId}`, { intent: "accept", quoteId: q.id }, await as(OTHER_CLIENT)),
      { id: requestId },
    );
    expect(otherAccept.status).toBe(404);
  });

  it("lets exactly one of two concurrent accepts win: one order, one accepted quote, the rest declined", async () => {
    const cookie = await as(CLIENT);
    const quotes = await quotesOf(requestId);
    expect(quotes).toHaveLength(2);
    const answers = await Promise.all(
      quotes.map((q) =>
        callRoute(clientRequestAction, formRequest(`/client/requests/${requestId}`, { intent: "accept", quoteId: q.id }, cookie), { id: requestId }),
      ),
    );
    expect(answers.map((a) => a.status).sort()).toEqual([302, 400]);
    expect((answers.find((a) => a.status === 400)!.body as { error: string }).error).toMatch(/already been awarded/);
    const orders = await db.select().from(schema.orders).where(eq(schema.orders.requestId, requestId));
    expect(orders).toHaveLength(1);
    const after = await quotesOf(requestId);
    expect(after.filter((q) => q.state === "accepted")).toHaveLength(1);
    expect(after.filter((q) => q.state === "declined")).toHaveLength(1);
    const accepted = after.find((q) => q.state === "accepted")!;
    expect(orders[0]).toMatchObject({ quoteId: accepted.id, state: "awaiting_payment", amountMinor: accepted.totalMinor, labId: accepted.labId });
    const [request] = await db.select().from(schema.requests).where(eq(schema.requests.id, requestId));
    expect(request.state).toBe("awarded");
    const events = await db.select().from(schema.orderEvents).where(eq(schema.orderEvents.orderId, orders[0].id));
    expect(events).toHaveLength(1);
    expect(events[0]).toMatchObject({ fromState: null, toState: "awaiting_payment" });
    // The awarded request shows its order as awaiting payment.
    const page = await callRoute(clientRequestLoader, getRequest(`/client/requests/${requestId}`, cookie), { id: requestId });
    expect((page.body as { order: { state: string } }).order.state).toBe("awaiting_payment");
  });

  it("lapses a quote after its validity, so it is never shown as sent and cannot be accepted", async () => {
    const id = await openRequest("Lapsing quote check");
    const [quote] = await db
      .insert(schema.quotes)
      .values({
        requestId: id,
        labId: graniteId,
        lineItems: [{ description: "Per sample", quantity: 1, unitMinor: 18000, totalMinor: 18000 }],
        totalMinor: 18000,
        currency: "EUR",
        validUntil: new Date(Date.now() + 60_000),
        turnaroundDays: 8,
      })
      .returning();
    expect(await lapseExpiredQuotes(new Date())).toBe(0);
    expect(await lapseExpiredQuotes(new Date(Date.now() + 120_000))).toBe(1);
    expect((await db.select().from(schema.quotes).where(eq(schema.quotes.id, quote.id)))[0].state).toBe("lapsed");
    const accept = await callRoute(clientRequestAction, formRequest(`/client/requests/${id}`, { intent: "accept", quoteId: quote.id }, await as(CLIENT)), {
      id,
    });
    expect(accept.status).toBe(400);
    expect(await db.select().from(schema.orders).where(eq(schema.orders.requestId, id))).toHaveLength(0);

    // Reading quotes lapses the overdue ones first.
    const [stale] = await db
      .insert(schema.quotes)
      .values({
        requestId: id,
        labId: lakesideId,
        lineItems: [],
        totalMinor: 100,
        currency: "EUR",
        validUntil: new Date(Date.now() - 1_000),
        turnaroundDays: 5,
      })
      .returning();
    const page = await callRoute(clientRequestLoader, getRequest(`/client/requests/${id}`, await as(CLIENT)), { id });
    expect((page.body as { quotes: { id: string; state: string }[] }).quotes.find((q) => q.id === stale.id)!.state).toBe("lapsed");
  });

  it("lists the open request in the inbox of a lab that fits it", async () => {
    const answer = await callRoute(inboxLoader, getRequest("/lab/inbox", await as(GRANITE)));
    const titles = (answer.body as { items: { title: string }[] }).items.map((i) => i.title);
    expect(titles).toContain("Lapsing quote check");
    expect(titles).not.toContain("Layered oxide NMC-3 lattice check"); // awarded, no longer open
    const meridian = await callRoute(inboxLoader, getRequest("/lab/inbox", await as(MERIDIAN)));
    expect((meridian.body as { items: unknown[] }).items).toEqual([]);
  });
});

describe("quote cards judged by the instrument each quote names", () => {
  type Judged = { reasons: { ok: boolean; text: string }[]; warnings: string[] };
  const instrumentNamed = async (name: string) => (await db.select().from(schema.instruments).where(eq(schema.instruments.name, name)))[0].id;

  /** An iron phosphate (the fluorescence case under Cu Kα: Fe K edge 7.112 keV, docs/reference-values.md#k-absorption-edges), Granite Ridge invited. */
  async function ironRequest(title: string, rangeMax: number, temperaturePointsK: number[]) {
    const [owner] = await db.select().from(schema.users).where(eq(schema.users.email, CLIENT));
    const [r] = await db
      .insert(schema.requests)
      .values({
        organisationId: await orgId("Halvorsen Cathode Works"),
        createdBy: owner.id,
        title,
        state: "open",
        visibility: "invited",
        rangeMin: 10,
        rangeMax,
        temperaturePointsK,
        deadline: inDays(60),
        openedAt: new Date(),
      })
      .returning();
    await db
      .insert(schema.samples)
      .values({ requestId: r.id, label: "LFP-7", formula: "LiFePO4", elements: ["Li", "Fe", "P", "O"], form: "powder", massMg: 400 });
    await db.insert(schema.requestInvitations).values({ requestId: r.id, labId: graniteId });
    expect((await acknowledge(GRANITE, r.id)).status).toBe(302);
    return r.id;
  }

  const cardsOf = async (id: string) => {
    const answer = await callRoute(clientRequestLoader, getRequest(`/client/requests/${id}`, await as(CLIENT)), { id });
    expect(answer.status).toBe(200);
    return answer.body as {
      quotes: { id: string; instrumentName: string | null; state: string }[];
      judgements: Record<string, Judged>;
      matches: { labId: string; fits: boolean; warnings: string[] }[];
    };
  };

  it("shows the Cu quote's fluorescence warning on the Cu quote only, not on the Co quote", async () => {
    const id = await ironRequest("LFP-7 phase check", 90, []);
    const cuTube = await instrumentNamed("Reflection diffractometer A (Cu)");
    const coTube = await instrumentNamed("Reflection diffractometer B (Co)");

    expect((await sendQuote(GRANITE, quoteFields(coTube), id)).status).toBe(302);
    let page = await cardsOf(id);
    const onCo = page.quotes.find((q) => q.state === "sent")!;
    expect(onCo.instrumentName).toBe("Reflection diffractometer B (Co)");
    expect(page.judgements[onCo.id].warnings).toEqual([]);
    expect(page.judgements[onCo.id].reasons.every((r) => r.ok)).toBe(true);
    // The lab as a whole (its directory and inbox view) still carries its Cu instrument's warning.
    expect(page.matches.find((m) => m.labId === graniteId)!.warnings.some((w) => w.startsWith("Reflection diffractometer A (Cu): Fluorescence"))).toBe(true);

    // Granite withdraws and quotes again on its copper tube: that card carries the warning and names the Co tube.
    expect((await sendQuote(GRANITE, { intent: "withdraw", quoteId: onCo.id }, id)).status).toBe(302);
    expect((await sendQuote(GRANITE, quoteFields(cuTube), id)).status).toBe(302);
    page = await cardsOf(id);
    const onCu = page.quotes.find((q) => q.state === "sent")!;
    expect(onCu.instrumentName).toBe("Reflection diffractometer A (Cu)");
    const warnings = page.judgements[onCu.id].warnings;
    expect(warnings[0]).toMatch(/^Fluorescence: Fe has its K edge just below the Cu Kα energy/);
    expect(warnings[1]).toMatch(/^Better: Granite Ridge Characterisation's Reflection diffractometer B \(Co\)/);
  });

  it("says a quoted instrument does not cover the range or reach the temperatures although the lab's other one does", async () => {
    // Asked 10–140° 2θ, read for Cu Kα1 (1.540593 Å): d from 1.540593 / (2 sin 70°) = 0.820 Å to 1.540593 / (2 sin 5°) = 8.84 Å.
    // The Co tube (Co Kα1 1.788996 Å, 5–150°) reaches down to 1.788996 / (2 sin 75°) = 0.926 Å only, and has no stage for 873 K.
    const id = await ironRequest("LFP-7 high-angle and hot", 140, [298, 873]);
    expect((await sendQuote(GRANITE, quoteFields(await instrumentNamed("Reflection diffractometer B (Co)")), id)).status).toBe(302);
    const page = await cardsOf(id);
    const quote = page.quotes.find((q) => q.state === "sent")!;
    const failed = page.judgements[quote.id].reasons.filter((r) => !r.ok).map((r) => r.text);
    expect(failed).toEqual(["Does not cover d 0.820–8.84 Å (instrument reaches 0.926–20.51 Å)", "No stage reaches 298, 873 K in air (no sample stages)"]);
    // Granite's Cu tube with its hot stage covers both, so the lab itself fits.
    expect(page.matches.find((m) => m.labId === graniteId)!.fits).toBe(true);
  });
});
