// The money flow on the real PostgreSQL and the real payment SDK against the fake: pay, decline, cancel,
// refuse on arrival, dispute with a split, automatic acceptance, webhooks twice / late / out of order.
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { moneyWorld, type MoneyWorld } from "./money-fixtures";

let w: MoneyWorld;

beforeAll(async () => {
  w = await moneyWorld();
  await w.onboardLab();
});
afterAll(async () => {
  await w?.close();
});

async function ledgerFor(orderId: string) {
  const rows = await w.db
    .select({ kind: w.schema.ledgerTransactions.kind, account: w.schema.ledgerEntries.account, amount: w.schema.ledgerEntries.amountMinor })
    .from(w.schema.ledgerEntries)
    .innerJoin(w.schema.ledgerTransactions, w.eq(w.schema.ledgerTransactions.id, w.schema.ledgerEntries.transactionId))
    .where(w.eq(w.schema.ledgerTransactions.orderId, orderId));
  return rows;
}

const sum = (rows: { account: string; amount: number }[], account: string) => rows.filter((r) => r.account === account).reduce((s, r) => s + r.amount, 0);

describe("paying into holding", () => {
  it("the success card moves the order to funds held and posts a balanced ledger transaction", async () => {
    const orderId = await w.makeOrder(19_500);
    const { synced } = await w.pay(orderId);
    expect(synced.state).toBe("paid");
    expect(await w.orderState(orderId)).toBe("funds_held");
    const rows = await ledgerFor(orderId);
    expect(sum(rows, "platform_cash")).toBe(19_500);
    expect(sum(rows, "funds_held")).toBe(-19_500);
    expect(await w.app.ledger.heldForOrder(w.db, orderId)).toBe(19_500);
  });

  it("a declined card leaves the order awaiting payment with the decline reason", async () => {
    const orderId = await w.makeOrder();
    const { synced } = await w.pay(orderId, "4000000000000002");
    expect(synced).toMatchObject({ state: "declined", reason: "Your card was declined." });
    expect(await w.orderState(orderId)).toBe("awaiting_payment");
    const insufficient = await w.makeOrder();
    expect((await w.pay(insufficient, "4000000000009995")).synced).toMatchObject({ state: "declined", reason: "Your card has insufficient funds." });
    expect(await ledgerFor(orderId)).toEqual([]);
    // The client can try again with another card on the same checkout.
    const retry = await w.pay(orderId);
    expect(retry.synced.state).toBe("paid");
  });

  it("a double click on pay opens one checkout and charges once", async () => {
    const orderId = await w.makeOrder(12_000);
    const actor = { userId: w.owner.id, email: w.owner.email };
    const [a, b] = await Promise.all([w.app.checkout.startCheckout(orderId, actor), w.app.checkout.startCheckout(orderId, actor)]);
    expect(a).toBe(b);
    const payments = await w.db.select().from(w.schema.payments).where(w.eq(w.schema.payments.orderId, orderId));
    expect(payments).toHaveLength(1);
    w.fake.controls.pay(w.sessionIdOf(a), { number: "4242424242424242" });
    w.fake.controls.pay(w.sessionIdOf(a), { number: "4242424242424242" });
    await w.app.checkout.syncCheckout(w.sessionIdOf(a));
    await w.app.checkout.syncCheckout(w.sessionIdOf(a));
    const charges = (w.fake.controls.snapshot().objects.charge as { payment_intent: string; status: string }[]).filter(
      (c) => c.payment_intent === payments[0].paymentIntentId,
    );
    expect(charges).toHaveLength(1);
    expect((await ledgerFor(orderId)).filter((r) => r.kind === "payment_held")).toHaveLength(2); // two entries, one transaction
  });
});

