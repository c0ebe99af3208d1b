// The demo as a company buyer meets it (issue "Buying as companies buy", done-when 2), seeded in the order of
// scripts/seed-demo.ts with a payment fake of this file's own (the harness of demo-scenario.test.ts): every demo
// organisation — clients and labs, those the later seeds add too — has a billing address and a tax id; every paid
// order has its invoice; and at least one order was paid by bank transfer and is held (docs/design.md#invoices,
// docs/design.md#bank-transfer). The demo's data are invented; these checks are of completeness, not of values.
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { type PaymentFake, startPaymentFake } from "../../services/payment-fake/index";

let fake: PaymentFake;
let app: { db: typeof import("~/db/client.server"); orm: typeof import("drizzle-orm") };

beforeAll(async () => {
  // App modules read their configuration when first imported, so after the fake has its port.
  fake = await startPaymentFake({ port: 0, webhookUrls: [] });
  process.env.STRIPE_API_PORT = String(fake.port);
  app = { db: await import("~/db/client.server"), orm: await import("drizzle-orm") };
  await (await import("~/demo/seed.server")).seedDemo();
  await (await import("~/demo/seed-profiles.server")).seedDemoProfiles();
  await (await import("~/demo/seed-orders.server")).seedDemoOrders();
  await (await import("~/demo/seed-disputes.server")).seedDemoDisputes();
  await (await import("~/demo/seed-request-life.server")).seedRequestLife();
  await (await import("~/demo/seed-purchase-orders.server")).seedDemoPurchaseOrders();
  await (await import("~/demo/seed-transfer.server")).seedDemoTransfers();
  await (await import("~/demo/seed-invoices.server")).seedDemoInvoices();
  await (await import("~/demo/seed-statements.server")).seedDemoStatements();
  await (await import("~/demo/seed-tiers.server")).seedDemoTiers();
}, 240_000);
afterAll(async () => {
  await fake?.close();
});

describe("the demo's billing data", () => {
  it("every organisation, client or lab, has a billing address and a tax id", async () => {
    const { db, schema } = app.db;
    const orgs = await db.select().from(schema.organisations);
    expect(orgs.filter((o) => o.kind === "client").length).toBeGreaterThan(2);
    expect(orgs.filter((o) => o.kind === "lab").length).toBeGreaterThan(2);
    const missing = orgs
      .filter((o) => !o.billingAddress?.line1?.trim() || !o.billingAddress.city?.trim() || !o.billingAddress.country?.trim() || !o.taxId?.trim())
      .map((o) => o.name);
    expect(missing).toEqual([]);
  });

  it("every paid order has its invoice", async () => {
    const { db, schema } = app.db;
    const { eq } = app.orm;
    const held = await db
      .selectDistinct({ orderId: schema.ledgerTransactions.orderId, number: schema.orders.number })
      .from(schema.ledgerTransactions)
      .innerJoin(schema.orders, eq(schema.orders.id, schema.ledgerTransactions.orderId))
      .where(eq(schema.ledgerTransactions.kind, "payment_held"));
    const paid = await db
      .selectDistinct({ orderId: schema.payments.orderId, number: schema.orders.number })
      .from(schema.payments)
      .innerJoin(schema.orders, eq(schema.orders.id, schema.payments.orderId))
      .where(eq(schema.payments.status, "paid"));
    expect(paid.length).toBeGreaterThan(3);
    const invoiced = new Set(
      (await db.select({ orderId: schema.invoices.orderId }).from(schema.invoices).where(eq(schema.invoices.kind, "invoice"))).map((i) => i.orderId),
    );
    expect([...held, ...paid].filter((o) => !invoiced.has(o.orderId)).map((o) => o.number)).toEqual([]);
  });

  it("at least one order was paid by bank transfer, its money held and invoiced", async () => {
    const { db, schema } = app.db;
    const { and, eq } = app.orm;
    const byTransfer = await db
      .select({ orderId: schema.payments.orderId, amountMinor: schema.payments.amountMinor })
      .from(schema.payments)
      .where(and(eq(schema.payments.method, "bank_transfer"), eq(schema.payments.status, "paid")));
    expect(byTransfer.length).toBeGreaterThan(0);
    const ledger = await import("~/models/payments/ledger.server");
    const [invoice] = await db
      .select()
      .from(schema.invoices)
      .where(and(eq(schema.invoices.orderId, byTransfer[0].orderId), eq(schema.invoices.kind, "invoice")));
    expect(invoice?.totalMinor).toBe(byTransfer[0].amountMinor);
    const [event] = await db
      .select()
      .from(schema.ledgerTransactions)
      .where(and(eq(schema.ledgerTransactions.orderId, byTransfer[0].orderId), eq(schema.ledgerTransactions.kind, "payment_held")));
    expect(event).toBeDefined();
    expect(await ledger.heldForOrder(db, byTransfer[0].orderId)).toBeLessThanOrEqual(byTransfer[0].amountMinor);
  });
});
