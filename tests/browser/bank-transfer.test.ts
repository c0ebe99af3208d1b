// Paying by bank transfer in a real browser: the demo order that Pinecrest has partly paid by transfer shows the
// bank details, the reference, the purchase order, what has arrived and the date the rest must arrive by, in
// money (never minor units) and without provider ids; the order paid in full by transfer shows its money held.
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

async function openOrder(title: string) {
  await b.page.goto("/client/orders");
  await waitForHydration(b.page);
  await b.page.getByRole("link", { name: title }).click();
  await b.page.waitForURL(/\/client\/orders\/[0-9a-f-]+$/);
  await waitForHydration(b.page);
}

describe("paying by bank transfer", () => {
  it("shows a part received, what is still to transfer, the bank details and the pay-by date", async () => {
    await signIn(b.page, "owner@pinecrest.example");
    await b.page.waitForURL(`${BASE_URL}/client`);
    await openOrder("Hydrate check of API lot PSF-174");
    const details = b.page.getByRole("definition");
    await b.page.getByRole("heading", { name: "Pay by bank transfer" }).waitFor();
    const text = (await b.page.locator("main").textContent()) ?? "";
    expect(text).toMatch(/IBAN\s*DE\d{2}( \w{4})+/);
    expect(text).toContain("PSF-PO-04527");
    expect(text).toMatch(/Received so far\s*€100\.00/);
    expect(text).toMatch(/Still to transfer\s*€180\.00/);
    expect(text).toContain("Partly paid: €100.00 of €280.00 has arrived.");
    expect(text).toMatch(/Must arrive by\s*\w{3} \d{1,2}, \d{4}|Must arrive by\s*\d{1,2} \w+ \d{4}/);
    expect(text).not.toMatch(/\b(pi|cus|ch|re)_[A-Za-z0-9]{6,}/);
    expect(await details.count()).toBeGreaterThan(5);
    await screenshot(b.page, "bank-transfer-partly-paid");
  });

  it("the order paid in full by transfer has its money held", async () => {
    await signIn(b.page, "owner@pinecrest.example");
    await b.page.waitForURL(`${BASE_URL}/client`);
    await openOrder("Polymorph purity of API lot PSF-170");
    await b.page.getByText("Funds held", { exact: true }).first().waitFor();
    await screenshot(b.page, "bank-transfer-paid");
  });
});
