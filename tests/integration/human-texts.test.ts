// What people read after the demo is seeded as `npm run demo` seeds it (the harness of demo-scenario.test.ts: a
// payment fake of the file's own, the demo, its money orders and three scenario requests delivered with checked
// scans): no e-mail, in-app notice or timeline note shows an amount in minor units or names an order by a piece
// of its id; every letter about an order names it by its number (docs/design.md#order-numbers); the main API's JSON
// gives each amount as money beside its minor units and each order its number (docs/design.md#records-that-hold).
// With the demo's profiles, bank transfers, invoices, statements and price tiers seeded too: no letter, notice or
// timeline note shows the payment provider's ids (its documented prefixes: pi_ payment intents, ch_ charges, cs_
// checkout sessions, re_ refunds, tr_ transfers, cus_ customers, acct_ accounts, evt_ events, po_ payouts, py_
// payments); the invoice API's JSON is judged as the other answers; every invoice and credit note PDF read back by
// pdftotext (Debian poppler-utils) shows its money with a currency sign or code and no provider id; and no client
// page calls a fully refunded payment "Paid" (docs/design.md#payments-list).
import { execFileSync } from "node:child_process";
import { createElement } from "react";
import { renderToString } from "react-dom/server";
import { createRoutesStub } from "react-router";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { type PaymentFake, startPaymentFake } from "../../services/payment-fake/index";
import { and, eq, inArray } from "drizzle-orm";
import { callRoute, getRequest, sessionCookies } from "./route-call";

const SCENARIO_TITLES = [
  "Olivine with Li3PO4 residue in LFP batch HC-2681",
  "Acceptance test of LFP production lot HC-2693",
  "Form I or Form II of API batch PSF-163",
];
const UUID = /[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}/gi;
const ORDER_NUMBER = /\b[A-Z]{2,4}\d*-\d{4}-\d{4,}\b/;
const PROVIDER_ID = /\b(pi|ch|cs|re|tr|cus|acct|evt|po|py)_[A-Za-z0-9]{8,}/;

let fake: PaymentFake;
let app: {
  db: typeof import("~/db/client.server");
};

