// A request from post to order in a real browser: the client declares a hazardous sample with its SDS and
// publishes, two labs acknowledge the declaration and quote, the client compares the quotes and accepts one.
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import { afterAll, afterEach, beforeAll, describe, expect, it } from "vitest";
import { BASE_URL, clearSignInAttempts, openBrowser, screenshot, signIn, signOut, visit, waitForHydration, type Browser } from "./harness";
import { MINIMAL_PDF } from "./test-files";

const TITLE = "Cobalt-doped LFP batch B7";
let b: Browser;
let dir: string;
let requestPath: string;

beforeAll(async () => {
  b = await openBrowser();
  dir = fs.mkdtempSync(path.join(os.tmpdir(), "diffractory-sds-"));
  fs.writeFileSync(path.join(dir, "lfp-b7-sds.pdf"), MINIMAL_PDF);
});
afterEach(() => {
  expect(b.consoleErrors, "console errors in the browser").toEqual([]);
});
afterAll(async () => {
  await b?.close();
  fs.rmSync(dir, { recursive: true, force: true });
  await clearSignInAttempts();
});

async function signInAs(email: string, landing: string) {
  await b.context.clearCookies();
  await signIn(b.page, email);
  await b.page.waitForURL(`${BASE_URL}${landing}`);
}

