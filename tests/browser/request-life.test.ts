// A request's life after publishing in a real browser: the client edits it after a lab quoted, the quote waits
// for the lab's re-confirmation, the client withdraws it, orders it again, publishes the copy, and the expiry
// job's function closes the copy once its deadline has passed. The requests are this test's own.
import pg from "pg";
import { afterAll, afterEach, beforeAll, describe, expect, it } from "vitest";
import { databaseUrl } from "../../services/postgres";
import { BASE_URL, clearSignInAttempts, openBrowser, screenshot, signIn, signOut, visit, waitForHydration, type Browser } from "./harness";

const TITLE = "Olivine lattice of LMFP lot HC-2760";
let b: Browser;
let requestPath: string;
let copyPath: string;

beforeAll(async () => {
  b = await openBrowser();
});
afterEach(() => {
  expect(b.consoleErrors, "console errors in the browser").toEqual([]);
});
afterAll(async () => {
  await b?.close();
  await clearSignInAttempts();
  // The expiry step ran the job's function in this process; its pool closes with the test.
  if (process.env.DATABASE_URL) await (await import("~/db/client.server")).db.$client.end();
});

async function signInAs(email: string, landing: string) {
  await b.context.clearCookies();
  await signIn(b.page, email);
  await b.page.waitForURL(`${BASE_URL}${landing}`);
}

/** Runs the wizard from the hazards step (no hazards) to publishing, with the given deadline. */
async function finishWizard(deadline: string) {
  const page = b.page;
  await page.getByRole("button", { name: "Save and continue to measurement" }).click();
  await page.waitForURL(/\/edit\/measurement$/);
  await waitForHydration(page);
  await page.getByLabel("Deadline").fill(deadline);
  await page.getByLabel("Budget (optional)").fill("500");
  await page.getByRole("button", { name: "Save and continue to labs" }).click();
  await page.waitForURL(/\/edit\/labs$/);
  await waitForHydration(page);
  await page.getByRole("button", { name: "Save and continue to review" }).click();
  await page.waitForURL(/\/edit\/review$/);
  await waitForHydration(page);
  await page.getByRole("button", { name: "Publish request" }).click();
}

