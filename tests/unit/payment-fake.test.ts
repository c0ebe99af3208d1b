// The payment-provider fake driven by the real SDK, the hosted pages over fetch, and a local receiver
// that verifies every webhook signature with the SDK's constructEvent.
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import http from "node:http";
import type { AddressInfo } from "node:net";
import { afterAll, beforeAll, beforeEach, describe, expect, it } from "vitest";
import Stripe from "stripe";
import { type PaymentFake, startPaymentFake } from "../../services/payment-fake/index";

const SECRET = "whsec_unit_test";
const verifier = new Stripe("sk_test_local_fake");

interface Received {
  event: Stripe.Event;
  verified: boolean;
}
let received: Received[] = [];
let failNext = 0;
let receiver: http.Server;
let receiverUrl: string;
let fake: PaymentFake;
let stripe: Stripe;

function client(extra: Partial<Stripe.StripeConfig> = {}) {
  return new Stripe("sk_test_local_fake", { host: "127.0.0.1", port: fake.port, protocol: "http", maxNetworkRetries: 0, ...extra });
}

beforeAll(async () => {
  receiver = http.createServer((req, res) => {
    const chunks: Buffer[] = [];
    req.on("data", (c) => chunks.push(c));
    req.on("end", () => {
      if (failNext > 0) {
        failNext -= 1;
        res.writeHead(500).end("not now");
        return;
      }
      const body = Buffer.concat(chunks).toString("utf8");
      let verified = true;
      let event: Stripe.Event;
      try {
        event = verifier.webhooks.constructEvent(body, String(req.headers["stripe-signature"]), SECRET);
      } catch {
        verified = false;
        event = JSON.parse(body);
      }
      received.push({ event, verified });
      res.writeHead(verified ? 200 : 400).end();
    });
  });
  await new Promise<void>((r) => receiver.listen(0, "127.0.0.1", () => r()));
  receiverUrl = `http://127.0.0.1:${(receiver.address() as AddressInfo).port}/hooks`;
  fake = await startPaymentFake({ port: 0, webhookUrls: [receiverUrl], webhookSecret: SECRET, retryDelaysMs: [30, 60] });
  stripe = client();
});

afterAll(async () => {
  await fake?.close();
  await new Promise<void>((r) => receiver.close(() => r()));
});

beforeEach(() => {
  fake.controls.reset();
  received = [];
  failNext = 0;
});

async function control(pathname: string, body?: unknown, method = "POST") {
  const res = await fetch(`${fake.url}/_fake/${pathname}`, {
    method,
    headers: { "content-type": "application/json" },
    body: body === undefined ? undefined : JSON.stringify(body),
  });
  return res.json();
}

function newSession(amount = 12_500, extra: Partial<Stripe.Checkout.SessionCreateParams> = {}) {
  return stripe.checkout.sessions.create({
    mode: "payment",
    line_items: [{ quantity: 1, price_data: { currency: "eur", unit_amount: amount, product_data: { name: "XRD measurement" } } }],
    success_url: "http://127.0.0.1:3000/orders/o1/paid?session={CHECKOUT_SESSION_ID}",
    cancel_url: "http://127.0.0.1:3000/orders/o1",
    customer_email: "client@example.test",
    client_reference_id: "order_o1",
    metadata: { orderId: "o1" },
    payment_intent_data: { metadata: { orderId: "o1" }, transfer_group: "order_o1" },
    ...extra,
  });
}

function submitCard(sessionId: string, card: string) {
  return fetch(`${fake.url}/pay/${sessionId}`, {
    method: "POST",
    redirect: "manual",
    headers: { "content-type": "application/x-www-form-urlencoded" },
    body: new URLSearchParams({ card, exp: "12/34", cvc: "123", name: "A. Client" }),
  });
}

async function paidSession(amount = 12_500) {
  const s = await newSession(amount);
  const r = await control(`pay/${s.id}`, { card: "4242424242424242" });
  expect(r.outcome).toBe("succeeded");
  return { session: s, pi: r.payment_intent as Stripe.PaymentIntent, charge: r.charge as Stripe.Charge };
}

