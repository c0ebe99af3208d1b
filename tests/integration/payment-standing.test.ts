// The client's payments with their true state (docs/design.md#payments-list): from the ledger's refunds for each
// order, a payment reads paid, partly refunded or refunded; no page in the client's area calls a refunded payment
// "Paid", and none shows the payment provider's ids (pi_, ch_, cs_, re_, tr_: the provider's documented id
// prefixes for payment intents, charges, checkout sessions, refunds and transfers). The pages are rendered on the
// server from their loaders' data, as the app renders them. Each payment says how it was paid (card or bank
// transfer), and a bank transfer of which only part has arrived reads "Part received" with the amount.
import { createElement } from "react";
import { formatterFor } from "~/domain/locale";
import { renderToString } from "react-dom/server";
import { createRoutesStub } from "react-router";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { moneyWorld, type MoneyWorld } from "./money-fixtures";
import { callRoute, getRequest, sessionCookies } from "./route-call";

let w: MoneyWorld;
const as = sessionCookies();
const CLIENT = "owner@halvorsen.example";
const PROVIDER_ID = /\b(pi|ch|cs|re|tr|py)_[A-Za-z0-9]{6,}/;

type RouteModule = { loader: (...a: never[]) => unknown; default: unknown };
let routes: Record<"payments" | "receipt" | "order" | "orders", RouteModule>;
const orders: Record<"paid" | "partly" | "refunded" | "transfer" | "partTransfer", { id: string; number: string; paymentId: string }> = {} as never;

