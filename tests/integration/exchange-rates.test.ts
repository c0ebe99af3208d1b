// Indicative exchange rates (docs/design.md#currencies): an admin sets a dated rate with its source (audit-logged,
// refused field by field when wrong), and the client's quote comparison marks quotes in another currency and
// converts them at the latest rate, or says that no rate is set.
import { beforeAll, describe, expect, it } from "vitest";
import { eq } from "drizzle-orm";
import { callRoute, formRequest, getRequest, sessionCookies } from "./route-call";

const as = sessionCookies();
let db: typeof import("~/db/client.server").db;
let schema: typeof import("~/db/client.server").schema;
let rates: typeof import("~/routes/admin/rates");
let requestPage: typeof import("~/routes/client/request");
let requestId: string;
let eurQuote: string;
let usdQuote: string;

beforeAll(async () => {
  ({ db, schema } = await import("~/db/client.server"));
  await (await import("~/demo/seed.server")).seedDemo();
  rates = await import("~/routes/admin/rates");
  requestPage = await import("~/routes/client/request");
  const org = async (slug: string) => (await db.select().from(schema.organisations).where(eq(schema.organisations.slug, slug)))[0];
  const halvorsen = await org("halvorsen-cathode-works");
  const granite = await org("granite-ridge-characterisation");
  const lakeside = await org("lakeside-institute-x-ray-core");
  const [r] = await db
    .insert(schema.requests)
    .values({ organisationId: halvorsen.id, title: "Two currencies", state: "open", rangeMin: 10, rangeMax: 90, currency: "EUR", openedAt: new Date() })
    .returning();
  requestId = r.id;
  const quote = async (labId: string, totalMinor: number, currency: string) =>
    (
      await db
        .insert(schema.quotes)
        .values({
          requestId,
          labId,
          state: "sent",
          lineItems: [{ description: "Measurement", quantity: 1, unitMinor: totalMinor, totalMinor }],
          totalMinor,
          currency,
          validUntil: new Date(Date.now() + 7 * 86_400_000),
          turnaroundDays: 8,
        })
        .returning()
    )[0].id;
  eurQuote = await quote(granite.id, 19_500, "EUR");
  usdQuote = await quote(lakeside.id, 21_000, "USD");
}, 60_000);

async function comparison() {
  const cookie = await as("owner@halvorsen.example");
  const page = await callRoute(requestPage.loader, getRequest(`/client/requests/${requestId}`, cookie), { id: requestId });
  expect(page.status).toBe(200);
  return (page.body as { currencyNotes: Record<string, { note: string | null; conversion: Record<string, unknown> | null }> }).currencyNotes;
}

const setRate = async (fields: Record<string, string>) => callRoute(rates.action, formRequest("/admin/rates", fields, await as("admin@diffractory.example")));

describe("exchange rates", () => {
  it("says the quotes are in different currencies, and that no rate is set before an admin sets one", async () => {
    const notes = await comparison();
    expect(notes[eurQuote]).toEqual({ note: "Quoted in EUR; the others in USD", conversion: null });
    expect(notes[usdQuote]).toEqual({ note: "Quoted in USD; the others in EUR", conversion: { kind: "no_rate", from: "USD", to: "EUR" } });
  });

  it("refuses a wrong rate field by field and keeps nothing", async () => {
    const answer = await setRate({ base: "EUR", quote: "EUR", rate: "-1", asOf: "2999-01-01", source: "" });
    expect(answer.status).toBe(400);
    const problems = (answer.body as { problems: Record<string, string> }).problems;
    expect(Object.keys(problems).sort()).toEqual(["asOf", "quote", "rate", "source"]);
    expect(problems.quote).toBe("Choose two different currencies.");
    expect(await db.select().from(schema.exchangeRates)).toHaveLength(0);
  });

  it("keeps an admin's rate with its day and source, audit-logged, and converts at the latest one", async () => {
    const older = await setRate({ base: "EUR", quote: "USD", rate: "1.0500", asOf: "2026-01-05", source: "older rate" });
    expect(older.status).toBe(302);
    const answer = await setRate({ base: "EUR", quote: "USD", rate: "1.0850", asOf: "2026-03-02", source: "test rate" });
    expect(answer.status).toBe(302);
    const rows = await db.select().from(schema.exchangeRates);
    expect(rows).toHaveLength(2);
    const latest = rows.find((r) => r.source === "test rate")!;
    expect(latest).toMatchObject({ base: "EUR", quote: "USD", rate: "1.08500000", asOf: "2026-03-02" });
    const [admin] = await db.select().from(schema.users).where(eq(schema.users.email, "admin@diffractory.example"));
    expect(latest.setBy).toBe(admin.id);
    const logged = await db.select().from(schema.auditLog).where(eq(schema.auditLog.action, "exchange_rate_set"));
    expect(logged).toHaveLength(2);
    expect(logged.map((l) => l.details)).toContainEqual({ base: "EUR", quote: "USD", rate: "1.085", asOf: "2026-03-02", source: "test rate" });

    // 210.00 USD at 1 EUR = 1.0850 USD is 193.548… EUR, 193.55 EUR rounded half away from zero (hand arithmetic).
    const notes = await comparison();
    expect(notes[usdQuote].conversion).toMatchObject({
      kind: "converted",
      amountMinor: 19_355,
      currency: "EUR",
      rate: { asOf: "2026-03-02", source: "test rate" },
    });

    const list = await callRoute(rates.loader, getRequest("/admin/rates", await as("admin@diffractory.example")));
    expect((list.body as { rates: { source: string }[] }).rates.map((r) => r.source)).toEqual(["test rate", "older rate"]);
  });

  it("reads the admin's sentence in the audit log", async () => {
    const { auditSentence } = await import("~/domain/audit-words");
    const s = auditSentence(
      { action: "exchange_rate_set", details: { base: "EUR", quote: "USD", rate: "1.085", asOf: "2026-03-02", source: "test rate" } },
      { who: "Platform Admin", organisation: null, subject: null, orderNumber: null, requestTitle: null, labName: null, currency: null },
    );
    expect(s).toEqual({ sentence: "Platform Admin set the indicative rate 1 EUR = 1.085 USD as of 2026-03-02 (source: test rate)", details: "" });
  });
});
