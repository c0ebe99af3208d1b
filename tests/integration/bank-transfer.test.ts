// Paying by bank transfer on the real PostgreSQL and the real payment SDK against the fake: paid in full, in part
// then in full, paid too much (the excess goes back), never arriving (the order lapses, nothing held), and
// webhooks delivered twice, shuffled and replayed. The provider's shapes follow the Stripe API reference
// (customer-balance PaymentIntents, cash balance transactions, refunds with `origin: customer_balance`).
import Stripe from "stripe";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { moneyWorld, type MoneyWorld } from "./money-fixtures";

let w: MoneyWorld;
let transfers: typeof import("~/models/payments/bank-transfer.server");

beforeAll(async () => {
  w = await moneyWorld();
  transfers = await import("~/models/payments/bank-transfer.server");
});
afterAll(async () => {
  await w?.close();
});

const DAY = 86_400_000;

async function ledgerFor(orderId: string) {
  return w.db
    .select({ kind: w.schema.ledgerTransactions.kind, account: w.schema.ledgerEntries.account, amount: w.schema.ledgerEntries.amountMinor })
    .from(w.schema.ledgerEntries)
    .innerJoin(w.schema.ledgerTransactions, w.eq(w.schema.ledgerTransactions.id, w.schema.ledgerEntries.transactionId))
    .where(w.eq(w.schema.ledgerTransactions.orderId, orderId));
}
const sum = (rows: { account: string; amount: number }[], account: string) => rows.filter((r) => r.account === account).reduce((s, r) => s + r.amount, 0);

async function start(amountMinor: number) {
  const orderId = await w.makeOrder(amountMinor);
  const payment = await transfers.startBankTransfer(orderId, { userId: w.owner.id });
  const view = (await transfers.transferViewOf(orderId))!;
  return { orderId, payment, view };
}

/** A transfer arriving at the provider with the given reference; the webhooks then reach the app. */
async function arrive(reference: string, amountMinor: number) {
  expect(w.fake.controls.receiveTransfer(reference, amountMinor)).not.toBeNull();
  await w.fake.controls.settle(5000);
}

const cashBalance = (customerId: string) => w.fake.state.getInternal<Record<string, number>>(`cash:${customerId}`)?.eur ?? 0;
/** The refunds out of the cash balance made for one order (the customer is the organisation's, shared by its orders). */
const cashRefunds = (customerId: string, orderId: string) =>
  w.fake.state
    .list("refund")
    .filter((r) => r.customer === customerId && r.origin === "customer_balance" && (r.metadata as Record<string, string>).orderId === orderId) as unknown as {
    amount: number;
  }[];

describe("instructions", () => {
  it("gives an IBAN, BIC, account holder and reference, and no provider id; a second start returns the same transfer", async () => {
    const { orderId, payment, view } = await start(19_500);
    // IBAN check digits: ISO 13616 mod-97 must leave 1 (the ISO 7064 MOD 97-10 check).
    const moved = `${view.iban.slice(4)}${view.iban.slice(0, 4)}`.replace(/[A-Z]/g, (c) => String(c.charCodeAt(0) - 55));
    expect(BigInt(moved) % 97n).toBe(1n);
    expect(view).toMatchObject({ status: "open", amountMinor: 19_500, remainingMinor: 19_500, receivedMinor: 0, currency: "EUR" });
    expect(view.bic).toMatch(/^[A-Z]{6}[A-Z0-9]{2}([A-Z0-9]{3})?$/); // BIC layout, ISO 9362
    expect(view.reference).toMatch(/^[A-Z0-9]{8,}$/);
    expect(view.accountHolderName).not.toBe("");
    expect(JSON.stringify(view)).not.toMatch(/\b(pi|cus|ch|re)_[A-Za-z0-9]/);
    const again = await transfers.startBankTransfer(orderId, { userId: w.owner.id });
    expect(again.id).toBe(payment.id);
    // The pay-by date: the quote's validity (tomorrow in the fixture) but at least TRANSFER_MIN_DAYS after the start.
    expect(new Date(view.payBy).getTime()).toBeGreaterThanOrEqual(payment.createdAt.getTime() + transfers.TRANSFER_MIN_DAYS * DAY - 1000);
  });

  it("refuses an order in another currency than euros in one sentence", async () => {
    const orderId = await w.makeOrder(10_000);
    await w.db.update(w.schema.orders).set({ currency: "USD" }).where(w.eq(w.schema.orders.id, orderId));
    await expect(transfers.startBankTransfer(orderId, { userId: w.owner.id })).rejects.toThrow(/euros/);
  });
});