const types = () => received.map((r) => r.event.type);

describe("checkout through the hosted card page", () => {
  it("charges the success card once, completes the session and sends verified events", async () => {
    const s = await newSession();
    expect(s.url).toBe(`${fake.url}/pay/${s.id}`);
    expect(s.status).toBe("open");
    const pi0 = await stripe.paymentIntents.retrieve(String(s.payment_intent));
    expect(pi0.status).toBe("requires_payment_method");
    expect(pi0.metadata).toEqual({ orderId: "o1" });

    const page = await (await fetch(s.url!)).text();
    expect(page).toContain("Local test");
    for (const id of ["card", "exp", "cvc", "name"]) expect(page).toContain(`<label for="${id}">`);

    const res = await submitCard(s.id, "4242 4242 4242 4242");
    expect(res.status).toBe(303);
    expect(res.headers.get("location")).toBe(`http://127.0.0.1:3000/orders/o1/paid?session=${s.id}`);

    const again = await submitCard(s.id, "4242 4242 4242 4242");
    expect(again.status).toBe(200);
    expect(await again.text()).toContain("already complete");

    const done = await stripe.checkout.sessions.retrieve(s.id, { expand: ["payment_intent"] });
    expect(done.status).toBe("complete");
    expect(done.payment_status).toBe("paid");
    const pi = done.payment_intent as Stripe.PaymentIntent;
    expect(pi.status).toBe("succeeded");
    expect(pi.amount_received).toBe(12_500);
    const charge = await stripe.charges.retrieve(String(pi.latest_charge));
    expect(charge).toMatchObject({ paid: true, captured: true, amount: 12_500, amount_refunded: 0, payment_intent: pi.id, transfer_group: "order_o1" });
    expect(charge.balance_transaction).toMatch(/^txn_/);
    expect(fake.controls.snapshot().objects.charge).toHaveLength(1);

    await fake.controls.settle();
    expect(received.every((r) => r.verified)).toBe(true);
    expect(types()).toEqual(["charge.succeeded", "payment_intent.succeeded", "checkout.session.completed"]);
    const completed = received[2].event;
    expect(completed).toMatchObject({ object: "event", livemode: false, api_version: Stripe.API_VERSION });
    expect((completed.data.object as Stripe.Checkout.Session).client_reference_id).toBe("order_o1");
    expect((await stripe.events.retrieve(completed.id)).type).toBe("checkout.session.completed");
    expect((await stripe.events.list({ type: "charge.succeeded" })).data).toHaveLength(1);
  });

  it("declines the generic-decline and insufficient-funds cards without a charge, and the session stays payable", async () => {
    const s = await newSession();
    const page = await submitCard(s.id, "4000 0000 0000 0002");
    expect(await page.text()).toContain("Your card was declined.");
    let pi = await stripe.paymentIntents.retrieve(String(s.payment_intent));
    expect(pi.status).toBe("requires_payment_method");
    expect(pi.last_payment_error).toMatchObject({
      type: "card_error",
      code: "card_declined",
      decline_code: "generic_decline",
      message: "Your card was declined.",
    });

    const r = await control(`pay/${s.id}`, { card: "4000000000009995" });
    expect(r.outcome).toBe("declined");
    expect(r.error).toMatchObject({ code: "card_declined", decline_code: "insufficient_funds", message: "Your card has insufficient funds." });
    pi = await stripe.paymentIntents.retrieve(String(s.payment_intent));
    expect(pi.last_payment_error?.decline_code).toBe("insufficient_funds");

    const wrong = await control(`pay/${s.id}`, { card: "1234123412341234" });
    expect(wrong.error).toMatchObject({ code: "incorrect_number", message: "Your card number is incorrect." });

    expect(fake.controls.snapshot().objects.charge).toBeUndefined();
    expect((await stripe.checkout.sessions.retrieve(s.id)).status).toBe("open");
    await fake.controls.settle();
    expect(types()).toEqual(["payment_intent.payment_failed", "payment_intent.payment_failed", "payment_intent.payment_failed"]);

    expect((await control(`pay/${s.id}`, { card: "4242424242424242" })).outcome).toBe("succeeded");
    expect((await stripe.paymentIntents.retrieve(String(s.payment_intent))).last_payment_error).toBeNull();
  });

  it("charges once when the card form is submitted twice at the same time", async () => {
    const s = await newSession();
    const [a, b] = await Promise.all([submitCard(s.id, "4242424242424242"), submitCard(s.id, "4242424242424242")]);
    expect([a.status, b.status].sort()).toEqual([200, 303]);
    expect(fake.controls.snapshot().objects.charge).toHaveLength(1);
  });

  it("expires an open session and cancels its payment intent", async () => {
    const s = await newSession();
    const expired = await stripe.checkout.sessions.expire(s.id);
    expect(expired.status).toBe("expired");
    expect((await stripe.paymentIntents.retrieve(String(s.payment_intent))).status).toBe("canceled");
    expect(await (await fetch(`${fake.url}/pay/${s.id}`)).text()).toContain("expired");
    await expect(stripe.checkout.sessions.expire(s.id)).rejects.toBeInstanceOf(Stripe.errors.StripeInvalidRequestError);
    await fake.controls.settle();
    expect(types()).toContain("checkout.session.expired");
  });
});