describe("releasing, refunding and disputes", () => {
  it("happy path: accepted delivery pays the lab the total minus the 8 % platform fee", async () => {
    const orderId = await w.makeOrder(20_000);
    await w.pay(orderId);
    await w.deliver(orderId);
    await w.app.orders.acceptDelivery(orderId, "client", w.owner.id);
    expect(await w.orderState(orderId)).toBe("paid_out");
    const rows = await ledgerFor(orderId);
    expect(sum(rows, "funds_held")).toBe(0);
    expect(sum(rows, "platform_fees")).toBe(-1_600); // 8 % of 200.00 (default fee, docs/design.md#money-flow)
    expect(sum(rows, "platform_cash")).toBe(20_000 - 18_400);
    const transfers = (w.fake.controls.snapshot().objects.transfer as { transfer_group: string; amount: number }[]).filter(
      (t) => t.transfer_group === `order_${orderId}`,
    );
    expect(transfers.map((t) => t.amount)).toEqual([18_400]);
  });

  it("a double click on accept creates one transfer", async () => {
    const orderId = await w.makeOrder(10_000);
    await w.pay(orderId);
    await w.deliver(orderId);
    await Promise.allSettled([w.app.orders.acceptDelivery(orderId, "client", w.owner.id), w.app.orders.acceptDelivery(orderId, "client", w.owner.id)]);
    expect(await w.orderState(orderId)).toBe("paid_out");
    const transfers = (w.fake.controls.snapshot().objects.transfer as { transfer_group: string }[]).filter((t) => t.transfer_group === `order_${orderId}`);
    expect(transfers).toHaveLength(1);
  });

  it("cancellation before the samples arrive refunds in full", async () => {
    const orderId = await w.makeOrder(15_000);
    await w.pay(orderId);
    await w.app.orders.cancelOrder(orderId, "client", w.owner.id, "Batch withdrawn");
    expect(await w.orderState(orderId)).toBe("cancelled");
    expect(await w.app.ledger.heldForOrder(w.db, orderId)).toBe(0);
    const refunds = (w.fake.controls.snapshot().objects.refund as { amount: number; metadata: { orderId: string } }[]).filter(
      (r) => r.metadata.orderId === orderId,
    );
    expect(refunds.map((r) => r.amount)).toEqual([15_000]);
  });

  it("cannot cancel once the samples are received", async () => {
    const orderId = await w.makeOrder();
    await w.pay(orderId);
    await w.deliver(orderId);
    await expect(w.app.orders.cancelOrder(orderId, "client", w.owner.id, "late")).rejects.toThrow(/cannot become "Cancelled"/);
    expect(await w.app.ledger.heldForOrder(w.db, orderId)).toBe(19_500);
  });

  it("refusal on arrival refunds the total minus the handling fee, which the lab receives", async () => {
    const orderId = await w.makeOrder(19_500);
    await w.pay(orderId);
    await w.db.transaction(async (tx) => w.app.orders.moveOrder(tx, await w.app.orders.lockOrder(tx, orderId), "samples_in_transit", "client", w.owner.id));
    await w.app.orders.refuseOnArrival(orderId, w.labManager.id, "The parcel held a liquid, not the declared powder.");
    expect(await w.orderState(orderId)).toBe("refused_on_arrival");
    const rows = await ledgerFor(orderId);
    expect(sum(rows, "funds_held")).toBe(0);
    const snapshot = w.fake.controls.snapshot();
    expect(
      (snapshot.objects.refund as { amount: number; metadata: { orderId: string } }[]).filter((r) => r.metadata.orderId === orderId).map((r) => r.amount),
    ).toEqual([19_500 - 2_500]);
    expect(
      (snapshot.objects.transfer as { amount: number; transfer_group: string }[]).filter((t) => t.transfer_group === `order_${orderId}`).map((t) => t.amount),
    ).toEqual([2_500]);
  });

  it("a dispute freezes the money until an admin splits it, with the decision recorded", async () => {
    const orderId = await w.makeOrder(30_000);
    await w.pay(orderId);
    await w.deliver(orderId, new Date(Date.now() - 30 * 86_400_000));
    await w.app.orders.openDispute(orderId, w.owner.id, "Two of the three scans are of the wrong sample.");
    // Frozen: the review window cannot accept it even though it lapsed long ago.
    await w.app.orders.acceptLapsedDeliveries();
    expect(await w.orderState(orderId)).toBe("disputed");
    await expect(w.app.orders.resolveDispute(orderId, { userId: w.admin.id }, 40_000, "Too much")).rejects.toThrow(/between €0\.00 and the €300\.00 held/);
    await w.app.orders.resolveDispute(orderId, { userId: w.admin.id }, 20_000, "Two thirds of the data unusable; refund two thirds.");
    expect(await w.orderState(orderId)).toBe("resolved");
    const rows = await ledgerFor(orderId);
    expect(sum(rows, "funds_held")).toBe(0);
    expect(sum(rows, "platform_fees")).toBe(-800); // 8 % of the 100.00 paid out
    const [dispute] = await w.db.select().from(w.schema.disputes).where(w.eq(w.schema.disputes.orderId, orderId));
    expect(dispute).toMatchObject({ state: "resolved", refundMinor: 20_000, payoutMinor: 9_200, decidedBy: w.admin.id });
    const audit = await w.db.select().from(w.schema.auditLog).where(w.eq(w.schema.auditLog.subjectId, orderId));
    expect(audit.map((a) => a.action)).toContain("dispute_resolved");
  });

  it("the review window accepts a delivery automatically once it lapses, and not before", async () => {
    const fresh = await w.makeOrder(11_000);
    await w.pay(fresh);
    await w.deliver(fresh, new Date(Date.now() - 6 * 86_400_000));
    const lapsed = await w.makeOrder(11_000);
    await w.pay(lapsed);
    await w.deliver(lapsed, new Date(Date.now() - 8 * 86_400_000));
    await w.app.orders.acceptLapsedDeliveries();
    expect(await w.orderState(fresh)).toBe("data_delivered");
    expect(await w.orderState(lapsed)).toBe("paid_out");
  });
});