describe("paying by bank transfer", () => {
  it("full: the order moves to funds held and the ledger posts the amount as held", async () => {
    const { orderId, payment, view } = await start(19_500);
    await arrive(view.reference, 19_500);
    expect(await w.orderState(orderId)).toBe("funds_held");
    const rows = await ledgerFor(orderId);
    expect(sum(rows, "platform_cash")).toBe(19_500);
    expect(sum(rows, "funds_held")).toBe(-19_500);
    const after = (await transfers.transferViewOf(orderId))!;
    expect(after).toMatchObject({ status: "paid", receivedMinor: 19_500, remainingMinor: 0, returnedMinor: 0 });
    expect(cashBalance(payment.customerId!)).toBe(0);
  });

  it("partial then full: the part is shown as received and nothing is held until the rest arrives", async () => {
    const { orderId, view } = await start(20_000);
    await arrive(view.reference, 7_500);
    expect(await w.orderState(orderId)).toBe("awaiting_payment");
    expect(await transfers.transferViewOf(orderId)).toMatchObject({ status: "open", receivedMinor: 7_500, remainingMinor: 12_500 });
    expect(await ledgerFor(orderId)).toEqual([]);
    await arrive(view.reference, 12_500);
    expect(await w.orderState(orderId)).toBe("funds_held");
    expect(await w.app.ledger.heldForOrder(w.db, orderId)).toBe(20_000);
    expect(await transfers.transferViewOf(orderId)).toMatchObject({ status: "paid", receivedMinor: 20_000, remainingMinor: 0 });
  });

  it("over: the order is held at its total and the excess goes back to the sender from the cash balance", async () => {
    const { orderId, payment, view } = await start(19_500);
    await arrive(view.reference, 25_000);
    await w.fake.controls.settle(5000);
    expect(await w.orderState(orderId)).toBe("funds_held");
    expect(await w.app.ledger.heldForOrder(w.db, orderId)).toBe(19_500);
    expect(cashRefunds(payment.customerId!, orderId).map((r) => r.amount)).toEqual([5_500]);
    expect(cashBalance(payment.customerId!)).toBe(0);
    expect(await transfers.transferViewOf(orderId)).toMatchObject({ status: "paid", returnedMinor: 5_500 });
    const notes = await w.db.select().from(w.schema.orderEvents).where(w.eq(w.schema.orderEvents.orderId, orderId));
    expect(notes.map((n) => n.note).join(" ")).toMatch(/€55\.00 sent back to the sender's bank account: more than the order total arrived/);
  });

  it("cancelled with a held transfer: the refund goes back to the sender's bank account, not the cash balance", async () => {
    const { orderId, payment, view } = await start(12_000);
    await arrive(view.reference, 12_000);
    await w.app.orders.cancelOrder(orderId, "client", w.owner.id, "Changed our minds.");
    await w.fake.controls.settle(5000);
    expect(await w.app.ledger.heldForOrder(w.db, orderId)).toBe(0);
    expect(cashBalance(payment.customerId!)).toBe(0);
    expect(cashRefunds(payment.customerId!, orderId).map((r) => r.amount)).toEqual([12_000]);
  });
});

describe("card and transfer on one order", () => {
  it("paid by card while a transfer was open: the transfer that still arrives goes back in full, held once", async () => {
    const { orderId, payment, view } = await start(16_000);
    await w.pay(orderId);
    expect(await w.orderState(orderId)).toBe("funds_held");
    await arrive(view.reference, 16_000);
    await w.fake.controls.settle(5000);
    expect(await w.app.ledger.heldForOrder(w.db, orderId)).toBe(16_000);
    expect(cashRefunds(payment.customerId!, orderId).reduce((s, r) => s + r.amount, 0)).toBe(16_000);
    expect(cashBalance(payment.customerId!)).toBe(0);
    // The hourly sweep finds nothing left open for this order.
    await transfers.sweepBankTransfers();
    expect(await transfers.transferViewOf(orderId)).toMatchObject({ status: "expired", returnedMinor: 16_000 });
  });
});

describe("never arriving", () => {
  it("reminds before the pay-by date, then the order lapses: the part payment goes back and nothing is held", async () => {
    const { orderId, payment, view } = await start(30_000);
    await arrive(view.reference, 4_000);
    const payBy = new Date(view.payBy).getTime();
    // Before the reminder window: nothing happens.
    expect(await transfers.sweepBankTransfers(new Date(payBy - (transfers.TRANSFER_REMIND_DAYS + 1) * DAY))).toMatchObject({ reminded: 0, lapsed: 0 });
    const reminders = async () =>
      (await w.db.select().from(w.schema.notifications).where(w.eq(w.schema.notifications.orderId, orderId))).filter((n) => n.kind === "transfer_reminder");
    expect((await transfers.sweepBankTransfers(new Date(payBy - DAY))).reminded).toBeGreaterThanOrEqual(1);
    const first = (await reminders()).length;
    expect(first).toBeGreaterThanOrEqual(1); // one notice per person of the client who hears of money matters
    expect((await transfers.sweepBankTransfers(new Date(payBy - DAY))).reminded).toBe(0); // once only
    expect(await reminders()).toHaveLength(first);
    const mails = await w.db.select().from(w.schema.outboxMessages).where(w.eq(w.schema.outboxMessages.orderId, orderId));
    const reminder = mails.find((m) => m.kind === "transfer_reminder")!;
    expect(reminder.text).toContain(view.reference);
    expect(reminder.text).toContain("€260.00"); // still to transfer: 300.00 − 40.00
    expect(reminder.text).not.toMatch(/\b(pi|cus)_[A-Za-z0-9]/);

    const lapsed = await transfers.sweepBankTransfers(new Date(payBy + 1000));
    expect(lapsed.lapsed).toBeGreaterThanOrEqual(1);
    await w.fake.controls.settle(5000);
    expect(await w.orderState(orderId)).toBe("cancelled");
    const intent = w.fake.state.get(payment.paymentIntentId!, "payment_intent")!;
    expect(intent.status).toBe("canceled");
    expect(cashRefunds(payment.customerId!, orderId).map((r) => r.amount)).toContain(4_000);
    expect(cashBalance(payment.customerId!)).toBe(0);
    expect(await w.app.ledger.heldForOrder(w.db, orderId)).toBe(0);
    expect(await ledgerFor(orderId)).toEqual([]);
    const summary = await w.app.ledger.ledgerSummary();
    expect(summary.balanced).toBe(true);
    expect(await transfers.transferViewOf(orderId)).toMatchObject({ status: "expired", returnedMinor: 4_000 });
    // A transfer that arrives after the lapse goes straight back.
    await arrive(view.reference, 30_000);
    await w.fake.controls.settle(5000);
    expect(cashBalance(payment.customerId!)).toBe(0);
    expect(await w.orderState(orderId)).toBe("cancelled");
    expect(await transfers.transferViewOf(orderId)).toMatchObject({ returnedMinor: 34_000 });
  });
});

describe("webhooks", () => {
  it("twice, shuffled and replayed: one posting, one excess refund", async () => {
    const { orderId, payment, view } = await start(15_000);
    w.fake.controls.setDelivery({ mode: "hold" });
    w.fake.controls.receiveTransfer(view.reference, 6_000);
    w.fake.controls.receiveTransfer(view.reference, 10_000);
    w.fake.controls.setDelivery({ mode: "twice" });
    await w.fake.controls.release("shuffled", 7);
    await w.fake.controls.settle(5000);
    w.fake.controls.setDelivery({ mode: "normal" });
    // Every event of the fake delivered once more, signed as the provider signs it.
    const events = w.fake.state.list("event");
    for (const event of events) {
      const payload = JSON.stringify(event);
      const signature = Stripe.webhooks.generateTestHeaderString({ payload, secret: "whsec_local_fake" });
      const answer = (await w.app.webhook.action({
        request: new Request("http://127.0.0.1/api/webhooks/payments", { method: "POST", body: payload, headers: { "stripe-signature": signature } }),
      } as never)) as Response;
      expect(answer.status).toBe(200);
    }
    await w.fake.controls.settle(5000);
    expect(await w.orderState(orderId)).toBe("funds_held");
    const rows = await ledgerFor(orderId);
    expect(rows.filter((r) => r.kind === "payment_held")).toHaveLength(2); // one transaction, two entries
    expect(await w.app.ledger.heldForOrder(w.db, orderId)).toBe(15_000);
    expect(cashRefunds(payment.customerId!, orderId).map((r) => r.amount)).toEqual([1_000]);
    expect(await transfers.transferViewOf(orderId)).toMatchObject({ status: "paid", returnedMinor: 1_000 });
  });
});

describe("demo", () => {
  it("seeds one order paid by transfer (held, posted) and one partly paid, and seeds nothing more a second time", async () => {
    const demo = await import("~/demo/seed-transfer.server");
    await demo.seedDemoTransfers();
    await demo.seedDemoTransfers();
    const ids = await demo.transferDemoIds();
    expect(await w.orderState(ids.paid)).toBe("funds_held");
    expect(await w.app.ledger.heldForOrder(w.db, ids.paid)).toBe(demo.TRANSFER_DEMO.paid.amountMinor);
    expect(await w.orderState(ids.partial)).toBe("awaiting_payment");
    expect(await transfers.transferViewOf(ids.partial)).toMatchObject({ status: "open", receivedMinor: 10_000, remainingMinor: 18_000 });
    const payments = await w.db.select().from(w.schema.payments).where(w.eq(w.schema.payments.orderId, ids.partial));
    expect(payments).toHaveLength(1);
  });
});

describe("the client's order page", () => {
  it("chooses bank transfer, then shows the bank details, the part received and the pay-by date without provider ids", async () => {
    const { callRoute, formRequest, getRequest, sessionCookieFor } = await import("./route-call");
    const route = await import("~/routes/client/order");
    const orderId = await w.makeOrder(21_000);
    const cookie = await sessionCookieFor(w.owner.email);
    const path = `/client/orders/${orderId}`;
    const chosen = await callRoute(route.action, formRequest(path, { intent: "transfer" }, cookie), { id: orderId });
    expect(chosen.status).toBe(302);
    const view = (await transfers.transferViewOf(orderId))!;
    await arrive(view.reference, 6_000);
    const page = await callRoute(route.loader, getRequest(path, cookie), { id: orderId });
    const data = page.body as { transfer: Record<string, unknown>; transferOffered: boolean };
    expect(data.transferOffered).toBe(true);
    expect(data.transfer).toMatchObject({ status: "open", receivedMinor: 6_000, remainingMinor: 15_000, reference: view.reference });
    expect(JSON.stringify(data.transfer)).not.toMatch(/\b(pi|cus|ch|re|ccsbtxn)_[A-Za-z0-9]/);
    // Cancelling by the client closes the transfer and sends the part back.
    const cancelled = await callRoute(route.action, formRequest(path, { intent: "cancel", reason: "No longer needed." }, cookie), { id: orderId });
    expect(cancelled.status).toBe(302);
    await w.fake.controls.settle(5000);
    expect(await w.orderState(orderId)).toBe("cancelled");
    expect(await transfers.transferViewOf(orderId)).toMatchObject({ status: "expired", returnedMinor: 6_000 });
  });
});