describe("refunds", () => {
  it("refunds partly, then the rest, and refuses more than was charged", async () => {
    const { pi, charge } = await paidSession(10_000);
    const part = await stripe.refunds.create({ payment_intent: pi.id, amount: 3_000, reason: "requested_by_customer", metadata: { orderId: "o1" } });
    expect(part).toMatchObject({ object: "refund", amount: 3_000, charge: charge.id, payment_intent: pi.id, status: "succeeded" });
    expect((await stripe.charges.retrieve(charge.id)).amount_refunded).toBe(3_000);

    const over = stripe.refunds.create({ charge: charge.id, amount: 7_001 });
    await expect(over).rejects.toBeInstanceOf(Stripe.errors.StripeInvalidRequestError);
    await expect(over).rejects.toMatchObject({
      type: "StripeInvalidRequestError",
      param: "amount",
      message: expect.stringContaining("greater than unrefunded amount"),
    });

    const rest = await stripe.refunds.create({ payment_intent: pi.id });
    expect(rest.amount).toBe(7_000);
    const after = await stripe.charges.retrieve(charge.id);
    expect(after).toMatchObject({ amount_refunded: 10_000, refunded: true });
    await expect(stripe.refunds.create({ payment_intent: pi.id, amount: 1 })).rejects.toMatchObject({ code: "charge_already_refunded" });
    expect((await stripe.refunds.retrieve(part.id)).id).toBe(part.id);
    expect((await stripe.balance.retrieve()).available).toEqual([expect.objectContaining({ currency: "eur", amount: 0 })]);

    await fake.controls.settle();
    expect(types().filter((t) => t === "charge.refunded" || t === "refund.created")).toEqual([
      "refund.created",
      "charge.refunded",
      "refund.created",
      "charge.refunded",
    ]);
  });
});