describe("webhooks", () => {
  it("events pushed twice, late and out of order end in the same state and ledger as once", async () => {
    w.fake.controls.setDelivery({ mode: "hold" });
    const orderId = await w.makeOrder(14_000);
    const url = await w.app.checkout.startCheckout(orderId, { userId: w.owner.id, email: w.owner.email });
    w.fake.controls.pay(w.sessionIdOf(url), { number: "4242424242424242" });
    expect(await w.orderState(orderId)).toBe("awaiting_payment");
    // Out of order, then every event again.
    w.fake.controls.setDelivery({ mode: "twice" });
    await w.fake.controls.release("reversed");
    await w.fake.controls.settle(5000);
    w.fake.controls.setDelivery({ mode: "normal" });
    expect(await w.orderState(orderId)).toBe("funds_held");
    const rows = await ledgerFor(orderId);
    expect(rows).toHaveLength(2);
    expect(sum(rows, "funds_held")).toBe(-14_000);
    // The return page arriving after the webhooks changes nothing.
    await w.app.checkout.syncCheckout(w.sessionIdOf(url));
    expect(await ledgerFor(orderId)).toHaveLength(2);
  });

  it("a bad signature is answered 400 and changes nothing; a replay with another body too", async () => {
    const Stripe = (await import("stripe")).default;
    const orderId = await w.makeOrder(9_000);
    const url = await w.app.checkout.startCheckout(orderId, { userId: w.owner.id, email: w.owner.email });
    const session = { id: w.sessionIdOf(url), object: "checkout.session", metadata: { orderId } };
    const event = {
      id: "evt_forged_1",
      object: "event",
      type: "checkout.session.completed",
      data: { object: session },
      created: 1,
      api_version: "2025-01-01",
      livemode: false,
    };
    const payload = JSON.stringify(event);
    const post = (body: string, signature: string) =>
      w.app.webhook.action({
        request: new Request("http://127.0.0.1/api/webhooks/payments", { method: "POST", body, headers: { "stripe-signature": signature } }),
      } as never) as Promise<Response>;
    expect((await post(payload, "t=1,v1=deadbeef")).status).toBe(400);
    const wrongSecret = Stripe.webhooks.generateTestHeaderString({ payload, secret: "whsec_someone_else" });
    expect((await post(payload, wrongSecret)).status).toBe(400);
    const good = Stripe.webhooks.generateTestHeaderString({ payload, secret: "whsec_local_fake" });
    expect((await post(payload, good)).status).toBe(200);
    const tampered = JSON.stringify({ ...event, data: { object: { ...session, metadata: { orderId: "someone-else" } } } });
    expect((await post(tampered, Stripe.webhooks.generateTestHeaderString({ payload: tampered, secret: "whsec_local_fake" }))).status).toBe(400);
    expect(await w.orderState(orderId)).toBe("awaiting_payment");
    expect(await ledgerFor(orderId)).toEqual([]);
  });
});

describe("the ledger as a whole", () => {
  it("balances, and its totals equal the provider's own charges, refunds and transfers", async () => {
    const summary = await w.app.ledger.ledgerSummary();
    expect(summary.balanced).toBe(true);
    const totals = w.fake.controls.snapshot().totals;
    const eur = summary.byCurrency.EUR;
    expect(eur.refundedMinor).toBe(totals.refunded.eur ?? 0);
    expect(eur.paidOutMinor).toBe(totals.transferred.eur ?? 0);
    expect(eur.heldMinor + eur.paidOutMinor + eur.feesMinor + eur.refundedMinor).toBe(totals.charged.eur ?? 0);
  });
});

describe("provider faults", () => {
  it("a provider answering 500 gives the client a clear message and records nothing", async () => {
    const orderId = await w.makeOrder(8_000);
    w.fake.controls.setFaults({ mode: "error_500", count: 5, pathPrefix: "/v1/checkout" });
    await expect(w.app.checkout.startCheckout(orderId, { userId: w.owner.id, email: w.owner.email })).rejects.toThrow(
      /not answering right now. Nothing was charged/,
    );
    w.fake.controls.setFaults({ mode: "none" });
    expect(await w.db.select().from(w.schema.payments).where(w.eq(w.schema.payments.orderId, orderId))).toEqual([]);
    expect(await w.orderState(orderId)).toBe("awaiting_payment");
    // After the outage the same click works.
    expect((await w.pay(orderId)).synced.state).toBe("paid");
  });
});