beforeAll(async () => {
  fake = await startPaymentFake({ port: 0, webhookUrls: [] });
  process.env.STRIPE_API_PORT = String(fake.port);
  app = { db: await import("~/db/client.server") };
  await (await import("~/demo/seed.server")).seedDemo();
  // In the order of scripts/seed-demo.ts: profiles before the orders (tax and invoice parties come from them).
  await (await import("~/demo/seed-profiles.server")).seedDemoProfiles();
  await (await import("~/demo/seed-orders.server")).seedDemoOrders();
  const scenario = await import("~/demo/seed-scenario.server");
  for (const spec of scenario.SCENARIO.filter((s) => SCENARIO_TITLES.includes(s.title))) {
    expect(await scenario.seedScenarioRequest(spec)).toBe(true);
  }
  await (await import("~/demo/seed-transfer.server")).seedDemoTransfers();
  await (await import("~/demo/seed-invoices.server")).seedDemoInvoices();
  await (await import("~/demo/seed-statements.server")).seedDemoStatements();
  await (await import("~/demo/seed-tiers.server")).seedDemoTiers();
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
        expect(part, m.subject).not.toMatch(PROVIDER_ID);
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
    // What clients read (notices and timeline notes; ledger memos are the admin's) names no provider object.
    for (const text of [...notices, ...notes]) expect(text).not.toMatch(PROVIDER_ID);
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
      invoice: (await import("~/routes/api/order-invoice")).loader,
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
    let invoices = 0;
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
      // Every invoice of the person's orders (with its credit notes), judged as the other answers.
      for (const { id } of rows) {
        const invoice = await callRoute(api.invoice, getRequest(`/api/orders/${id}/invoice`, cookie), { id });
        if (invoice.status === 404) continue;
        expect(invoice.status).toBe(200);
        invoices++;
        judge(`${email} /api/orders/${id}/invoice`, invoice.body);
        expect(JSON.stringify(invoice.body)).not.toMatch(PROVIDER_ID);
        expect(invoice.body).toMatchObject({ number: expect.any(String), totals: { gross: expect.stringMatching(/\d\.\d\d/) } });
      }
      judge(`${email} /api/notifications`, (await callRoute(api.notifications, getRequest("/api/notifications", cookie))).body);
    }
    expect(orders).toBeGreaterThan(5);
    expect(invoices).toBeGreaterThan(3);
  });

  it("every invoice and credit note PDF shows money with its currency and no provider id", async () => {
    const { db, schema } = app.db;
    const { invoicePdf } = await import("~/models/invoices/pdf.server");
    const documents = await db.select().from(schema.invoices);
    expect(documents.filter((d) => d.kind === "invoice").length).toBeGreaterThan(3);
    expect(documents.filter((d) => d.kind === "credit_note").length).toBeGreaterThan(0);
    for (const d of documents) {
      const text = execFileSync("pdftotext", ["-layout", "-", "-"], { input: await invoicePdf(d.document) }).toString("utf8");
      expect(text, d.number).toContain(d.number);
      expect(text, d.number).not.toMatch(PROVIDER_ID);
      expect(text, d.number).not.toMatch(/minor units?/i);
      // Every amount (digits with two decimals) stands beside a currency sign or code, as formatMoney writes it.
      const amounts = text.match(/(?:[€$£]|\b[A-Z]{3}\s?)?-?−?\d[\d,]*\.\d\d\b/g) ?? [];
      expect(amounts.length, d.number).toBeGreaterThan(0);
      for (const a of amounts) expect(a, `${d.number}: ${a}`).toMatch(/^(?:[€$£]|[A-Z]{3})/);
      // The total as money: gross in the document's currency.
      const { formatMoney } = await import("~/domain/money");
      expect(text.replace(/\s+/g, " "), d.number).toContain(formatMoney(d.totalMinor, d.currency));
    }
  });

  it("no client page calls a fully refunded payment Paid", async () => {
    const { db, schema } = app.db;
    const t = schema.ledgerTransactions;
    const routes = {
      payments: await import("~/routes/client/payments"),
      receipt: await import("~/routes/client/payment-receipt"),
      order: await import("~/routes/client/order"),
    };
    const postings = await db
      .select({ kind: t.kind, orderId: t.orderId, amount: schema.ledgerEntries.amountMinor })
      .from(t)
      .innerJoin(schema.ledgerEntries, eq(schema.ledgerEntries.transactionId, t.id))
      .where(eq(schema.ledgerEntries.account, "platform_cash"));
    const per = new Map<string, { held: number; refunded: number }>();
    for (const p of postings) {
      const e = per.get(p.orderId!) ?? { held: 0, refunded: 0 };
      if (p.kind === "payment_held") e.held += p.amount;
      if (p.kind === "refund") e.refunded -= p.amount;
      per.set(p.orderId!, e);
    }
    const refundedIds = [...per].filter(([, e]) => e.held > 0 && e.refunded === e.held).map(([id]) => id);
    const refunded = await db
      .select({ order: schema.orders, payment: schema.payments, email: schema.users.email })
      .from(schema.orders)
      .innerJoin(schema.payments, and(eq(schema.payments.orderId, schema.orders.id), eq(schema.payments.status, "paid")))
      // The client organisation's owner reads its pages.
      .innerJoin(schema.memberships, and(eq(schema.memberships.organisationId, schema.orders.clientOrganisationId), eq(schema.memberships.role, "owner")))
      .innerJoin(schema.users, eq(schema.users.id, schema.memberships.userId))
      .where(inArray(schema.orders.id, refundedIds));
    // The demo refunds at least one paid order in full (the parcel refused on arrival, the cancelled order).
    expect(refunded.length).toBeGreaterThan(0);
    const as = sessionCookies();
    for (const { order, payment, email } of refunded) {
      const cookie = await as(email);
      const list = visible((await page(routes.payments, "/client/payments", cookie)).html);
      const at = list.indexOf(order.number);
      expect(at, `${order.number} in the payments list`).toBeGreaterThanOrEqual(0);
      expect(list.slice(at, at + 160), order.number).not.toMatch(/\bPaid\b/);
      expect(list).not.toMatch(PROVIDER_ID);
      const receipt = visible((await page(routes.receipt, `/client/payments/${payment.id}/receipt`, cookie, { id: payment.id })).html);
      expect(receipt, order.number).toContain(order.number);
      expect(receipt, order.number).not.toMatch(/\bPaid\b/);
      expect(receipt, order.number).not.toMatch(PROVIDER_ID);
      const orderPage = visible((await page(routes.order, `/client/orders/${order.id}`, cookie, { id: order.id })).html);
      expect(orderPage, order.number).toContain(order.number);
      expect(orderPage, order.number).not.toMatch(/\bPaid\b/);
      expect(orderPage, order.number).not.toMatch(PROVIDER_ID);
    }
  });
});

type RouteModule = { loader: (...a: never[]) => unknown; default: unknown };

/** The route's loader answer for the person, and its page rendered to HTML from that answer (as payment-standing.test.ts). */
async function page(route: RouteModule, path: string, cookie: string, params: Record<string, string> = {}) {
  const answer = await callRoute(route.loader as never, getRequest(path, cookie), params);
  expect(answer.status, path).toBe(200);
  const Stub = createRoutesStub([{ id: "page", path: path.split("?")[0], Component: route.default as never, loader: () => answer.body }]);
  const html = renderToString(createElement(Stub, { initialEntries: [path], hydrationData: { loaderData: { page: answer.body } } }));
  return { body: answer.body, html };
}

/** The text a person reads: tags and attributes taken out (React's <!-- --> between text parts joins them). */
const visible = (html: string) =>
  html
    .replace(/<!-- -->/g, "")
    .replace(/<[^>]+>/g, " ")
    .replace(/&#x27;|&apos;/g, "'")
    .replace(/\s+/g, " ");
