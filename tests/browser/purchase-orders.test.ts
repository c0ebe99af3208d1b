// Purchase orders and currencies in a real browser: an admin sets an indicative USD rate; a client whose
// organisation requires purchase orders compares a EUR and a USD quote (the USD one says so and shows the
// indicative conversion), is refused accepting without a PO number, accepts with "PO-4711-0042" and finds it on
// the order page. The request and its quotes are this test's own; the organisation's rule and the rate are put
// back as they were afterwards.
import { afterAll, afterEach, beforeAll, describe, expect, it } from "vitest";
import { BASE_URL, clearSignInAttempts, openBrowser, query, screenshot, signIn, visit, waitForHydration, type Browser } from "./harness";

const TITLE = "Polymorph check of PSF-188 (two currencies)";
const SOURCE = "browser test desk rate";
let b: Browser;
let requestId: string;
let pinecrestId: string;
let requiredBefore: boolean;

beforeAll(async () => {
  b = await openBrowser();
  const [org] = await query<{ id: string; requires_purchase_order: boolean }>(
    "select id, requires_purchase_order from organisations where slug = 'pinecrest-solid-forms'",
  );
  pinecrestId = org.id;
  requiredBefore = org.requires_purchase_order;
  await query("update organisations set requires_purchase_order = true where id = $1", [pinecrestId]);
  const [owner] = await query<{ id: string }>("select id from users where email = 'owner@pinecrest.example'");
  const [request] = await query<{ id: string }>(
    `insert into requests (organisation_id, created_by, title, state, range_min, range_max, currency, opened_at)
     values ($1, $2, $3, 'open', 5, 60, 'EUR', now()) returning id`,
    [pinecrestId, owner.id, TITLE],
  );
  requestId = request.id;
  const lab = async (slug: string) => (await query<{ id: string }>("select id from organisations where slug = $1", [slug]))[0].id;
  for (const [slug, total, currency] of [
    ["granite-ridge-characterisation", 19_500, "EUR"],
    ["lakeside-institute-x-ray-core", 21_000, "USD"],
  ] as const) {
    await query(
      `insert into quotes (request_id, lab_id, state, line_items, total_minor, currency, valid_until, turnaround_days)
       values ($1, $2, 'sent', $3, $4, $5, now() + interval '7 days', 8)`,
      [
        requestId,
        await lab(slug),
        JSON.stringify([{ description: "Measurement, per sample", quantity: 1, unitMinor: total, totalMinor: total }]),
        total,
        currency,
      ],
    );
  }
});
afterEach(() => {
  expect(b.consoleErrors, "console errors in the browser").toEqual([]);
});
afterAll(async () => {
  await b?.close();
  await query("update organisations set requires_purchase_order = $2 where id = $1", [pinecrestId, requiredBefore]);
  await query("delete from exchange_rates where source = $1", [SOURCE]);
  await clearSignInAttempts();
});

describe("purchase orders and currencies", () => {
  it("an admin sets an indicative USD rate with its day and source", async () => {
    const page = b.page;
    await signIn(page, "admin@diffractory.example");
    await page.waitForURL(`${BASE_URL}/admin`);
    await page.getByRole("link", { name: "Exchange rates" }).first().click();
    await page.waitForURL(`${BASE_URL}/admin/rates`);
    await waitForHydration(page);
    await page.getByLabel("One unit of").selectOption("USD");
    await page.getByLabel("Is worth, in").selectOption("EUR");
    await page.getByLabel("Rate", { exact: true }).fill("0.9200");
    await page.getByLabel("Source").fill(SOURCE);
    await page.getByRole("button", { name: "Save the rate" }).click();
    await page.getByText("Rate saved: 1 USD = 0.92 EUR").waitFor();
    await page.getByRole("cell", { name: SOURCE }).waitFor();
    await screenshot(page, "admin-exchange-rates");
    await b.context.clearCookies();
  });

  it("the client sees the USD quote marked and converted, is refused without a PO number, and accepts with one", async () => {
    const page = b.page;
    await signIn(page, "owner@pinecrest.example");
    await page.waitForURL(`${BASE_URL}/client`);
    await visit(page, `/client/requests/${requestId}`);
    const granite = page.getByRole("article", { name: "Quote from Granite Ridge Characterisation" });
    const lakeside = page.getByRole("article", { name: "Quote from Lakeside Institute X-ray Core" });
    await lakeside.waitFor();
    expect(await granite.textContent()).toContain("Quoted in EUR; the others in USD");
    const usd = (await lakeside.textContent()) ?? "";
    expect(usd).toContain("Quoted in USD; the others in EUR");
    // 210.00 USD × 0.92 = 193.20 EUR (hand arithmetic).
    expect(usd).toContain("€193.20 (indicative)");
    expect(usd).toContain("1 USD = 0.92 EUR");
    expect(usd).toContain(`source: ${SOURCE}`);
    await screenshot(page, "quotes-in-two-currencies");

    // Without a PO number: refused in one sentence, nothing accepted.
    await granite.getByRole("button", { name: "Accept Granite Ridge Characterisation's quote" }).click();
    await page.getByText("Your organisation requires a purchase-order number on every order").waitFor();
    expect(page.url()).toContain(`/client/requests/${requestId}`);
    const [order] = await query("select id from orders where request_id = $1", [requestId]);
    expect(order).toBeUndefined();
    await screenshot(page, "purchase-order-required");

    await granite.getByLabel(/Purchase-order number/).fill("PO-4711-0042");
    await granite.getByRole("button", { name: "Accept Granite Ridge Characterisation's quote" }).click();
    await page.waitForURL(/\/client\/orders\/[0-9a-f-]+$/);
    await waitForHydration(page);
    const po = page.getByRole("region", { name: "Purchase order" });
    await po.getByText("PO-4711-0042").waitFor();
    const [saved] = await query<{ purchase_order_number: string }>("select purchase_order_number from orders where request_id = $1", [requestId]);
    expect(saved.purchase_order_number).toBe("PO-4711-0042");
    await screenshot(page, "order-with-purchase-order");
  });
});
