// Money-test fixtures: a payment fake of the test file's own, app modules loaded after it, orders ready to pay.
import http from "node:http";
import type { AddressInfo } from "node:net";
import { startPaymentFake } from "../../services/payment-fake/index";

/**
 * Starts an in-process payment fake on a free port and points the app's SDK at it. App modules read their
 * configuration when first imported, so every app import happens after this, through `load()`.
 */
export async function moneyWorld() {
  const fake = await startPaymentFake({ port: 0, webhookUrls: [], retryDelaysMs: [20, 50, 100], deliveryTimeoutMs: 5000 });
  process.env.STRIPE_API_PORT = String(fake.port);
  const app = {
    db: await import("~/db/client.server"),
    seed: await import("~/demo/seed.server"),
    payments: await import("~/models/payments/provider.server"),
    checkout: await import("~/models/payments/checkout.server"),
    orders: await import("~/models/orders/lifecycle.server"),
    numbers: await import("~/models/orders/numbers.server"),
    ledger: await import("~/models/payments/ledger.server"),
    webhook: await import("~/routes/api/webhooks-payments"),
  };
  const { db, schema } = app.db;
  const { eq } = await import("drizzle-orm");

  // The app's webhook endpoint, served in-process so the fake can push signed events to it.
  const receiver = http.createServer(async (req, res) => {
    const chunks: Buffer[] = [];
    for await (const c of req) chunks.push(c as Buffer);
    const request = new Request("http://127.0.0.1/api/webhooks/payments", {
      method: "POST",
      body: Buffer.concat(chunks),
      headers: req.headers as Record<string, string>,
    });
    try {
      const answer = (await app.webhook.action({ request } as never)) as Response;
      res.writeHead(answer.status, { "content-type": "application/json" });
      res.end(await answer.text());
    } catch (err) {
      res.writeHead(500);
      res.end(String(err));
    }
  });
  await new Promise<void>((r) => receiver.listen(0, "127.0.0.1", r));
  const webhookUrl = `http://127.0.0.1:${(receiver.address() as AddressInfo).port}/`;
  fake.controls.addWebhookEndpoint(webhookUrl);

  await app.seed.seedDemo();
  const one = async <T>(rows: Promise<T[]>) => (await rows)[0];
  const granite = await one(db.select().from(schema.organisations).where(eq(schema.organisations.slug, "granite-ridge-characterisation")));
  const halvorsen = await one(db.select().from(schema.organisations).where(eq(schema.organisations.slug, "halvorsen-cathode-works")));
  const owner = await one(db.select().from(schema.users).where(eq(schema.users.email, "owner@halvorsen.example")));
  const admin = await one(db.select().from(schema.users).where(eq(schema.users.email, "admin@diffractory.example")));
  const labManager = await one(db.select().from(schema.users).where(eq(schema.users.email, "lab@graniteridge.example")));

  /** Onboards Granite Ridge's payout account through the fake's onboarding link, as its manager would. */
  async function onboardLab() {
    const link = await app.payments.payoutOnboardingUrl(granite.id, labManager.email);
    const page = await fetch(link);
    const action = (await page.text()).match(/action="([^"]+)"/)![1];
    await fetch(new URL(action, link), { method: "POST", body: new URLSearchParams({ action: "complete" }), redirect: "manual" });
    const [lab] = await db.select().from(schema.labs).where(eq(schema.labs.organisationId, granite.id));
    await app.payments.syncPayoutAccount(lab.payoutAccountId!);
  }

  let counter = 0;
  /** A request, a quote from Granite Ridge and its order awaiting payment, made directly in the database. */
  async function makeOrder(amountMinor = 19_500) {
    counter++;
    const [request] = await db
      .insert(schema.requests)
      .values({ organisationId: halvorsen.id, createdBy: owner.id, title: `Money test ${counter}`, state: "awarded", rangeMin: 10, rangeMax: 90 })
      .returning();
    const [quote] = await db
      .insert(schema.quotes)
      .values({
        requestId: request.id,
        labId: granite.id,
        state: "accepted",
        lineItems: [{ description: "Measurement", quantity: 1, unitMinor: amountMinor, totalMinor: amountMinor }],
        totalMinor: amountMinor,
        currency: "EUR",
        validUntil: new Date(Date.now() + 86_400_000),
        turnaroundDays: 8,
      })
      .returning();
    const [order] = await db.transaction(async (tx) =>
      tx
        .insert(schema.orders)
        .values({
          requestId: request.id,
          quoteId: quote.id,
          number: await app.numbers.takeOrderNumber(tx, halvorsen.id),
          clientOrganisationId: halvorsen.id,
          labId: granite.id,
          amountMinor,
          currency: "EUR",
        })
        .returning(),
    );
    await db.insert(schema.orderEvents).values({ orderId: order.id, toState: "awaiting_payment", actorUserId: owner.id, note: "Quote accepted" });
    return order.id;
  }

  const sessionIdOf = (url: string) => new URL(url).pathname.split("/").pop()!;

  /** Opens checkout and pays on the fake's card page with the given test card; then the return page's sync. */
  async function pay(orderId: string, card = "4242424242424242") {
    const url = await app.checkout.startCheckout(orderId, { userId: owner.id, email: owner.email });
    const sessionId = sessionIdOf(url);
    const result = fake.controls.pay(sessionId, { number: card, exp: "12/34", cvc: "123", name: "Ingrid Halvorsen-Lund" });
    const synced = await app.checkout.syncCheckout(sessionId);
    return { url, sessionId, result, synced };
  }

  async function orderState(orderId: string) {
    const [o] = await db.select().from(schema.orders).where(eq(schema.orders.id, orderId));
    return o.state;
  }

  /** Walks a paid order through shipping and measurement to data delivered, as client and lab would. */
  async function deliver(orderId: string, deliveredAt = new Date()) {
    for (const [to, mover] of [
      ["samples_in_transit", "client"],
      ["samples_received", "lab"],
      ["measuring", "lab"],
      ["data_delivered", "lab"],
    ] as const) {
      await db.transaction(async (tx) => {
        const o = await app.orders.lockOrder(tx, orderId);
        await app.orders.moveOrder(tx, o, to, mover, null, "", to === "data_delivered" ? { deliveredAt } : {});
      });
    }
  }

  /** A paid order of Halvorsen at Granite Ridge with one declared sample, moved on to measuring by the lab. */
  async function measuringOrder(sample: {
    label: string;
    formula: string;
    crystalSystem: string;
    centering: string;
    cellA: number;
    cellB: number;
    cellC: number;
  }) {
    const orderId = await makeOrder();
    await pay(orderId);
    const [order] = await db.select().from(schema.orders).where(eq(schema.orders.id, orderId));
    const [row] = await db
      .insert(schema.samples)
      .values({ requestId: order.requestId, ...sample })
      .returning();
    for (const [to, mover] of [
      ["samples_in_transit", "client"],
      ["samples_received", "lab"],
      ["measuring", "lab"],
    ] as const) {
      await db.transaction(async (tx) => app.orders.moveOrder(tx, await app.orders.lockOrder(tx, orderId), to, mover, null));
    }
    return { orderId, sampleId: row.id };
  }

  async function close() {
    await fake.controls.settle(5000).catch(() => null);
    await fake.close();
    await new Promise<void>((r) => receiver.close(() => r()));
  }

  return {
    fake,
    app,
    db,
    schema,
    eq,
    granite,
    halvorsen,
    owner,
    admin,
    labManager,
    onboardLab,
    makeOrder,
    pay,
    orderState,
    deliver,
    measuringOrder,
    sessionIdOf,
    webhookUrl,
    close,
  };
}

export type MoneyWorld = Awaited<ReturnType<typeof moneyWorld>>;