describe("bank transfers through the customer's cash balance", () => {
  // Shapes from the Stripe API reference: PaymentIntent `next_action.display_bank_transfer_instructions`, the
  // "Fund a test mode cash balance" helper, cash balance transactions, and refunds with `origin: customer_balance`.
  async function transferIntent(amount = 10_000) {
    const customer = await stripe.customers.create({ name: "Example Client GmbH", metadata: { organisationId: "org1" } });
    const pi = await stripe.paymentIntents.create({
      amount,
      currency: "eur",
      customer: customer.id,
      allowed_payment_method_types: ["customer_balance"],
      payment_method_data: { type: "customer_balance" },
      payment_method_options: {
        customer_balance: { funding_type: "bank_transfer", bank_transfer: { type: "eu_bank_transfer", eu_bank_transfer: { country: "DE" } } },
      },
      confirm: true,
      metadata: { orderId: "o1" },
    });
    return { customer, pi, shown: pi.next_action!.display_bank_transfer_instructions! };
  }

  it("confirms into requires_action with an IBAN, BIC, holder, reference and the amount remaining", async () => {
    const { pi, shown } = await transferIntent(10_000);
    expect(pi.status).toBe("requires_action");
    expect(pi.next_action?.type).toBe("display_bank_transfer_instructions");
    expect(shown).toMatchObject({ amount_remaining: 10_000, currency: "eur", type: "eu_bank_transfer" });
    const iban = shown.financial_addresses![0].iban!;
    expect(iban.country).toBe("DE");
    // ISO 13616: moving the first four characters to the end and reading letters as 10–35 leaves 1 mod 97.
    const numeric = `${iban.iban!.slice(4)}${iban.iban!.slice(0, 4)}`.replace(/[A-Z]/g, (c) => String(c.charCodeAt(0) - 55));
    expect(BigInt(numeric) % 97n).toBe(1n);
    expect(iban.bic).toMatch(/^[A-Z]{6}[A-Z0-9]{2}([A-Z0-9]{3})?$/); // ISO 9362
    expect(iban.account_holder_name).toBeTruthy();
    expect(shown.reference).toMatch(/^[A-Z0-9]{12}$/);
    const page = await fetch(shown.hosted_instructions_url!);
    expect(page.status).toBe(200);
    expect(await page.text()).toContain(shown.reference!);
  });

  it("refuses a bank transfer in another currency or without a funding type, in one sentence", async () => {
    const customer = await stripe.customers.create({ name: "X" });
    const base = {
      amount: 1_000,
      customer: customer.id,
      allowed_payment_method_types: ["customer_balance"],
      payment_method_data: { type: "customer_balance" as const },
      confirm: true,
    };
    await expect(
      stripe.paymentIntents.create({
        ...base,
        currency: "usd",
        payment_method_options: {
          customer_balance: { funding_type: "bank_transfer", bank_transfer: { type: "eu_bank_transfer", eu_bank_transfer: { country: "DE" } } },
        },
      }),
    ).rejects.toMatchObject({ param: "currency" });
    await expect(stripe.paymentIntents.create({ ...base, currency: "eur" })).rejects.toMatchObject({ type: "StripeInvalidRequestError" });
  });

  it("partial funding lowers amount_remaining; the rest completes it with a charge; more stays in the cash balance", async () => {
    const { customer, pi, shown } = await transferIntent(10_000);
    const first = await stripe.testHelpers.customers.fundCashBalance(customer.id, { amount: 4_000, currency: "eur", reference: shown.reference! });
    expect(first).toMatchObject({ object: "customer_cash_balance_transaction", type: "funded", net_amount: 4_000, customer: customer.id });
    expect(first.funded?.bank_transfer.reference).toBe(shown.reference);
    const part = await stripe.paymentIntents.retrieve(pi.id);
    expect(part.status).toBe("requires_action");
    expect(part.next_action?.display_bank_transfer_instructions?.amount_remaining).toBe(6_000);
    await stripe.testHelpers.customers.fundCashBalance(customer.id, { amount: 9_000, currency: "eur", reference: shown.reference! });
    const done = await stripe.paymentIntents.retrieve(pi.id, { expand: ["latest_charge"] });
    expect(done).toMatchObject({ status: "succeeded", amount_received: 10_000, next_action: null });
    expect((done.latest_charge as Stripe.Charge).payment_method_details?.type).toBe("customer_balance");
    expect((await stripe.customers.retrieveCashBalance(customer.id)).available).toEqual({ eur: 3_000 });
    const txns = await stripe.customers.listCashBalanceTransactions(customer.id);
    expect(txns.data.map((t) => t.type)).toEqual(["applied_to_payment", "funded", "applied_to_payment", "funded"]);
    expect(await stripe.customers.retrieveCashBalanceTransaction(customer.id, first.id)).toMatchObject({ id: first.id });

    const back = await stripe.refunds.create({ customer: customer.id, origin: "customer_balance", amount: 3_000, currency: "eur" });
    expect(back).toMatchObject({ object: "refund", amount: 3_000, status: "succeeded" });
    expect((await stripe.customers.retrieveCashBalance(customer.id)).available).toEqual({ eur: 0 });
    await expect(stripe.refunds.create({ customer: customer.id, origin: "customer_balance", amount: 1, currency: "eur" })).rejects.toMatchObject({
      code: "amount_too_large",
    });

    await fake.controls.settle();
    expect(received.every((r) => r.verified)).toBe(true);
    const t = types();
    expect(t).toContain("payment_intent.partially_funded");
    expect(t).toContain("payment_intent.succeeded");
    expect(t.filter((x) => x === "customer_cash_balance_transaction.created").length).toBe(5);
  });

  it("cancelling returns what was applied to the cash balance; a paid intent cannot be cancelled", async () => {
    const { customer, pi, shown } = await transferIntent(10_000);
    const r = await control("transfers", { reference: shown.reference, amount: 2_500 });
    expect(r).toMatchObject({ type: "funded", net_amount: 2_500 });
    const cancelled = await stripe.paymentIntents.cancel(pi.id);
    expect(cancelled.status).toBe("canceled");
    expect((await stripe.customers.retrieveCashBalance(customer.id)).available).toEqual({ eur: 2_500 });
    const paid = await transferIntent(1_000);
    await control("transfers", { reference: paid.shown.reference, amount: 1_000 });
    await expect(stripe.paymentIntents.cancel(paid.pi.id)).rejects.toMatchObject({ code: "payment_intent_unexpected_state" });
    // A refund of a bank-transfer payment goes back into the cash balance.
    await stripe.refunds.create({ payment_intent: paid.pi.id });
    expect((await stripe.customers.retrieveCashBalance(paid.customer.id)).available).toEqual({ eur: 1_000 });
    expect(await control("transfers", { reference: "NO-SUCH-REF", amount: 100 })).toMatchObject({ error: expect.anything() });
  });

  it("the instructions page receives a transfer through its form", async () => {
    const { pi, shown } = await transferIntent(5_000);
    const res = await fetch(shown.hosted_instructions_url!, {
      method: "POST",
      redirect: "manual",
      headers: { "content-type": "application/x-www-form-urlencoded" },
      body: new URLSearchParams({ amount: "50.00", reference: shown.reference! }),
    });
    expect(res.status).toBe(303);
    expect((await stripe.paymentIntents.retrieve(pi.id)).status).toBe("succeeded");
  });
});

