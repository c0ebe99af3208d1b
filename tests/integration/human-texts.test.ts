// What people read after the demo is seeded as `npm run demo` seeds it (the harness of demo-scenario.test.ts: a
// payment fake of the file's own, the demo, its money orders and three scenario requests delivered with checked
// scans): no e-mail, in-app notice or timeline note shows an amount in minor units or names an order by a piece
// of its id; every letter about an order names it by its number (docs/design.md#order-numbers).
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { type PaymentFake, startPaymentFake } from "../../services/payment-fake/index";

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
});
