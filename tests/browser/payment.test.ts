// Paying in a real browser: the client pays an order on the provider's (local test) card page and comes back
// to funds held; another client's card is declined and the reason is shown. Admins see a balanced ledger.
import { afterAll, afterEach, beforeAll, describe, expect, it } from "vitest";
import { BASE_URL, openBrowser, screenshot, signIn, waitForHydration, type Browser } from "./harness";

let b: Browser;
beforeAll(async () => {
  b = await openBrowser();
});
afterAll(async () => {
  await b?.close();
});
afterEach(async () => {
  expect(b.consoleErrors).toEqual([]);
  await b.context.clearCookies();
});

async function openAwaitingOrder(title: string) {
  await b.page.goto("/client/orders");
  await waitForHydration(b.page);
  await b.page.getByRole("link", { name: title }).click();
  await b.page.waitForURL(/\/client\/orders\/[0-9a-f-]+$/);
  await waitForHydration(b.page);
}

async function payWith(card: string) {
  await b.page.getByRole("button", { name: /^Pay / }).click();
  await b.page.waitForURL(/127\.0\.0\.1:54332\/pay\//);
  await b.page.getByLabel("Card number").fill(card);
  await b.page.getByLabel(/Expiry/).fill("12/34");
  await b.page.getByLabel(/CVC/).fill("123");
  await screenshot(b.page, `payment-card-page-${card.slice(-4)}`);
  await b.page.getByRole("button", { name: /^Pay/ }).click();
}

describe("paying for an order", () => {
  it("the success card brings the client back to funds held", async () => {
    await signIn(b.page, "owner@halvorsen.example");
    await b.page.waitForURL(`${BASE_URL}/client`);
    await openAwaitingOrder("Phase identification of precursor HC-2602");
    await screenshot(b.page, "payment-order-awaiting");
    await payWith("4242424242424242");
    await b.page.waitForURL(/\/client\/orders\/[0-9a-f-]+$/);
    await b.page.getByText("Payment received. The money is held until you accept the delivery.").waitFor();
    await b.page.getByText("Funds held", { exact: true }).first().waitFor();
    await screenshot(b.page, "payment-funds-held");
  });

  it("the decline card leaves the order awaiting payment and says why", async () => {
    await signIn(b.page, "owner@pinecrest.example");
    await b.page.waitForURL(`${BASE_URL}/client`);
    await openAwaitingOrder("Cryostat scan of hydrate PSF-131");
    await payWith("4000000000000002");
    // The card page shows the decline; the client goes back to the order, which is still awaiting payment.
    await b.page.getByText("Your card was declined.").first().waitFor();
    await screenshot(b.page, "payment-declined-on-card-page");
    await openAwaitingOrder("Cryostat scan of hydrate PSF-131");
    await b.page.getByText("The last payment attempt was declined: Your card was declined.").waitFor();
    expect(await b.page.getByText("Awaiting payment", { exact: true }).count()).toBeGreaterThan(0);
    await screenshot(b.page, "payment-declined-order");
  });

  it("the admin's ledger summary balances with the demo data", async () => {
    await signIn(b.page, "admin@diffractory.example");
    await b.page.waitForURL(`${BASE_URL}/admin`);
    const summary = await b.page.evaluate(async () => (await fetch("/api/admin/ledger/summary")).json());
    expect(summary.balanced).toBe(true);
    expect(summary.transactions).toBeGreaterThan(0);
    await b.page.goto("/admin/ledger");
    await b.page.getByText("Every transaction balances").waitFor();
    await screenshot(b.page, "admin-ledger");
    await b.page.goto("/admin/disputes");
    await b.page.getByRole("heading", { name: /Polymorph form II confirmation/ }).waitFor();
    await screenshot(b.page, "admin-disputes");
  });
});
