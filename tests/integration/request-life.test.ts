// A published request's life on the real PostgreSQL: an edit makes a new revision, tells the lab that quoted
// and holds its quote back until the lab re-confirms; withdrawal; "Order again"; expiry by the job's function;
// and the clear stop before publishing a request no lab can measure.
import { and, eq, inArray } from "drizzle-orm";
import { beforeAll, describe, expect, it } from "vitest";
import { db, schema } from "~/db/client.server";
import { seedDemo } from "~/demo/seed.server";
import { requestLifeIds, seedRequestLife } from "~/demo/seed-request-life.server";
import { AWAITING_RECONFIRMATION } from "~/domain/request-revisions";
import { expireOverdueRequests, saveStep } from "~/models/requests/request-life.server";
import { publishRequest } from "~/models/requests/requests.server";
import { action as clientRequestAction, loader as clientRequestLoader } from "~/routes/client/request";
import { action as measurementAction } from "~/routes/client/request-measurement";
import { loader as reviewLoader } from "~/routes/client/request-review";
import { action as labRequestAction, loader as labRequestLoader } from "~/routes/lab/request";
import { callRoute, formRequest, getRequest, sessionCookies } from "./route-call";

const as = sessionCookies();
const CLIENT = "owner@halvorsen.example";
const GRANITE = "lab@graniteridge.example";

const orgId = async (name: string) => (await db.select().from(schema.organisations).where(eq(schema.organisations.name, name)))[0].id;
const inDays = (days: number) => new Date(Date.now() + days * 86_400_000).toISOString().slice(0, 10);
const requestRow = async (id: string) => (await db.select().from(schema.requests).where(eq(schema.requests.id, id)))[0];
const quotesOf = (id: string) => db.select().from(schema.quotes).where(eq(schema.quotes.requestId, id));

let clientOrg: string;
let graniteId: string;
let ownerId: string;
let graniteInstrument: string;

/** An open request of Halvorsen's (10–80° 2θ, room temperature, no hazards) with one sample and one further phase. */
async function openRequest(title: string, state: "open" | "draft" = "open") {
  const [r] = await db
    .insert(schema.requests)
    .values({
      organisationId: clientOrg,
      createdBy: ownerId,
      title,
      state,
      draftStep: "review",
      rangeMin: 10,
      rangeMax: 80,
      deadline: inDays(30),
      openedAt: state === "open" ? new Date() : null,
      budgetMinor: 60_000,
      currency: "EUR",
    })
    .returning();
  // Invented sample; the cells are inputs (anatase and rutile TiO2, approximate values from memory).
  const [s] = await db
    .insert(schema.samples)
    .values({
      requestId: r.id,
      label: "HC-2611-A",
      formula: "TiO2",
      elements: ["Ti", "O"],
      form: "powder",
      massMg: 250,
      expectedPhase: "anatase TiO2",
      crystalSystem: "tetragonal",
      centering: "I",
      cellA: 3.785,
      cellB: 3.785,
      cellC: 9.514,
      cellAlpha: 90,
      cellBeta: 90,
      cellGamma: 90,
      acceptanceWindow: { a: { plusMinus: 0.5, unit: "percent" } },
    })
    .returning();
  await db.insert(schema.samplePhases).values({
    sampleId: s.id,
    role: "expected",
    position: 0,
    name: "rutile",
    crystalSystem: "tetragonal",
    centering: "P",
    cellA: 4.594,
    cellB: 4.594,
    cellC: 2.959,
    cellAlpha: 90,
    cellBeta: 90,
    cellGamma: 90,
  });
  return r.id;
}

async function graniteQuotes(requestId: string) {
  const cookie = await as(GRANITE);
  await callRoute(labRequestAction, formRequest(`/lab/requests/${requestId}`, { intent: "acknowledge" }, cookie), { id: requestId });
  const sent = await callRoute(
    labRequestAction,
    formRequest(
      `/lab/requests/${requestId}`,
      {
        intent: "send",
        "items[0].description": "Powder reflection, per sample",
        "items[0].quantity": "1",
        "items[0].unitPrice": "180.00",
        validUntil: inDays(14),
        turnaroundDays: "8",
        instrumentId: graniteInstrument,
      },
      cookie,
    ),
    { id: requestId },
  );
  expect(sent.status).toBe(302);
  const [quote] = await quotesOf(requestId);
  return quote;
}

const noticesOf = async (kind: string, organisationId: string) =>
  db
    .select()
    .from(schema.notifications)
    .where(and(eq(schema.notifications.kind, kind), eq(schema.notifications.organisationId, organisationId)));