describe("Connect accounts and transfers", () => {
  it("onboards through the account link and transfers only when onboarded and funded", async () => {
    const account = await stripe.accounts.create({
      type: "express",
      country: "DE",
      email: "lab@example.test",
      capabilities: { transfers: { requested: true } },
      metadata: { labId: "l1" },
    });
    expect(account).toMatchObject({ charges_enabled: false, payouts_enabled: false, details_submitted: false });

    await expect(stripe.transfers.create({ amount: 100, currency: "eur", destination: account.id })).rejects.toMatchObject({
      code: "insufficient_capabilities_for_transfer",
    });

    const link = await stripe.accountLinks.create({
      account: account.id,
      type: "account_onboarding",
      refresh_url: "http://127.0.0.1:3000/lab/payouts/refresh",
      return_url: "http://127.0.0.1:3000/lab/payouts/done",
    });
    expect(link.object).toBe("account_link");
    expect(link.url).toMatch(new RegExp(`^${fake.url}/connect/onboard/`));
    const page = await (await fetch(link.url)).text();
    expect(page).toContain("Local test onboarding");
    const done = await fetch(link.url, {
      method: "POST",
      redirect: "manual",
      headers: { "content-type": "application/x-www-form-urlencoded" },
      body: "action=complete",
    });
    expect(done.status).toBe(303);
    expect(done.headers.get("location")).toBe("http://127.0.0.1:3000/lab/payouts/done");
    const used = await fetch(link.url, { redirect: "manual" });
    expect(used.headers.get("location")).toBe("http://127.0.0.1:3000/lab/payouts/refresh");

    const onboarded = await stripe.accounts.retrieve(account.id);
    expect(onboarded).toMatchObject({ charges_enabled: true, payouts_enabled: true, details_submitted: true });
    await fake.controls.settle();
    const updated = received.find((r) => r.event.type === "account.updated")!;
    expect(updated.event.account).toBe(account.id);

    await expect(stripe.transfers.create({ amount: 100, currency: "eur", destination: account.id })).rejects.toMatchObject({ code: "balance_insufficient" });

    const { charge } = await paidSession(10_000);
    const tr = await stripe.transfers.create({
      amount: 9_200,
      currency: "eur",
      destination: account.id,
      source_transaction: charge.id,
      transfer_group: "order_o1",
      metadata: { orderId: "o1" },
    });
    expect(tr).toMatchObject({ object: "transfer", amount: 9_200, destination: account.id, transfer_group: "order_o1" });
    expect((await stripe.transfers.retrieve(tr.id)).amount).toBe(9_200);
    expect((await stripe.transfers.list({ transfer_group: "order_o1" })).data.map((t) => t.id)).toEqual([tr.id]);
    expect((await stripe.transfers.list({ transfer_group: "other" })).data).toEqual([]);
    expect((await stripe.balance.retrieve()).available[0]).toMatchObject({ currency: "eur", amount: 800 });
    expect((await stripe.balance.retrieve({}, { stripeAccount: account.id })).available[0].amount).toBe(9_200);
    await expect(stripe.transfers.create({ amount: 801, currency: "eur", destination: account.id })).rejects.toMatchObject({ code: "balance_insufficient" });

    const snap = fake.controls.snapshot();
    expect(snap.totals).toEqual({ charged: { eur: 10_000 }, refunded: {}, transferred: { eur: 9_200 } });
    await fake.controls.settle();
    expect(types()).toContain("transfer.created");
  });
});