describe("request and quote", () => {
  it("the client posts a request with a hazardous sample and its safety data sheet", async () => {
    const page = b.page;
    await signInAs("owner@halvorsen.example", "/client");
    await visit(page, "/client/requests");
    await page.getByRole("heading", { name: "Requests" }).waitFor();
    await screenshot(page, "request-list");
    await page.getByRole("link", { name: "New request" }).click();
    await page.waitForURL(`${BASE_URL}/client/requests/new`);
    await waitForHydration(page);

    await page.getByLabel("Request title").fill(TITLE);
    await page.getByLabel("Label", { exact: true }).fill("LFP-B7");
    await page.getByLabel("Chemical formula").fill("LiFe0.9Co0.1PO4");
    await page.getByLabel("Mass (mg)").fill("450");
    await page.getByLabel("Expected phase").fill("olivine LiFePO4");
    await page.getByLabel("Crystal system").selectOption("orthorhombic");
    await page.getByLabel("Centering").selectOption("P");
    await page.getByLabel("a (Å)").fill("10.33");
    await page.getByLabel("b (Å)").fill("6.01");
    await page.getByLabel("c (Å)").fill("4.69");
    await screenshot(page, "request-step-samples");
    await page.getByRole("button", { name: "Save and continue to hazards" }).click();
    await page.waitForURL(/\/edit\/hazards$/);
    requestPath = new URL(page.url()).pathname.replace(/\/edit\/hazards$/, "");
    await waitForHydration(page);

    await page.getByRole("complementary", { name: "Safety notice" }).waitFor();
    await page.getByLabel("GHS07 Exclamation mark (LFP-B7)").check();
    await page.getByLabel("H-statements of LFP-B7").fill("H302, H315+H319");
    await page.getByLabel("Safety data sheet of LFP-B7 (PDF)").setInputFiles(path.join(dir, "lfp-b7-sds.pdf"));
    await page.getByText("✓ lfp-b7-sds.pdf uploaded").waitFor();
    await screenshot(page, "request-step-hazards");
    await page.getByRole("button", { name: "Save and continue to measurement" }).click();
    await page.waitForURL(/\/edit\/measurement$/);
    await waitForHydration(page);

    await page.getByLabel("Deadline").fill("2099-06-30");
    await page.getByLabel("Budget (optional)").fill("900");
    await screenshot(page, "request-step-measurement");
    await page.getByRole("button", { name: "Save and continue to labs" }).click();
    await page.waitForURL(/\/edit\/labs$/);
    await waitForHydration(page);

    await page.getByRole("heading", { name: "Granite Ridge Characterisation" }).waitFor();
    expect(await page.getByText(/Fluorescence|Better:/).count()).toBeGreaterThan(0);
    // Lakeside's transmission instrument does not fit a reflection request, so it reads the request only when
    // invited: the request goes to both labs by invitation.
    await page.getByRole("radio", { name: /Invited labs only/ }).check();
    await page.getByLabel("Invite Granite Ridge Characterisation").check();
    await page.getByLabel("Invite Lakeside Institute X-ray Core").check();
    await screenshot(page, "request-step-labs");
    await page.getByRole("button", { name: "Save and continue to review" }).click();
    await page.waitForURL(/\/edit\/review$/);
    await waitForHydration(page);

    await page.getByRole("link", { name: "lfp-b7-sds.pdf" }).or(page.getByText("lfp-b7-sds.pdf")).first().waitFor();
    await screenshot(page, "request-step-review");
    await page.getByRole("button", { name: "Publish request" }).click();
    await page.waitForURL(`${BASE_URL}${requestPath}`);
    expect(await page.getByRole("status").textContent()).toContain("is open");
    await page.getByText("No quotes yet").waitFor();
    await screenshot(page, "request-published");
    await signOut(page);
  });

  it("the labs acknowledge the hazard declaration and quote", async () => {
    const page = b.page;
    const requestId = requestPath.split("/").pop()!;
    await signInAs("lab@graniteridge.example", "/lab");
    await visit(page, "/lab/inbox");
    await page.getByRole("link", { name: TITLE }).click();
    await page.waitForURL(`${BASE_URL}/lab/requests/${requestId}`);
    await waitForHydration(page);
    await page.getByRole("img", { name: "GHS07 Exclamation mark" }).first().waitFor();
    await page.getByRole("link", { name: "lfp-b7-sds.pdf" }).waitFor();
    expect(await page.getByRole("region", { name: "Quote builder" }).count()).toBe(0);
    await screenshot(page, "lab-request-hazards");
    await page.getByRole("button", { name: "Acknowledge hazard declaration" }).click();
    await page.getByText(/Hazard declaration acknowledged by Marcus Tillery/).waitFor();
    await page.getByRole("region", { name: "Quote builder" }).waitFor();
    await waitForHydration(page);
    await page.getByLabel("Item 1 unit price").fill("170.00");
    await page.getByLabel("Notes for the client").fill("Prices include return shipping of the sample.");
    await screenshot(page, "lab-quote-builder");
    await page.getByRole("button", { name: "Send quote" }).click();
    await page.getByText("Quote sent to the client.").waitFor();
    await page.getByRole("button", { name: "Withdraw quote" }).waitFor();
    await visit(page, "/lab/quotes");
    await page.getByRole("link", { name: TITLE }).waitFor();
    await screenshot(page, "lab-quotes");
    await signOut(page);

    // A second lab quotes through the same screens, so the client has two offers to compare.
    await signInAs("lab@lakeside.example", "/lab");
    await visit(page, `/lab/requests/${requestId}`);
    await page.getByRole("button", { name: "Acknowledge hazard declaration" }).click();
    await page.getByRole("region", { name: "Quote builder" }).waitFor();
    await waitForHydration(page);
    await page.getByLabel("Turnaround (days)").fill("5");
    await page.getByRole("button", { name: "Send quote" }).click();
    await page.getByText("Quote sent to the client.").waitFor();
    await signOut(page);
  });

  it("the client compares the quotes side by side and accepts one", async () => {
    const page = b.page;
    await signInAs("owner@halvorsen.example", "/client");
    await visit(page, requestPath);
    const granite = page.getByRole("article", { name: "Quote from Granite Ridge Characterisation" });
    const lakeside = page.getByRole("article", { name: "Quote from Lakeside Institute X-ray Core" });
    await granite.waitFor();
    await lakeside.waitFor();
    const offer = (await granite.textContent()) ?? "";
    for (const part of ["€245.00", "8 days", "Reflection diffractometer", "Cu Kα", "Valid until", "Accepts the declared hazards (GHS07)"])
      expect(offer).toContain(part);
    await screenshot(page, "client-quotes-side-by-side");
    await page.getByRole("button", { name: "Accept Granite Ridge Characterisation's quote" }).click();
    // Accepting leads to the order, ready for checkout.
    await page.waitForURL(/\/client\/orders\/[0-9a-f-]+$/);
    await page.getByText("Quote accepted. The order is awaiting payment").waitFor();
    await page.getByRole("button", { name: /^Pay EUR 245\.00|^Pay €245\.00/ }).waitFor();
    await visit(page, requestPath);
    await page.getByRole("region", { name: "Order" }).getByText("awaiting payment").first().waitFor();
    expect(await page.getByRole("button", { name: /^Accept / }).count()).toBe(0);
    await screenshot(page, "client-quote-accepted");
  });
});
