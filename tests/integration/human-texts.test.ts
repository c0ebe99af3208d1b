// What people read after the demo is seeded as `npm run demo` seeds it (the harness of demo-scenario.test.ts: a
// payment fake of the file's own, the demo, its money orders and three scenario requests delivered with checked
// scans): no e-mail, in-app notice or timeline note shows an amount in minor units or names an order by a piece
// of its id; every letter about an order names it by its number (docs/design.md#order-numbers); the main API's JSON
// gives each amount as money beside its minor units and each order its number (docs/design.md#records-that-hold).
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { type PaymentFake, startPaymentFake } from "../../services/payment-fake/index";
import { callRoute, getRequest, sessionCookies } from "./route-call";

const SCENARIO_TITLES = [
  "Olivine with Li3PO4 residue in LFP batch HC-2681",
  "Acceptance test of LFP production lot HC-2693",
  "Form I or Form II of API batch PSF-163",
];
const UUID = /[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}/gi;
const ORDER_NUMBER = /\b[A-Z]{2,4}\d*-\d{4}-\d{4,}\b/;

let fake: PaymentFake;
let app: {
  db: typeof import("~/db/client.server");
};

beforeAll(async () => {
  fake = await startPaymentFake({ port: 0, webhookUrls: [] });
  process.env.STRIPE_API_PORT = String(fake.port);
  app = { db: await import("~/db/client.server") };
  await (await import("~/demo/seed.server")).seedDemo();
  await (await import("~/demo/seed-orders.server")).seedDemoOrders();
  const scenario = await import("~/demo/seed-scenario.server");
  for (const spec of scenario.SCENARIO.filter((s) => SCENARIO_TITLES.includes(s.title))) {
    expect(await scenario.seedScenarioRequest(spec)).toBe(true);
  }
}, 240_000);
afterAll(async () => {
  await fake?.close();
});

/** The first eight hex digits of every order id: how orders used to be named. */
async function idFragments() {
  const { db, schema } = app.db;
  const orders = await db.select({ id: schema.orders.id, number: schema.orders.number }).from(schema.orders);
  expect(orders.length).toBeGreaterThan(5);
  return orders.map((o) => ({ ...o, fragment: o.id.slice(0, 8) }));
}

/** A text with every whole uuid taken out: the links in a letter carry the order's id, which no one reads as its name. */
const withoutLinks = (text: string) => text.replace(UUID, "");