beforeAll(async () => {
  await seedDemo();
  clientOrg = await orgId("Halvorsen Cathode Works");
  graniteId = await orgId("Granite Ridge Characterisation");
  [{ id: ownerId }] = await db.select({ id: schema.users.id }).from(schema.users).where(eq(schema.users.email, CLIENT));
  await db
    .update(schema.labs)
    .set({ payoutAccountId: "acct_fixture", payoutsEnabled: true })
    .where(inArray(schema.labs.organisationId, [graniteId]));
  [{ id: graniteInstrument }] = await db
    .select({ id: schema.instruments.id })
    .from(schema.instruments)
    .where(and(eq(schema.instruments.labId, graniteId), eq(schema.instruments.anode, "Cu")));
});

describe("edit after quoting", () => {
  let requestId: string;
  let quoteId: string;
  it("saving changed needs bumps the revision, stores the change in words and tells the lab that quoted", async () => {
    requestId = await openRequest("Anatase HC-2611 edited after quoting");
    const quote = await graniteQuotes(requestId);
    quoteId = quote.id;
    expect(quote.requestRevision).toBe(1);
    const before = (await requestRow(requestId)).deadline!;
    const later = inDays(37);
    const saved = await callRoute(
      measurementAction,
      formRequest(
        `/client/requests/${requestId}/edit/measurement`,
        {
          rangeKind: "two_theta",
          rangeMin: "5",
          rangeMax: "90",
          preferredSource: "any",
          temperaturePoints: "",
          atmosphere: "air",
          quality: "standard",
          deadline: later,
          budget: "600",
          currency: "EUR",
        },
        await as(CLIENT),
      ),
      { id: requestId },
    );
    // An open request's step goes back to the request page.
    expect(saved.status).toBe(302);
    expect(saved.headers.get("location")).toBe(`/client/requests/${requestId}`);
    const row = await requestRow(requestId);
    expect(row.revision).toBe(2);
    expect(row.state).toBe("open");
    const [rev] = await db.select().from(schema.requestRevisions).where(eq(schema.requestRevisions.requestId, requestId));
    expect(rev.revision).toBe(2);
    expect(rev.summary).toContain("range 10–80° 2θ → 5–90° 2θ");
    expect(rev.summary).toMatch(/^Deadline \d+ \w+ \d{4} → \d+ \w+ \d{4}/);
    expect(rev.summary).not.toContain(before);
    expect(rev.summary).not.toContain("budget");
    const notices = await noticesOf("request_revised", graniteId);
    expect(notices.length).toBeGreaterThan(0);
    const [mail] = await db.select().from(schema.outboxMessages).where(eq(schema.outboxMessages.kind, "request_revised"));
    expect(mail.text).toContain("range 10–80° 2θ → 5–90° 2θ");
  });

  it("saving the same values again makes no revision", async () => {
    const row = await requestRow(requestId);
    const again = await callRoute(
      measurementAction,
      formRequest(
        `/client/requests/${requestId}/edit/measurement`,
        {
          rangeKind: "two_theta",
          rangeMin: "5",
          rangeMax: "90",
          preferredSource: "any",
          atmosphere: "air",
          quality: "standard",
          deadline: row.deadline!,
          budget: "600",
          currency: "EUR",
        },
        await as(CLIENT),
      ),
      { id: requestId },
    );
    expect(again.status).toBe(302);
    expect((await requestRow(requestId)).revision).toBe(2);
  });

  it("the quote for the older revision cannot be accepted, and the client's card says so", async () => {
    const page = await callRoute(clientRequestLoader, getRequest(`/client/requests/${requestId}`, await as(CLIENT)), { id: requestId });
    const body = page.body as { quotes: { id: string; requestRevision: number }[]; request: { revision: number; rangeMin: number } };
    expect(body.quotes[0].requestRevision).toBe(1);
    expect(body.request.revision).toBe(2);
    const refused = await callRoute(clientRequestAction, formRequest(`/client/requests/${requestId}`, { intent: "accept", quoteId }, await as(CLIENT)), {
      id: requestId,
    });
    expect(refused.status).toBe(400);
    expect((refused.body as { error: string }).error).toBe(AWAITING_RECONFIRMATION);
    expect((await requestRow(requestId)).state).toBe("open");
  });

  it("the lab reads the change and re-confirms; then the quote can be accepted", async () => {
    const page = await callRoute(labRequestLoader, getRequest(`/lab/requests/${requestId}`, await as(GRANITE)), { id: requestId });
    expect((page.body as { revisions: { summary: string }[] }).revisions[0].summary).toContain("5–90° 2θ");
    const done = await callRoute(labRequestAction, formRequest(`/lab/requests/${requestId}`, { intent: "reconfirm", quoteId }, await as(GRANITE)), {
      id: requestId,
    });
    expect(done.status).toBe(302);
    expect((await quotesOf(requestId))[0].requestRevision).toBe(2);
    const accepted = await callRoute(clientRequestAction, formRequest(`/client/requests/${requestId}`, { intent: "accept", quoteId }, await as(CLIENT)), {
      id: requestId,
    });
    expect(accepted.status).toBe(302);
    expect((await requestRow(requestId)).state).toBe("awarded");
    // An awarded request can no longer be edited.
    const locked = await callRoute(
      measurementAction,
      formRequest(`/client/requests/${requestId}/edit/measurement`, { rangeKind: "two_theta" }, await as(CLIENT)),
      { id: requestId },
    );
    expect(locked.status).toBe(400);
  });
});

