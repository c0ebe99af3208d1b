// A consultant's bell in two organisations: the bell shows the organisation they work in and counts the other's
// unread notices with a switch; a notice of the other organisation, followed from the notification list,
// switches first and opens its page instead of a 404. The notices are written into the browser database here,
// so the test does not depend on what other files have read or marked.
import { afterAll, afterEach, beforeAll, describe, expect, it } from "vitest";
import { BASE_URL, clearSignInAttempts, openBrowser, screenshot, signIn, visit, query, type Browser } from "./harness";

const CONSULTANT = "consultant@fieldnotes.example";
const STAMP = Date.now().toString(36);
const HALVORSEN_TITLE = `Halvorsen notice ${STAMP}`;
const PINECREST_TITLE = `Pinecrest notice ${STAMP}`;

let b: Browser;
let pinecrest: { id: string; name: string };
let halvorsen: { id: string; name: string };
let pinecrestRequest: { id: string; title: string };

beforeAll(async () => {
  await clearSignInAttempts();
  const orgs = await query<{ id: string; name: string; slug: string }>(
    "select id, name, slug from organisations where slug in ('halvorsen-cathode-works', 'pinecrest-solid-forms')",
  );
  halvorsen = orgs.find((o) => o.slug === "halvorsen-cathode-works")!;
  pinecrest = orgs.find((o) => o.slug === "pinecrest-solid-forms")!;
  [pinecrestRequest] = await query<{ id: string; title: string }>(
    "select id, title from requests where organisation_id = $1 and state <> 'draft' order by created_at limit 1",
    [pinecrest.id],
  );
  // Another file of this run may have turned on a second factor for the consultant (account-security.test.ts):
  // this file signs in with the password alone.
  await query("update users set totp_secret = null, totp_enabled_at = null where email = $1", [CONSULTANT]);
  const [consultant] = await query<{ id: string }>("select id from users where email = $1", [CONSULTANT]);
  // One unread notice in each organisation; Pinecrest's leads to a Pinecrest request.
  await query(
    `insert into notifications (user_id, kind, organisation_id, title, href, created_at) values
       ($1, 'quote_received', $2, $3, '/client/requests', now() + interval '1 minute'),
       ($1, 'quote_received', $4, $5, $6, now() + interval '1 minute')`,
    [consultant.id, halvorsen.id, HALVORSEN_TITLE, pinecrest.id, PINECREST_TITLE, `/client/requests/${pinecrestRequest.id}`],
  );
  b = await openBrowser();
});
afterAll(async () => {
  await b?.close();
  await query("delete from notifications where title in ($1, $2)", [HALVORSEN_TITLE, PINECREST_TITLE]);
  await clearSignInAttempts();
});
afterEach(() => {
  expect(b.consoleErrors, "console errors in the browser").toEqual([]);
});

describe("a consultant's bell in two organisations", () => {
  it("shows the organisation worked in, counts the other's, and a notice of the other switches before it opens", async () => {
    const { page } = b;
    await signIn(page, CONSULTANT);
    await page.waitForURL(/\/client/);
    // Work in Halvorsen Cathode Works, whichever organisation the sign-in opened.
    const working = page.getByLabel("Working in");
    if ((await working.inputValue()) !== halvorsen.id) {
      await working.selectOption(halvorsen.id);
      await page.getByRole("button", { name: "Switch", exact: true }).click();
      await expect.poll(() => page.getByLabel("Working in").inputValue()).toBe(halvorsen.id);
    }

    await page.getByRole("button", { name: /^Notifications/ }).click();
    await expect.poll(() => page.getByText(HALVORSEN_TITLE).count()).toBe(1);
    expect(await page.getByText(PINECREST_TITLE).count()).toBe(0);
    const elsewhere = page.getByTestId("unread-elsewhere");
    await expect.poll(() => elsewhere.textContent()).toMatch(/\d+ unread in Pinecrest Solid Forms/);
    expect(await elsewhere.getByRole("button", { name: "Switch to Pinecrest Solid Forms" }).count()).toBe(1);
    await screenshot(page, "notices-bell-two-organisations");

    // The list has every notice; Pinecrest's switches to Pinecrest and opens its request (not a 404).
    await visit(page, "/account/notifications");
    expect(await page.getByText("(switches to Pinecrest Solid Forms)").count()).toBeGreaterThan(0);
    await page.getByRole("button", { name: PINECREST_TITLE }).click();
    await page.waitForURL(`${BASE_URL}/client/requests/${pinecrestRequest.id}`);
    await expect.poll(() => page.getByRole("heading", { name: pinecrestRequest.title }).count()).toBeGreaterThan(0);
    expect(await page.getByLabel("Working in").inputValue()).toBe(pinecrest.id);
    await screenshot(page, "notices-followed-into-other-organisation");

    // Now in Pinecrest: its notice is there and read; Halvorsen's unread one is counted with a switch back.
    await page.getByRole("button", { name: /^Notifications/ }).click();
    await expect.poll(() => page.getByText(PINECREST_TITLE).count()).toBe(1);
    expect(await page.getByText(HALVORSEN_TITLE).count()).toBe(0);
    await expect.poll(() => page.getByTestId("unread-elsewhere").textContent()).toMatch(/\d+ unread in Halvorsen Cathode Works/);
    await page.getByRole("button", { name: "Switch to Halvorsen Cathode Works" }).click();
    await page.waitForURL(`${BASE_URL}/client`);
    expect(await page.getByLabel("Working in").inputValue()).toBe(halvorsen.id);
    await expect.poll(() => page.getByText("You are now working in Halvorsen Cathode Works.").count()).toBeGreaterThan(0);
  });
});