describe("texts people read after the demo seed", () => {
  it("no e-mail in the outbox shows minor units or names an order by a piece of its id", async () => {
    const { db, schema } = app.db;
    const mails = await db.select().from(schema.outboxMessages);
    expect(mails.length).toBeGreaterThan(20);
    const fragments = await idFragments();
    for (const m of mails) {
      for (const part of [m.subject, m.text, m.html]) {
        expect(part, m.subject).not.toMatch(/minor units?/i);
        const readable = withoutLinks(part);
        for (const o of fragments) expect(readable.includes(o.fragment), `${m.subject} names ${o.number} by ${o.fragment}`).toBe(false);
      }
    }
  });

  it("every letter about an order names it by its number, in the subject and the body", async () => {
    const { db, schema } = app.db;
    const { isNotNull } = await import("drizzle-orm");
    const mails = await db.select().from(schema.outboxMessages).where(isNotNull(schema.outboxMessages.orderId));
    expect(mails.length).toBeGreaterThan(10);
    const numbers = new Map((await idFragments()).map((o) => [o.id, o.number]));
    for (const m of mails) {
      const number = numbers.get(m.orderId!)!;
      expect(number).toMatch(ORDER_NUMBER);
      expect(m.subject, m.kind).toContain(number);
      expect(m.text, m.subject).toContain(number);
    }
  });

  it("in-app notices, timeline notes and ledger memos show money as money and orders by number", async () => {
    const { db, schema } = app.db;
    const fragments = await idFragments();
    const notices = (await db.select({ t: schema.notifications.title }).from(schema.notifications)).map((r) => r.t);
    const notes = (await db.select({ t: schema.orderEvents.note }).from(schema.orderEvents)).map((r) => r.t);
    const memos = (await db.select({ t: schema.ledgerTransactions.memo }).from(schema.ledgerTransactions)).map((r) => r.t);
    expect(notices.length).toBeGreaterThan(10);
    for (const text of [...notices, ...notes, ...memos]) {
      expect(text).not.toMatch(/minor units?/i);
      for (const o of fragments) expect(withoutLinks(text).includes(o.fragment), text).toBe(false);
    }
    // The demo pays an order out and settles a dispute: both notes state their amounts in the order's currency.
    expect(notes.find((n) => n.startsWith("Paid to the lab:"))).toMatch(
      /^Paid to the lab: [€$£]\d[\d,]*\.\d\d after the platform fee of [€$£]\d[\d,]*\.\d\d\.$/,
    );
    expect(notes.find((n) => n.startsWith("Refund "))).toMatch(/^Refund [€$£]\d[\d,]*\.\d\d, payout [€$£]\d[\d,]*\.\d\d, platform fee [€$£]\d[\d,]*\.\d\d\. /);
  });

  it("the main API's JSON gives amounts as money beside their minor units and names orders by number", async () => {
    const as = sessionCookies();
    const api = {
      orders: (await import("~/routes/api/orders")).loader,
      order: (await import("~/routes/api/order")).loader,
      notifications: (await import("~/routes/api/notifications")).loader,
      files: (await import("~/routes/api/order-files")).loader,
    };
    const fragments = await idFragments();
    /** Every object in a JSON answer, walked depth first. */
    const objects = (v: unknown): Record<string, unknown>[] =>
      Array.isArray(v) ? v.flatMap(objects) : v && typeof v === "object" ? [v as Record<string, unknown>, ...Object.values(v).flatMap(objects)] : [];
    const strings = (v: unknown): string[] =>
      typeof v === "string" ? [v] : Array.isArray(v) ? v.flatMap(strings) : v && typeof v === "object" ? Object.values(v).flatMap(strings) : [];
    const judge = (where: string, body: unknown) => {
      for (const o of objects(body)) {
        for (const [k, v] of Object.entries(o)) {
          // An amount in minor units comes with its money text under the same name without "Minor" (common practice).
          if (k.endsWith("Minor") && typeof v === "number") expect(typeof o[k.replace(/Minor$/, "")], `${where}: ${k} without its money form`).toBe("string");
        }
        if (typeof o.id === "string" && fragments.some((f) => f.id === o.id)) expect(o.number, `${where}: an order without its number`).toMatch(ORDER_NUMBER);
      }
      for (const text of strings(body)) {
        expect(text, where).not.toMatch(/minor units?/i);
        for (const f of fragments) expect(withoutLinks(text).includes(f.fragment), `${where}: ${text}`).toBe(false);
      }
    };
    let orders = 0;
    for (const email of ["owner@halvorsen.example", "owner@pinecrest.example", "lab@graniteridge.example"]) {
      const cookie = await as(email);
      const list = await callRoute(api.orders, getRequest("/api/orders", cookie));
      expect(list.status, email).toBe(200);
      judge(`${email} /api/orders`, list.body);
      const rows = (list.body as { orders: { id: string }[] }).orders;
      orders += rows.length;
      for (const { id } of rows.slice(0, 6)) {
        const one = await callRoute(api.order, getRequest(`/api/orders/${id}`, cookie), { id });
        expect(one.status).toBe(200);
        expect(one.body).toMatchObject({ number: expect.stringMatching(ORDER_NUMBER), amount: expect.stringMatching(/\d\.\d\d/) });
        judge(`${email} /api/orders/${id}`, one.body);
        judge(`${email} /api/orders/${id}/files`, (await callRoute(api.files, getRequest(`/api/orders/${id}/files`, cookie), { id })).body);
      }
      judge(`${email} /api/notifications`, (await callRoute(api.notifications, getRequest("/api/notifications", cookie))).body);
    }
    expect(orders).toBeGreaterThan(5);
  });
});
