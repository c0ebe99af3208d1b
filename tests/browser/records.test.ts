// Records that hold (docs/design.md#records-that-hold): a client archives a delivered scan from the data room and
// brings it back under "Show archived"; the admin finds it in the audit log in words, filtered by kind and person,
// with sign-ins on their own tab; a consultant's link to an order of their other organisation switches there.
import { afterAll, afterEach, beforeAll, describe, expect, it } from "vitest";
import { checkAccessibility } from "./a11y";
import { BASE_URL, clearSignInAttempts, openBrowser, screenshot, signIn, signOut, visit, waitForHydration, query, type Browser } from "./harness";

const OWNER = "owner@halvorsen.example";
const ADMIN = "admin@diffractory.example";
const CONSULTANT = "consultant@fieldnotes.example";
const ORDER_TITLE = "Lattice check of LFP reference lot HC-2398";
const FILE = "HC-2398-1_Co_15-110.xy";

let b: Browser;
let order: { id: string; number: string };
let owner: { id: string; name: string };

beforeAll(async () => {
  await clearSignInAttempts();
  [order] = await query<{ id: string; number: string }>("select o.id, o.number from orders o join requests r on r.id = o.request_id where r.title = $1", [
    ORDER_TITLE,
  ]);
  [owner] = await query<{ id: string; name: string }>("select id, name from users where email = $1", [OWNER]);
  // The consultant signs in with the password alone (another file may have turned on a second factor).
  await query("update users set totp_secret = null, totp_enabled_at = null where email = $1", [CONSULTANT]);
  b = await openBrowser();
});
afterAll(async () => {
  await b?.close();
  // Other files read this order's files: leave this one as the demo has it (the demo archives the other scan).
  if (order) await query("update order_files set archived_at = null, archived_by = null where order_id = $1 and name = $2", [order.id, FILE]);
  await clearSignInAttempts();
});
afterEach(() => {
  expect(b.consoleErrors, "console errors in the browser").toEqual([]);
});

describe("records that hold", () => {
  it("archives a delivered scan instead of deleting it, and restores it from Show archived", async () => {
    const { page } = b;
    await signIn(page, OWNER);
    await page.waitForURL(/\/client/);
    await visit(page, `/client/data-room/${order.id}`);
    await page.getByText(/cannot be deleted in that time/).waitFor();
    expect(await page.getByRole("button", { name: /^Delete / }).count()).toBe(0);
    await page.getByRole("button", { name: `Archive ${FILE} v1` }).click();
    await page.getByText(`${FILE} v1 archived`).first().waitFor();
    await expect.poll(() => page.getByRole("button", { name: `Archive ${FILE} v1` }).count()).toBe(0);
    // The demo has archived the coated trial's scan of this order already; this one joins it.
    await page.getByRole("link", { name: /Show archived \([1-9]\d*\)/ }).click();
    await page.waitForURL(`${BASE_URL}/client/data-room/${order.id}?archived=1`);
    await page.getByRole("button", { name: `Restore ${FILE} v1` }).waitFor();
    await checkAccessibility(page, "client-data-room-archived");
    await screenshot(page, "records-data-room-archived");
    await page.getByRole("button", { name: `Restore ${FILE} v1` }).click();
    await page.getByText(`${FILE} v1 restored to the data room.`).first().waitFor();
    await page.getByRole("button", { name: `Archive ${FILE} v1` }).waitFor();
    await signOut(page);
  });

  it("shows the audit log in words, filtered by kind and person, with sign-ins apart", async () => {
    const { page } = b;
    await signIn(page, ADMIN);
    await page.waitForURL(/\/admin/);
    await visit(page, "/admin/audit-log");
    // Sign-ins are not mixed with the rest.
    await page.getByRole("table", { name: /Audit log entries/ }).waitFor();
    expect(
      await page
        .getByRole("row")
        .filter({ hasText: / signed in\./ })
        .count(),
    ).toBe(0);

    await page.getByLabel("Kind").selectOption({ label: "Files and share links" });
    await page.getByLabel("Person").selectOption(owner.id);
    await page.getByRole("button", { name: "Filter" }).click();
    await page.waitForURL(/kind=files/);
    const archived = page.getByRole("row").filter({ hasText: `${owner.name} archived ${FILE} v1 of order ${order.number}.` });
    await archived.first().waitFor();
    await page
      .getByRole("row")
      .filter({ hasText: `${owner.name} restored ${FILE} v1 of order ${order.number}.` })
      .first()
      .waitFor();
    const rows = await page.getByRole("row").allTextContents();
    for (const text of rows.slice(1)) expect(text).toContain(OWNER);
    await checkAccessibility(page, "admin-audit-log-filtered");
    await screenshot(page, "records-audit-log-files");

    await page.getByRole("link", { name: "Sign-ins" }).click();
    await page.waitForURL(/kind=sign_ins/);
    await page
      .getByRole("row")
      .filter({ hasText: `${owner.name} signed in.` })
      .first()
      .waitFor();
    await page.getByRole("table", { name: "Recent sign-in attempts" }).waitFor();
    await screenshot(page, "records-audit-log-sign-ins");
    await signOut(page);
  });

  it("switches a consultant to the order's organisation when a link leads there", async () => {
    const { page } = b;
    const [pinecrest] = await query<{ id: string }>("select id from organisations where slug = 'pinecrest-solid-forms'");
    await signIn(page, CONSULTANT);
    await page.waitForURL(/\/client/);
    // Let the sign-in's own page settle: its data request clears the sign-in's one-time message cookie, and
    // must not cross the order's request below, whose redirect carries the message this test looks for.
    await waitForHydration(page);
    await page.waitForLoadState("networkidle");
    const working = page.getByLabel("Working in");
    if ((await working.inputValue()) !== pinecrest.id) {
      await working.selectOption(pinecrest.id);
      await page.getByRole("button", { name: "Switch", exact: true }).click();
      // The switch's own message shows once its redirect has loaded: no request of it can cross the next one's.
      await page
        .getByText(/You are now working in Pinecrest/)
        .first()
        .waitFor();
      await expect.poll(() => page.getByLabel("Working in").inputValue()).toBe(pinecrest.id);
    }
    // As from an e-mail: the address typed in, not a link inside the app.
    await visit(page, `/client/orders/${order.id}`);
    await page.getByText("Switched to Halvorsen Cathode Works.").first().waitFor();
    await page.getByText(order.number).first().waitFor();
    expect(page.url()).toBe(`${BASE_URL}/client/orders/${order.id}`);

    // Back in Pinecrest, an e-mail's link to a message on another Halvorsen order: the page marks the thread
    // read and reloads its data, and the one-time message stays on screen through that reload.
    const [withThread] = await query<{ id: string }>(
      "select o.id from orders o join requests r on r.id = o.request_id where r.title = 'Lattice check of LFP production lot HC-2645'",
    );
    await page.getByLabel("Working in").selectOption(pinecrest.id);
    await page.getByRole("button", { name: "Switch", exact: true }).click();
    await page
      .getByText(/You are now working in Pinecrest/)
      .first()
      .waitFor();
    await expect.poll(() => page.getByLabel("Working in").inputValue()).toBe(pinecrest.id);
    await visit(page, `/client/orders/${withThread.id}#messages`);
    await page.getByText("Switched to Halvorsen Cathode Works.").first().waitFor();
    await page
      .getByRole("region", { name: /^Messages with / })
      .getByText(/\d+ new/)
      .waitFor();
    await page.waitForLoadState("networkidle");
    expect(await page.getByRole("status").filter({ hasText: "Switched to Halvorsen Cathode Works." }).isVisible()).toBe(true);
  });
});