describe("idempotency", () => {
  it("replays the same key and body, refuses another body, and scopes keys per account", async () => {
    const first = await stripe.customers.create({ email: "a@example.test" }, { idempotencyKey: "k1" });
    const replay = await stripe.customers.create({ email: "a@example.test" }, { idempotencyKey: "k1" });
    expect(replay.id).toBe(first.id);
    expect(replay.lastResponse.headers["idempotent-replayed"]).toBe("true");
    await expect(stripe.customers.create({ email: "b@example.test" }, { idempotencyKey: "k1" })).rejects.toBeInstanceOf(Stripe.errors.StripeIdempotencyError);

    const account = await stripe.accounts.create({ type: "express" });
    const scoped = await stripe.customers.create({ email: "b@example.test" }, { idempotencyKey: "k1", stripeAccount: account.id });
    expect(scoped.id).not.toBe(first.id);

    const s1 = await newSession(5_000, {});
    const sessionReplay = await stripe.checkout.sessions.create(
      {
        mode: "payment",
        success_url: "http://x.test/ok",
        line_items: [{ quantity: 2, price_data: { currency: "eur", unit_amount: 100, product_data: { name: "a" } } }],
      },
      { idempotencyKey: "k2" },
    );
    const sessionAgain = await stripe.checkout.sessions.create(
      {
        mode: "payment",
        success_url: "http://x.test/ok",
        line_items: [{ quantity: 2, price_data: { currency: "eur", unit_amount: 100, product_data: { name: "a" } } }],
      },
      { idempotencyKey: "k2" },
    );
    expect(sessionAgain.id).toBe(sessionReplay.id);
    expect(sessionAgain.payment_intent).toBe(sessionReplay.payment_intent);
    expect(s1.amount_total).toBe(5_000);
    expect(fake.controls.snapshot().objects.payment_intent).toHaveLength(2);
  });
});