describe("a changed hazard declaration", () => {
  it("lapses every lab's acknowledgement: the lab acknowledges again before it can re-confirm its quote", async () => {
    const id = await openRequest("Anatase HC-2611 with a hazard added after quoting");
    const quote = await graniteQuotes(id);
    const request = await requestRow(id);
    // The client adds a hazard statement to the sample (GHS H302, harmful if swallowed) through a wizard save.
    const { revision } = await saveStep(request, ownerId, () =>
      db
        .update(schema.samples)
        .set({ ghsPictograms: ["GHS07"], hStatements: ["H302"] })
        .where(eq(schema.samples.requestId, id)),
    );
    expect(revision?.revision).toBe(2);
    expect(await db.select().from(schema.hazardAcknowledgements).where(eq(schema.hazardAcknowledgements.requestId, id))).toHaveLength(0);
    const cookie = await as(GRANITE);
    const refused = await callRoute(labRequestAction, formRequest(`/lab/requests/${id}`, { intent: "reconfirm", quoteId: quote.id }, cookie), { id });
    expect(refused.status).toBe(400);
    expect(JSON.stringify(refused.body)).toContain("acknowledge it again");
    expect((await quotesOf(id))[0].requestRevision).toBe(1);
    await callRoute(labRequestAction, formRequest(`/lab/requests/${id}`, { intent: "acknowledge" }, cookie), { id });
    const done = await callRoute(labRequestAction, formRequest(`/lab/requests/${id}`, { intent: "reconfirm", quoteId: quote.id }, cookie), { id });
    expect(done.status).toBe(302);
    expect((await quotesOf(id))[0].requestRevision).toBe(2);
  });
});

describe("withdraw and repeat", () => {
  let requestId: string;
  it("the client withdraws an open request: closed, its quote lapsed, the lab told", async () => {
    requestId = await openRequest("Anatase HC-2612 to withdraw");
    await graniteQuotes(requestId);
    const answer = await callRoute(clientRequestAction, formRequest(`/client/requests/${requestId}`, { intent: "withdraw" }, await as(CLIENT)), {
      id: requestId,
    });
    expect(answer.status).toBe(302);
    const row = await requestRow(requestId);
    expect(row.state).toBe("withdrawn");
    expect(row.closedAt).not.toBeNull();
    expect((await quotesOf(requestId)).map((q) => q.state)).toEqual(["lapsed"]);
    expect((await noticesOf("request_withdrawn", graniteId)).length).toBeGreaterThan(0);
    const again = await callRoute(clientRequestAction, formRequest(`/client/requests/${requestId}`, { intent: "withdraw" }, await as(CLIENT)), {
      id: requestId,
    });
    expect(again.status).toBe(400);
  });

  it("“Order again” copies the samples, their phases and window, and the needs into a new draft", async () => {
    const answer = await callRoute(clientRequestAction, formRequest(`/client/requests/${requestId}`, { intent: "repeat" }, await as(CLIENT)), {
      id: requestId,
    });
    expect(answer.status).toBe(302);
    const location = answer.headers.get("location")!;
    expect(location).toMatch(/^\/client\/requests\/[0-9a-f-]+\/edit\/samples$/);
    const copyId = location.split("/")[3];
    const copy = await requestRow(copyId);
    expect(copy).toMatchObject({ state: "draft", repeatOf: requestId, rangeMin: 10, rangeMax: 80, budgetMinor: 60_000, deadline: null });
    const samples = await db.select().from(schema.samples).where(eq(schema.samples.requestId, copyId));
    expect(samples.map((s) => [s.label, s.cellC, s.acceptanceWindow])).toEqual([["HC-2611-A", 9.514, { a: { plusMinus: 0.5, unit: "percent" } }]]);
    const phases = await db.select().from(schema.samplePhases).where(eq(schema.samplePhases.sampleId, samples[0].id));
    expect(phases.map((p) => [p.name, p.cellA])).toEqual([["rutile", 4.594]]);
  });
});