describe("edit, withdraw, repeat and expiry", () => {
  it("the client publishes a request and Granite Ridge quotes on it", async () => {
    const page = b.page;
    await signInAs("owner@halvorsen.example", "/client");
    await visit(page, "/client/requests/new");
    // Invented sample; LiMn0.6Fe0.4PO4 olivine (Pnma) ≈ 10.40, 6.07, 4.73 Å (approximate literature values, from memory).
    await page.getByLabel("Request title").fill(TITLE);
    await page.getByLabel("Label", { exact: true }).fill("HC-2760-A");
    await page.getByLabel("Chemical formula").fill("LiMn0.6Fe0.4PO4");
    await page.getByLabel("Mass (mg)").fill("300");
    await page.getByLabel("Expected phase").fill("LMFP olivine");
    await page.getByLabel("Crystal system").selectOption("orthorhombic");
    await page.getByLabel("Centering").selectOption("P");
    await page.getByLabel("a (Å)").fill("10.40");
    await page.getByLabel("b (Å)").fill("6.07");
    await page.getByLabel("c (Å)").fill("4.73");
    await page.getByRole("button", { name: "Save and continue to hazards" }).click();
    await page.waitForURL(/\/edit\/hazards$/);
    requestPath = new URL(page.url()).pathname.replace(/\/edit\/hazards$/, "");
    await waitForHydration(page);
    await finishWizard("2099-05-31");
    await page.waitForURL(`${BASE_URL}${requestPath}`);
    // The published request shows everything asked.
    const needs = page.getByRole("region", { name: "Measurement needs" });
    for (const part of ["10–120° 2θ", "any source", "room temperature", "air", "Standard", "€500.00"])
      await needs.getByText(part, { exact: false }).first().waitFor();
    await screenshot(page, "request-life-published");
    await signOut(page);

    await signInAs("lab@graniteridge.example", "/lab");
    await visit(page, `/lab${requestPath.replace(/^\/client/, "")}`);
    await page.getByRole("button", { name: "Acknowledge hazard declaration" }).click();
    await page.getByRole("region", { name: "Quote builder" }).waitFor();
    await waitForHydration(page);
    await page.getByRole("button", { name: "Send quote" }).click();
    await page.getByText("Quote sent to the client.").waitFor();
    await signOut(page);
  });

  it("the client edits the request; the quote waits for the lab's re-confirmation", async () => {
    const page = b.page;
    await signInAs("owner@halvorsen.example", "/client");
    await visit(page, requestPath);
    await page.getByRole("button", { name: "Accept Granite Ridge Characterisation's quote" }).waitFor();
    await page.getByRole("navigation", { name: "Edit the request" }).getByRole("link", { name: "Measurement needs" }).click();
    await page.waitForURL(/\/edit\/measurement$/);
    await waitForHydration(page);
    await page.getByLabel("From (°)").fill("5");
    await page.getByLabel("To (°)").fill("90");
    await page.getByLabel("Deadline").fill("2099-06-30");
    await page.getByRole("button", { name: "Save changes" }).click();
    await page.waitForURL(`${BASE_URL}${requestPath}`);
    const toast = (await page.getByRole("status").first().textContent()) ?? "";
    expect(toast).toContain("Saved as revision 2");
    expect(toast).toContain("range 10–120° 2θ → 5–90° 2θ");
    const card = page.getByRole("article", { name: "Quote from Granite Ridge Characterisation" });
    await card.getByText("Awaiting the lab's re-confirmation").waitFor();
    expect(await page.getByRole("button", { name: /^Accept / }).count()).toBe(0);
    await page.getByRole("region", { name: "Changes after publishing" }).getByText("Deadline 31 May 2099 → 30 Jun 2099").waitFor();
    await screenshot(page, "request-life-awaiting-reconfirmation");
    await signOut(page);

    await signInAs("lab@graniteridge.example", "/lab");
    await visit(page, `/lab${requestPath.replace(/^\/client/, "")}`);
    const changed = page.getByRole("region", { name: "Changed since your quote" });
    await changed.getByText(/range 10–120° 2θ → 5–90° 2θ/).waitFor();
    await screenshot(page, "request-life-lab-reconfirm");
    await changed.getByRole("button", { name: "Re-confirm quote" }).click();
    await page.getByText("Quote re-confirmed for the changed request").waitFor();
    await signOut(page);
  });

  it("the client withdraws the request and orders it again", async () => {
    const page = b.page;
    await signInAs("owner@halvorsen.example", "/client");
    await visit(page, requestPath);
    await page.getByRole("button", { name: "Accept Granite Ridge Characterisation's quote" }).waitFor();
    page.once("dialog", (d) => void d.accept());
    await page.getByRole("button", { name: "Withdraw request" }).click();
    await page.getByText("Request withdrawn.").waitFor();
    await page.getByText(/You withdrew this request on/).waitFor();
    expect(await page.getByRole("button", { name: /^Accept / }).count()).toBe(0);
    await page.getByText(/Granite Ridge Characterisation \(lapsed/).waitFor();
    await screenshot(page, "request-life-withdrawn");

    await page.getByRole("button", { name: "Order again" }).click();
    await page.waitForURL(/\/client\/requests\/[0-9a-f-]+\/edit\/samples$/);
    copyPath = new URL(page.url()).pathname.replace(/\/edit\/samples$/, "");
    expect(copyPath).not.toBe(requestPath);
    await waitForHydration(page);
    expect(await page.getByLabel("Label", { exact: true }).inputValue()).toBe("HC-2760-A");
    expect(await page.getByLabel("a (Å)").inputValue()).toBe("10.4");
    await page.getByText("A new draft with the same samples and needs.").waitFor();
    await screenshot(page, "request-life-order-again");
    await page.getByRole("button", { name: "Dismiss message" }).click();
    await page.getByRole("button", { name: "Save and continue to hazards" }).click();
    await page.waitForURL(/\/edit\/hazards$/);
    await waitForHydration(page);
    await finishWizard("2099-07-31");
    await page.waitForURL(`${BASE_URL}${copyPath}`);
    await page.getByRole("region", { name: "Measurement needs" }).getByText("5–90° 2θ").waitFor();
  });

  it("the expiry job closes the copy once its deadline has passed", async () => {
    const page = b.page;
    const copyId = copyPath.split("/").pop()!;
    const c = new pg.Client({ connectionString: databaseUrl("diffractory_browser") });
    await c.connect();
    try {
      // Only the deadline is set by hand (the form refuses a past date); the job's own function does the rest.
      await c.query("update requests set deadline = current_date - 1 where id = $1", [copyId]);
    } finally {
      await c.end();
    }
    process.env.DATABASE_URL = databaseUrl("diffractory_browser");
    const { expireOverdueRequests } = await import("~/models/requests/request-life.server");
    expect(await expireOverdueRequests(new Date(), [copyId])).toBe(1);
    await visit(page, copyPath);
    await page.getByText(/This request expired on its deadline without an accepted quote/).waitFor();
    expect(await page.getByRole("button", { name: "Withdraw request" }).count()).toBe(0);
    await page.getByRole("button", { name: "Order again" }).waitFor();
    await screenshot(page, "request-life-expired");
  });
});