describe("webhook delivery controls", () => {
  it("delivers every event twice in mode twice", async () => {
    await control("delivery", { mode: "twice" });
    await paidSession();
    await fake.controls.settle();
    expect(received).toHaveLength(6);
    const counts = new Map<string, number>();
    for (const r of received) counts.set(r.event.id, (counts.get(r.event.id) ?? 0) + 1);
    expect([...counts.values()]).toEqual([2, 2, 2]);
  });

  it("holds events and releases them reversed", async () => {
    await control("delivery", { mode: "hold" });
    const { pi } = await paidSession();
    await stripe.refunds.create({ payment_intent: pi.id, amount: 500 });
    await new Promise((r) => setTimeout(r, 50));
    expect(received).toHaveLength(0);
    const held = (await control("events", undefined, "GET")).events;
    expect(held.every((e: { deliveries: { status: string }[] }) => e.deliveries[0].status === "held")).toBe(true);
    const r = await control("release", { order: "reversed" });
    expect(r.released).toBe(5);
    expect(types()).toEqual(["charge.refunded", "refund.created", "checkout.session.completed", "payment_intent.succeeded", "charge.succeeded"]);
  });

  it("releases held events in a shuffled order that depends only on the seed", async () => {
    const orderFor = async (seed: number) => {
      fake.controls.reset();
      received = [];
      fake.controls.setDelivery({ mode: "hold" });
      const accounts = await Promise.all([1, 2, 3, 4, 5].map(() => stripe.accounts.create({ type: "express" })));
      for (const a of accounts) fake.controls.completeOnboarding(a.id);
      const created = accounts.map((a) => a.id);
      await control("release", { order: "shuffled", seed });
      return { created, delivered: received.map((r) => (r.event.data.object as { id: string }).id) };
    };
    const one = await orderFor(7);
    expect([...one.delivered].sort()).toEqual([...one.created].sort());
    const positions = (o: { created: string[]; delivered: string[] }) => o.delivered.map((id) => o.created.indexOf(id));
    expect(positions(await orderFor(7))).toEqual(positions(one));
  });

  it("delivers late, and retries a failed delivery", async () => {
    await control("delivery", { mode: "late", lateMs: 150 });
    failNext = 1;
    const account = await stripe.accounts.create({ type: "express" });
    fake.controls.completeOnboarding(account.id);
    await new Promise((r) => setTimeout(r, 60));
    expect(received).toHaveLength(0);
    await fake.controls.settle();
    expect(types()).toEqual(["account.updated"]);
    const events = (await control("events", undefined, "GET")).events;
    expect(events[0].deliveries[0]).toMatchObject({ status: "delivered", attempts: 2 });
  });
});

describe("faults", () => {
  it("answers 500 without storing the idempotency key, and hangs past the SDK's timeout", async () => {
    await control("faults", { mode: "error_500", count: 1, pathPrefix: "/v1/customers" });
    await expect(stripe.customers.create({ email: "x@example.test" }, { idempotencyKey: "k500" })).rejects.toBeInstanceOf(Stripe.errors.StripeAPIError);
    const retried = await stripe.customers.create({ email: "x@example.test" }, { idempotencyKey: "k500" });
    expect(retried.lastResponse.headers["idempotent-replayed"]).toBeUndefined();
    expect(fake.controls.snapshot().objects.customer).toHaveLength(1);

    await control("faults", { mode: "timeout", count: 1 });
    const impatient = client({ timeout: 200 });
    await expect(impatient.balance.retrieve()).rejects.toBeInstanceOf(Stripe.errors.StripeConnectionError);
    expect((await impatient.balance.retrieve()).object).toBe("balance");
  });
});

describe("persistence", () => {
  it("keeps objects across a restart when given a file", async () => {
    const dir = fs.mkdtempSync(path.join(os.tmpdir(), "payment-fake-"));
    const file = path.join(dir, "state.json");
    const a = await startPaymentFake({ port: 0, file, webhookUrls: [] });
    const c = await new Stripe("sk_test_x", { host: "127.0.0.1", port: a.port, protocol: "http" }).customers.create({ email: "keep@example.test" });
    await a.close();
    const b = await startPaymentFake({ port: 0, file, webhookUrls: [] });
    const again = await new Stripe("sk_test_x", { host: "127.0.0.1", port: b.port, protocol: "http" }).customers.retrieve(c.id);
    expect((again as Stripe.Customer).email).toBe("keep@example.test");
    await b.close();
    fs.rmSync(dir, { recursive: true, force: true });
  });
});