describe("expiry", () => {
  it("the job's function expires an open request past its deadline, lapses its quote and tells the client", async () => {
    const requestId = await openRequest("Anatase HC-2613 left to expire");
    const today = await openRequest("Anatase HC-2614 due today");
    await graniteQuotes(requestId);
    await db
      .update(schema.requests)
      .set({ deadline: inDays(-1) })
      .where(eq(schema.requests.id, requestId));
    await db
      .update(schema.requests)
      .set({ deadline: inDays(0) })
      .where(eq(schema.requests.id, today));
    expect(await expireOverdueRequests(new Date(), [requestId, today])).toBe(1);
    const row = await requestRow(requestId);
    expect(row.state).toBe("expired");
    expect(row.closedAt).not.toBeNull();
    expect((await requestRow(today)).state).toBe("open");
    expect((await quotesOf(requestId)).map((q) => q.state)).toEqual(["lapsed"]);
    expect((await noticesOf("request_expired", clientOrg)).length).toBeGreaterThan(0);
    // Running again changes nothing.
    expect(await expireOverdueRequests(new Date(), [requestId])).toBe(0);
  });
});

describe("a request no lab can measure", () => {
  it("is stopped before publishing, naming the need that rules every lab out", async () => {
    const requestId = await openRequest("Anatase HC-2615 at 2900 K", "draft");
    await db
      .update(schema.requests)
      .set({ temperaturePointsK: [2900] })
      .where(eq(schema.requests.id, requestId));
    const review = await callRoute(reviewLoader, getRequest(`/client/requests/${requestId}/edit/review`, await as(CLIENT)), { id: requestId });
    const problems = (review.body as { problems: string[] }).problems;
    expect(problems).toHaveLength(1);
    expect(problems[0]).toMatch(/^No approved lab can measure this: every lab is ruled out by the temperature 2900 K in air \(highest offered \d+ K\)/);
    const result = await publishRequest(await requestRow(requestId), ownerId);
    expect(result.problems).toEqual(problems);
    expect((await requestRow(requestId)).state).toBe("draft");
  });

  it("when an edit after publishing rules every lab out, the request page says so", async () => {
    const requestId = await openRequest("Anatase HC-2616 raised to 2900 K after publishing");
    const fine = await callRoute(clientRequestLoader, getRequest(`/client/requests/${requestId}`, await as(CLIENT)), { id: requestId });
    expect((fine.body as { noLab: string | null }).noLab).toBeNull();
    await saveStep(await requestRow(requestId), ownerId, () =>
      db
        .update(schema.requests)
        .set({ temperaturePointsK: [2900] })
        .where(eq(schema.requests.id, requestId)),
    );
    const page = await callRoute(clientRequestLoader, getRequest(`/client/requests/${requestId}`, await as(CLIENT)), { id: requestId });
    expect((page.body as { noLab: string }).noLab).toMatch(
      /^No approved lab can measure this as it now reads: every lab is ruled out by the temperature 2900 K in air .*so that labs can quote\.$/,
    );
  });
});

describe("the demo", () => {
  it("seeds an edited, a withdrawn, an expired and a repeated request through the real functions, once", async () => {
    expect(await seedRequestLife()).toBe(4);
    const ids = await requestLifeIds();
    const edited = await requestRow(ids.edited);
    expect(edited.revision).toBe(2);
    expect((await quotesOf(ids.edited)).map((q) => [q.state, q.requestRevision])).toEqual([["sent", 1]]);
    expect((await requestRow(ids.withdrawn)).state).toBe("withdrawn");
    expect((await requestRow(ids.expired)).state).toBe("expired");
    const copies = await db.select().from(schema.requests).where(eq(schema.requests.repeatOf, ids.withdrawn));
    expect(copies.map((c) => c.state)).toEqual(["draft"]);
    // Run again on the seeded database: nothing more is made.
    expect(await seedRequestLife()).toBe(0);
  });
});