/** The route's loader answer for the client, and its page rendered to HTML from that answer. */
async function page(route: RouteModule, path: string, params: Record<string, string> = {}) {
  const answer = await callRoute(route.loader as never, getRequest(path, await as(CLIENT)), params);
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

beforeAll(async () => {
  w = await moneyWorld();
  routes = {
    payments: await import("~/routes/client/payments"),
    receipt: await import("~/routes/client/payment-receipt"),
    order: await import("~/routes/client/order"),
    orders: await import("~/routes/client/orders"),
  };
  const lifecycle = await import("~/models/orders/lifecycle.server");
  const made = async (amount: number) => {
    const id = await w.makeOrder(amount);
    await w.pay(id);
    const [order] = await w.db.select().from(w.schema.orders).where(w.eq(w.schema.orders.id, id));
    const [payment] = await w.db.select().from(w.schema.payments).where(w.eq(w.schema.payments.orderId, id));
    expect(payment.status).toBe("paid");
    return { order, entry: { id, number: order.number, paymentId: payment.id } };
  };
  const paid = await made(19_500);
  orders.paid = paid.entry;
  // Part of what is held comes back (as a dispute split returns part): 50.00 of 240.00.
  const partly = await made(24_000);
  await w.app.payments.refund(partly.order, 5_000, "Part refunded", `test:partly:${partly.order.id}`);
  orders.partly = partly.entry;
  // The client cancels a paid order: everything held is refunded.
  const refunded = await made(31_000);
  await lifecycle.cancelOrder(refunded.order.id, "client", w.owner.id, "Samples no longer needed.");
  orders.refunded = refunded.entry;
  // Paid by bank transfer in full (150.00), and a transfer of which 100.00 of 280.00 has arrived.
  const transfers = await import("~/models/payments/bank-transfer.server");
  const byTransfer = async (amount: number, arrives: number) => {
    const id = await w.makeOrder(amount);
    const payment = await transfers.startBankTransfer(id, { userId: w.owner.id });
    const view = (await transfers.transferViewOf(id))!;
    expect(w.fake.controls.receiveTransfer(view.reference, arrives)).not.toBeNull();
    await w.fake.controls.settle(5000);
    const [order] = await w.db.select().from(w.schema.orders).where(w.eq(w.schema.orders.id, id));
    return { id, number: order.number, paymentId: payment.id };
  };
  orders.transfer = await byTransfer(15_000, 15_000);
  orders.partTransfer = await byTransfer(28_000, 10_000);
}, 120_000);

afterAll(async () => {
  await w.close();
});

describe("the payments list", () => {
  it("gives each payment its state and refunded amount from the ledger", async () => {
    const { body } = await page(routes.payments, "/client/payments");
    const rows = (body as { payments: { orderId: string; standing: string; refundedMinor: number; amountMinor: number }[] }).payments;
    const row = (id: string) => rows.find((r) => r.orderId === id)!;
    expect(row(orders.paid.id)).toMatchObject({ standing: "paid", refundedMinor: 0 });
    expect(row(orders.partly.id)).toMatchObject({ standing: "partly_refunded", refundedMinor: 5_000, amountMinor: 24_000 });
    expect(row(orders.refunded.id)).toMatchObject({ standing: "refunded", refundedMinor: 31_000 });
    // No provider id leaves the server for the client's list.
    expect(JSON.stringify(body)).not.toMatch(PROVIDER_ID);
  });

  it("shows the states in words and amounts as money, never Paid for a refunded payment", async () => {
    const { html } = await page(routes.payments, "/client/payments");
    const rowOf = (number: string) => {
      const row = html.split("<tr").find((r) => r.includes(number));
      expect(row, number).toBeDefined();
      return visible(`<tr${row}`);
    };
    expect(rowOf(orders.paid.number)).toMatch(/\bPaid\b/);
    expect(rowOf(orders.paid.number)).toContain("€195.00");
    const partly = rowOf(orders.partly.number);
    expect(partly).toContain("Partly refunded");
    expect(partly).toContain("€240.00");
    expect(partly).toContain("€50.00");
    expect(partly).not.toMatch(/\bPaid\b/);
    const refunded = rowOf(orders.refunded.number);
    expect(refunded).toContain("Refunded");
    expect(refunded).toContain("€310.00");
    expect(refunded).not.toMatch(/\bPaid\b/);
    expect(visible(html)).not.toMatch(PROVIDER_ID);
    expect(visible(html)).not.toMatch(/minor units?/i);
  });
});

describe("how each payment was made", () => {
  it("the list gives card or bank transfer, and a transfer arrived in part as part received with its amount", async () => {
    const { body, html } = await page(routes.payments, "/client/payments");
    const rows = (body as { payments: { orderId: string; method: string; standing: string; receivedMinor: number }[] }).payments;
    const row = (id: string) => rows.find((r) => r.orderId === id)!;
    expect(row(orders.paid.id)).toMatchObject({ method: "card", standing: "paid" });
    expect(row(orders.transfer.id)).toMatchObject({ method: "bank_transfer", standing: "paid" });
    expect(row(orders.partTransfer.id)).toMatchObject({ method: "bank_transfer", standing: "part_received", receivedMinor: 10_000 });
    expect(JSON.stringify(body)).not.toMatch(PROVIDER_ID);
    const rowOf = (number: string) => visible(`<tr${html.split("<tr").find((r) => r.includes(number))}`);
    expect(rowOf(orders.paid.number)).toContain("Card");
    const transfer = rowOf(orders.transfer.number);
    expect(transfer).toContain("Bank transfer");
    expect(transfer).toMatch(/\bPaid\b/);
    expect(transfer).toContain("€150.00");
    const part = rowOf(orders.partTransfer.number);
    expect(part).toContain("Bank transfer");
    expect(part).toContain("Part received");
    expect(part).toContain("€100.00 of €280.00");
    expect(part).not.toContain("Not completed");
    expect(part).not.toMatch(/\bPaid\b/);
    expect(visible(html)).not.toMatch(PROVIDER_ID);
  });

  it("the receipt says how the payment was made", async () => {
    const card = visible((await page(routes.receipt, `/client/payments/${orders.paid.paymentId}/receipt`, { id: orders.paid.paymentId })).html);
    expect(card).toContain("Payment method Card");
    const { html, body } = await page(routes.receipt, `/client/payments/${orders.transfer.paymentId}/receipt`, { id: orders.transfer.paymentId });
    expect(visible(html)).toContain("Payment method Bank transfer");
    expect(visible(html)).toContain("State Paid");
    expect(visible(html)).not.toMatch(PROVIDER_ID);
    expect(JSON.stringify(body)).not.toMatch(PROVIDER_ID);
  });
});

describe("no page in the client's area calls a refunded payment Paid", () => {
  it("the receipt names the order and the day as its reference and states the refund", async () => {
    for (const key of ["partly", "refunded"] as const) {
      const o = orders[key];
      const { html, body } = await page(routes.receipt, `/client/payments/${o.paymentId}/receipt`, { id: o.paymentId });
      const text = visible(html);
      expect(text, key).not.toMatch(/\bPaid\b/);
      expect(text, key).not.toMatch(PROVIDER_ID);
      expect(JSON.stringify(body), key).not.toMatch(PROVIDER_ID);
      // The page renders in the default locale (en-GB) when the request names none.
      expect(text).toContain(`${o.number} / ${formatterFor("en-GB").date(new Date())}`);
      expect(text).toContain(key === "partly" ? "Partly refunded" : "Refunded");
      expect(text).toContain(key === "partly" ? "−€50.00" : "−€310.00");
      expect(text).toContain(key === "partly" ? "Net after refunds €190.00" : "Net after refunds €0.00");
    }
    // A payment with nothing refunded still reads as paid.
    const { html } = await page(routes.receipt, `/client/payments/${orders.paid.paymentId}/receipt`, { id: orders.paid.paymentId });
    expect(visible(html)).toContain("State Paid");
    expect(visible(html)).not.toMatch(PROVIDER_ID);
  });

  it("the order pages and the orders list", async () => {
    const list = visible((await page(routes.orders, "/client/orders")).html);
    expect(list).not.toMatch(PROVIDER_ID);
    for (const key of ["partly", "refunded"] as const) {
      const o = orders[key];
      const row = list.slice(list.indexOf(o.number), list.indexOf(o.number) + 200);
      expect(row, key).not.toMatch(/\bPaid\b/);
      const { html } = await page(routes.order, `/client/orders/${o.id}`, { id: o.id });
      const text = visible(html);
      // The page did render the order (not an empty shell).
      expect(text, key).toContain(o.number);
      expect(text, key).not.toMatch(/\bPaid\b/);
      expect(text, key).not.toMatch(PROVIDER_ID);
    }
  });
});
