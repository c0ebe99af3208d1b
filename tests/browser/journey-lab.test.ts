// The lab's whole job in a real browser, through the screens only: a new lab creates its account and applies
// for vetting, an admin approves it, the lab connects its payout account, publishes an instrument, hazards and a
// price list (by keyboard alone), acknowledges a client's hazard declaration, quotes, receives the samples,
// uploads a scan, delivers, and sees the payout. A screenshot per step goes to
// test-results/screenshots/journey-lab/, and axe-core runs on every screen the journey visits.
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import type { Page } from "playwright-core";
import { afterAll, afterEach, beforeAll, describe, expect, it } from "vitest";
import { MINIMAL_PDF, simulatedXy } from "./test-files";
import { SILICON, ZINCITE } from "~/diffraction/structures";
import { checkAccessibility, type focusedElement, tabTo } from "./a11y";
import { BASE_URL, clearSignInAttempts, openBrowser, SCREENSHOT_DIR, screenshot, signIn, visit, waitForHydration, type Browser } from "./harness";

// One run's own lab, person and request, so nothing the other browser files read is touched.
const RUN = Date.now().toString(36).slice(-5);
const LAB_NAME = `Kestrel Moor Diffraction ${RUN}`;
const LAB_EMAIL = `manager-${RUN}@kestrel-moor.example`;
const LAB_PASSWORD = "kestrel-moor-powder-2026";
const MANAGER = "Oona Ferreira-Blake";
const TITLE = `Zinc oxide nanopowder lot ZN-${RUN}`;
const SAMPLE = `ZN-${RUN}-A`;
const INSTRUMENT = "Bragg–Brentano diffractometer K1 (Cu)";
const SHOTS = path.join(SCREENSHOT_DIR, "journey-lab");

let lab: Browser;
let admin: Browser;
let client: Browser;
let dir = "";
let shot = 0;
let requestId = "";
let orderPath = "";

/** The next numbered screenshot, test-results/screenshots/journey-lab/NN-name.png. */
async function snap(page: Page, name: string) {
  await page.waitForLoadState("networkidle");
  shot += 1;
  await screenshot(page, `journey-lab/${String(shot).padStart(2, "0")}-${name}`);
}

/**
 * One step of the journey: a screenshot `NN-name`, axe-core on the screen, and no state shown by colour alone
 * (every badge carries a word besides its tint and shape).
 */
async function step(page: Page, name: string, screen: string) {
  await snap(page, name);
  await checkAccessibility(page, `lab-${screen}`);
  const wordless = await page.evaluate(() =>
    // A pill-shaped element or a state badge that is not hidden from assistive technology (decorative dots such as the timeline's
    // bullets are aria-hidden, with the event's words beside them).
    [...document.querySelectorAll("span.rounded-full, [data-badge]")]
      .filter((el) => !el.closest("[aria-hidden='true']"))
      .filter((el) => {
        const copy = el.cloneNode(true) as HTMLElement;
        copy.querySelectorAll("[aria-hidden='true']").forEach((n) => n.remove());
        return (copy.textContent ?? "").trim() === "" && !el.getAttribute("aria-label");
      })
      .map((el) => el.outerHTML.slice(0, 120)),
  );
  expect(wordless, `badges with no word on ${screen}`).toEqual([]);
}

beforeAll(async () => {
  fs.rmSync(SHOTS, { recursive: true, force: true });
  fs.mkdirSync(SHOTS, { recursive: true });
  dir = fs.mkdtempSync(path.join(os.tmpdir(), "diffractory-journey-lab-"));
  fs.writeFileSync(path.join(dir, "iso17025-certificate.pdf"), MINIMAL_PDF);
  fs.writeFileSync(path.join(dir, "zno-sds.pdf"), MINIMAL_PDF);
  // The calibration scan: silicon simulated from the NIST SRM 640c cell (docs/reference-values.md#certified-lattice-parameters) on Cu Kα1+Kα2.
  fs.writeFileSync(
    path.join(dir, "k1-si640c.xy"),
    simulatedXy("Silicon SRM 640c calibration, instrument K1", { structure: SILICON, from: 15, to: 140, background: 110, slope: -0.3, seed: 640 }),
  );
  // The delivered scan: zincite simulated by the engine on the lab's Cu instrument, a lot slightly off the
  // cell of NIST SRM 674b (docs/reference-values.md#certified-lattice-parameters) as a real batch would be.
  fs.writeFileSync(
    path.join(dir, `${SAMPLE}_Cu_20-120.xy`),
    simulatedXy(`${SAMPLE} zinc oxide (simulated)`, {
      structure: ZINCITE,
      cell: { a: 3.2503, b: 3.2503, c: 5.2071, alpha: 90, beta: 90, gamma: 120 },
      from: 20,
      to: 120,
      background: 140,
      slope: -0.4,
      seed: 674,
    }),
  );
  [lab, admin, client] = await Promise.all([openBrowser(), openBrowser(), openBrowser()]);
});

afterEach(() => {
  for (const [who, b] of [
    ["lab", lab],
    ["admin", admin],
    ["client", client],
  ] as const) {
    expect(b?.consoleErrors ?? [], `console errors in the ${who}'s browser`).toEqual([]);
  }
});

afterAll(async () => {
  await Promise.all([lab?.close(), admin?.close(), client?.close()]);
  if (dir) fs.rmSync(dir, { recursive: true, force: true });
  await clearSignInAttempts();
});

describe("lab journey", () => {
  it("a new lab creates its account and hands in the vetting application", async () => {
    const page = lab.page;
    await visit(page, "/create-account");
    await page.getByLabel("A lab").check();
    await page.getByLabel("Your name").fill(MANAGER);
    await page.getByLabel("E-mail").fill(LAB_EMAIL);
    await page.getByLabel("Password").fill(LAB_PASSWORD);
    await page.getByLabel("Lab name").fill(LAB_NAME);
    await page.getByLabel("City").fill("Kestrel Moor");
    await page.getByLabel("Country").fill("Ireland");
    await step(page, "create-account", "create-account");
    await page.getByRole("button", { name: "Create account" }).click();
    await page.waitForURL(`${BASE_URL}/lab`);
    await waitForHydration(page);
    await step(page, "lab-home", "home");

    await page
      .getByRole("link", { name: /Vetting/ })
      .first()
      .click();
    await page.waitForURL(`${BASE_URL}/lab/vetting`);
    await waitForHydration(page);
    await page.getByLabel("Description").fill("Contract powder diffraction for pigment and ceramic producers on one Cu reflection instrument.");
    await page.getByLabel("Accreditation number").fill(`IE-17025-${RUN}`);
    await page.getByLabel("Accreditation expires on").fill("2029-03-31");
    await page.getByLabel(/Accreditation certificate/).setInputFiles(path.join(dir, "iso17025-certificate.pdf"));
    await page.getByText("✓ iso17025-certificate.pdf uploaded").waitFor();
    await page.getByRole("checkbox", { name: /radiation licence/ }).check();
    await page.getByLabel("Your full name, as signature").fill(MANAGER);
    await page.getByLabel("Silicon, NIST SRM 640c").check();
    await page.getByLabel("Instrument", { exact: true }).fill(INSTRUMENT);
    await page.getByLabel("Anode").selectOption("Cu");
    await page.getByLabel(/Calibration scan/).setInputFiles(path.join(dir, "k1-si640c.xy"));
    await page.getByText("✓ k1-si640c.xy uploaded").waitFor();
    await step(page, "vetting-application", "vetting-application");
    await page.getByRole("button", { name: "Hand in for review" }).click();
    await page.getByText("Application handed in. An admin will review it.").waitFor();
    await page.getByRole("heading", { name: "Calibration check" }).waitFor();
    await step(page, "vetting-in-review", "vetting-in-review");
    // Not approved yet: the inbox says so instead of listing requests.
    await visit(page, "/lab/inbox");
    await page.getByText("Not approved yet").waitFor();
    await step(page, "inbox-not-approved", "inbox-not-approved");
  });

  it("an admin reviews the calibration check and approves the lab", async () => {
    const page = admin.page;
    await signIn(page, "admin@diffractory.example");
    await page.waitForURL(`${BASE_URL}/admin`);
    await visit(page, "/admin/vetting-queue");
    await page.getByRole("cell", { name: LAB_NAME, exact: true }).waitFor();
    await step(page, "admin-vetting-queue", "admin-vetting-queue");
    await page.getByRole("link", { name: `Review ${LAB_NAME}` }).click();
    await page.getByRole("heading", { name: LAB_NAME }).waitFor();
    await waitForHydration(page);
    await page.getByText("Within tolerance").waitFor();
    await page.getByLabel("Note to the lab and the record").fill("ISO/IEC 17025 certificate and silicon calibration in order.");
    await step(page, "admin-lab-review", "admin-lab-review");
    await page.getByRole("button", { name: "Approve" }).click();
    await page.getByText("Lab approved.").waitFor();
    await step(page, "admin-lab-approved", "admin-lab-approved");

    // The lab reads the decision on its own vetting screen.
    await visit(lab.page, "/lab/vetting");
    await lab.page.getByText("Your lab is approved and listed in the lab directory.").waitFor();
    await step(lab.page, "vetting-approved", "vetting-approved");
  });

  it("the lab connects its payout account at the provider", async () => {
    const page = lab.page;
    await visit(page, "/lab/payouts");
    await page.getByText("Not connected").waitFor();
    await step(page, "payouts-not-connected", "payouts-not-connected");
    await page.getByRole("button", { name: "Connect a payout account" }).click();
    // The payment provider's onboarding page (the local fake stands in for it).
    await page.waitForURL(/127\.0\.0\.1:54332\/connect\/onboard\//);
    // The provider's own page, not a Diffractory screen: photographed, not audited.
    await snap(page, "provider-onboarding");
    await page.getByRole("button", { name: "Complete onboarding" }).click();
    await page.waitForURL(/\/lab\/payouts\?onboarding=done/);
    await waitForHydration(page);
    await page.getByText("Ready for payouts").waitFor();
    await step(page, "payouts-ready", "payouts-ready");
  });

  it("the lab publishes an instrument with a stage and the hazards it accepts", async () => {
    const page = lab.page;
    await visit(page, "/lab/capabilities");
    await page.getByText("No instruments published").waitFor();
    const form = page.locator("form#instrument-new");
    await form.getByLabel("Instrument name").fill(INSTRUMENT);
    await form.getByLabel("Technique").selectOption("powder_reflection");
    await form.getByLabel("Anode", { exact: true }).selectOption("Cu");
    await form.getByLabel("Monochromation").selectOption("k_alpha_doublet");
    await form.getByLabel("Smallest 2θ (°)").fill("5");
    await form.getByLabel("Largest 2θ (°)").fill("145");
    await form.getByLabel("Smallest step (° 2θ)").fill("0.01");
    await form.getByLabel("Detector").selectOption("strip_1d");
    await step(page, "capabilities-new-instrument", "capabilities-new-instrument");
    await form.getByRole("button", { name: "Add instrument" }).click();
    await page.getByText("Instrument saved.").waitFor();
    // Bragg's law by hand: Cu Kα1 1.540593 Å over 2θ 5–145° → d 0.8077–17.66 Å.
    const card = page.getByRole("article", { name: `Instrument ${INSTRUMENT}` });
    await card.getByText("d 0.8077–17.66 Å", { exact: false }).waitFor();

    await card.getByText("Add a sample stage").click();
    const stage = page.getByRole("form", { name: `Add a stage to ${INSTRUMENT}` });
    await stage.getByLabel("Stage name").fill("Spinner with dome (air or N₂)");
    await stage.getByLabel("Lowest temperature (K)").fill("283");
    await stage.getByLabel("Highest temperature (K)").fill("318");
    await stage.getByLabel("Nitrogen").check();
    await stage.getByRole("button", { name: "Add stage" }).click();
    await page.getByText("Sample stage saved.").waitFor();
    await card.getByText("283–318 K").waitFor();

    const hazards = page.getByRole("region", { name: "Hazards accepted" });
    for (const code of ["GHS07 Exclamation mark", "GHS08 Health hazard", "GHS09 Environment"]) await hazards.getByRole("checkbox", { name: code }).check();
    await hazards.getByRole("checkbox", { name: "Nanomaterial" }).check();
    await hazards.getByRole("button", { name: "Save hazard acceptance" }).click();
    await page.getByText("Hazard acceptance saved.").waitFor();
    expect(await page.getByRole("checkbox", { name: "GHS09 Environment" }).isChecked()).toBe(true);
    await step(page, "capabilities-saved", "capabilities");
  });

  it("the lab fills the price list with the keyboard alone, each control showing its focus", async () => {
    const page = lab.page;
    await visit(page, "/lab/price-list");
    await page.getByText("No prices are saved yet").waitFor();
    await step(page, "price-list-empty", "price-list");
    // From the top of the page: Tab to each control, type its value, and see a focus ring on everything reached.
    await page.evaluate(() => (document.activeElement as HTMLElement | null)?.blur());
    const values: Record<string, string> = {
      "perSample.powder_reflection": "160.00",
      samplePreparation: "15.00",
      hazardousHandling: "25.00",
      rushMultiplier: "1.40",
      turnaroundDays: "6",
    };
    const reached: NonNullable<Awaited<ReturnType<typeof focusedElement>>>[] = [];
    const { passed } = await tabTo(page, (f) => f.name === "currency");
    reached.push(...passed.filter((p) => p !== null));
    // ArrowDown then ArrowUp on a closed select moves the choice and back: the currency stays EUR.
    await page.keyboard.press("ArrowDown");
    await page.keyboard.press("ArrowUp");
    expect(await page.getByLabel("Currency").inputValue()).toBe("EUR");
    for (const [name, value] of Object.entries(values)) {
      const { found, passed: more } = await tabTo(page, (f) => f.name === name, 20);
      reached.push(...more.filter((p) => p !== null));
      await page.keyboard.press("ControlOrMeta+a");
      await page.keyboard.type(value);
      expect(found.visibleFocus, `focus ring on ${name}`).toBe(true);
    }
    const { passed: last } = await tabTo(page, (f) => f.tag === "button" && f.text === "Save price list", 10);
    reached.push(...last.filter((p) => p !== null));
    const noRing = reached.filter((f) => !f.visibleFocus).map((f) => `${f.tag} ${f.name ?? f.text}`);
    expect(noRing, "controls reached by Tab without a visible focus indicator").toEqual([]);
    await step(page, "price-list-keyboard", "price-list-filled");
    await page.keyboard.press("Enter");
    await page.getByText("Price list saved.").waitFor();
    expect(await page.getByLabel("Powder, reflection (EUR)").inputValue()).toBe("160.00");
    expect(await page.getByLabel("Hazardous-handling fee (EUR)").inputValue()).toBe("25.00");
    await step(page, "price-list-saved", "price-list-saved");
  });

  it("a client posts a request with a hazardous sample and invites the new lab", async () => {
    const page = client.page;
    await visit(page, "/sign-in");
    await step(page, "client-sign-in", "sign-in");
    await signIn(page, "owner@pinecrest.example");
    await page.waitForURL(`${BASE_URL}/client`);
    await visit(page, "/client/requests/new");
    await page.getByLabel("Request title").fill(TITLE);
    await page.getByLabel("Label", { exact: true }).fill(SAMPLE);
    await page.getByLabel("Chemical formula").fill("ZnO");
    await page.getByLabel("Mass (mg)").fill("600");
    await page.getByLabel("Expected phase").fill("zincite ZnO");
    await page.getByLabel("Crystal system").selectOption("hexagonal");
    await page.getByLabel("Centering").selectOption("P");
    await page.getByLabel("a (Å)").fill("3.250");
    await page.getByLabel("b (Å)").fill("3.250");
    await page.getByLabel("c (Å)").fill("5.207");
    await page.getByLabel("γ (°)").fill("120");
    await step(page, "client-request-samples", "client-request-samples");
    await page.getByRole("button", { name: "Save and continue to hazards" }).click();
    await page.waitForURL(/\/edit\/hazards$/);
    requestId = new URL(page.url()).pathname.split("/")[3];
    await waitForHydration(page);
    // Zinc oxide: aquatic acute and chronic 1 (H400, H410) under GHS09, from memory of its usual SDS.
    await page.getByLabel(`GHS09 Environment (${SAMPLE})`).check();
    await page.getByLabel(`H-statements of ${SAMPLE}`).fill("H400, H410");
    await page.getByLabel(`Nanomaterial (${SAMPLE})`).check();
    await page.getByLabel(`Nanomaterial details (${SAMPLE})`).fill("Primary particles about 40 nm; handle in a ventilated enclosure.");
    await page.getByLabel(`Safety data sheet of ${SAMPLE} (PDF)`).setInputFiles(path.join(dir, "zno-sds.pdf"));
    await page.getByText("✓ zno-sds.pdf uploaded").waitFor();
    await step(page, "client-request-hazards", "client-request-hazards");
    await page.getByRole("button", { name: "Save and continue to measurement" }).click();
    await page.waitForURL(/\/edit\/measurement$/);
    await waitForHydration(page);
    await page.getByLabel("Deadline").fill("2099-05-31");
    await step(page, "client-request-measurement", "client-request-measurement");
    await page.getByRole("button", { name: "Save and continue to labs" }).click();
    await page.waitForURL(/\/edit\/labs$/);
    await waitForHydration(page);
    // Only the new lab is invited, so the request reaches no other lab's inbox.
    await page.getByRole("radio", { name: /Invited labs only/ }).check();
    await page.getByRole("checkbox", { name: `Invite ${LAB_NAME}` }).check();
    await step(page, "client-request-labs", "client-request-labs");
    await page.getByRole("button", { name: "Save and continue to review" }).click();
    await page.waitForURL(/\/edit\/review$/);
    await waitForHydration(page);
    await step(page, "client-request-review", "client-request-review");
    await page.getByRole("button", { name: "Publish request" }).click();
    await page.waitForURL(`${BASE_URL}/client/requests/${requestId}`);
    await page.getByText("No quotes yet").waitFor();
    await step(page, "client-request-published", "client-request-published");
  });

  it("the lab finds the request in its inbox, acknowledges the hazards and quotes from its price list", async () => {
    const page = lab.page;
    await visit(page, "/lab/inbox");
    const row = page.getByRole("row").filter({ hasText: TITLE });
    await row.getByText("invited").waitFor();
    await row.getByText("fits").waitFor();
    await step(page, "inbox", "inbox");
    await row.getByRole("link", { name: TITLE }).click();
    await page.waitForURL(`${BASE_URL}/lab/requests/${requestId}`);
    await waitForHydration(page);
    await page.getByRole("img", { name: "GHS09 Environment" }).first().waitFor();
    await page.getByRole("link", { name: "zno-sds.pdf" }).waitFor();
    expect(await page.getByRole("region", { name: "Quote builder" }).count()).toBe(0);
    await step(page, "request-hazards", "request-hazards");
    await page.getByRole("button", { name: "Acknowledge hazard declaration" }).click();
    await page.getByText(`Hazard declaration acknowledged by ${MANAGER}`).waitFor();
    const builder = page.getByRole("region", { name: "Quote builder" });
    await builder.waitFor();
    await waitForHydration(page);
    // Drafted from the price list: 160.00 per sample, 15.00 preparation, 25.00 hazardous handling; 6 days.
    expect(await builder.getByLabel("Item 1 unit price").inputValue()).toBe("160.00");
    expect(await builder.getByLabel("Item 2 unit price").inputValue()).toBe("15.00");
    expect(await builder.getByLabel("Item 3 unit price").inputValue()).toBe("25.00");
    expect(await builder.getByLabel("Turnaround (days)").inputValue()).toBe("6");
    // The running total follows the items as they are typed: 160.00 + 15.00 + 25.00.
    const total = builder.getByRole("status", { name: "Quote total" });
    await total.getByText(/200\.00/).waitFor();
    await builder.getByLabel("Item 1 quantity").fill("2");
    await total.getByText(/360\.00/).waitFor();
    await builder.getByLabel("Item 1 quantity").fill("1");
    await total.getByText(/200\.00/).waitFor();
    await builder.getByLabel("Notes for the client").fill("Measured on K1 with Cu Kα; the remainder of the powder is returned.");
    await step(page, "quote-builder", "quote-builder");
    await builder.getByRole("button", { name: "Send quote" }).click();
    await page.getByText("Quote sent to the client.").waitFor();
    await page
      .getByRole("region", { name: "Your quotes" })
      .getByText(/200\.00/)
      .waitFor();
    await step(page, "quote-sent", "quote-sent");
    await visit(page, "/lab/quotes");
    await page.getByRole("link", { name: TITLE }).waitFor();
    await step(page, "quotes", "quotes");
  });

  it("the client accepts the quote, pays with the success card and ships the sample", async () => {
    const page = client.page;
    await visit(page, `/client/requests/${requestId}`);
    await page.getByRole("article", { name: `Quote from ${LAB_NAME}` }).waitFor();
    await step(page, "client-quote", "client-quote");
    // Pinecrest buys against purchase orders in the demo (app/demo/seed-purchase-orders.server.ts).
    await page
      .getByRole("article", { name: `Quote from ${LAB_NAME}` })
      .getByLabel(/Purchase-order number/)
      .fill("PSF-PO-09001");
    await page.getByRole("button", { name: `Accept ${LAB_NAME}'s quote` }).click();
    await page.waitForURL(/\/client\/orders\/[0-9a-f-]+$/);
    orderPath = new URL(page.url()).pathname;
    await waitForHydration(page);
    await step(page, "client-order-awaiting-payment", "client-order-awaiting-payment");
    await page.getByRole("button", { name: /^Pay / }).click();
    await page.waitForURL(/127\.0\.0\.1:54332\/pay\//);
    await page.getByLabel("Card number").fill("4242424242424242");
    await page.getByLabel(/Expiry/).fill("12/34");
    await page.getByLabel(/CVC/).fill("123");
    await page.getByRole("button", { name: /^Pay/ }).click();
    await page.waitForURL(/\/client\/orders\/[0-9a-f-]+$/);
    await page.getByText("Payment received. The money is held until you accept the delivery.").waitFor();
    await waitForHydration(page);
    await page.getByLabel("Carrier").fill("Skylark Couriers");
    await page.getByLabel("Tracking number").fill(`SK${RUN.toUpperCase()}0042`);
    await page.getByRole("button", { name: "Mark samples shipped" }).click();
    await page
      .getByText(/Shipped with Skylark Couriers/)
      .first()
      .waitFor();
    await step(page, "client-order-shipped", "client-order-shipped");
  });

  it("the lab receives the sample, measures, uploads the scan and delivers", async () => {
    const page = lab.page;
    await visit(page, "/lab/work-queue");
    await page.getByRole("link", { name: TITLE }).waitFor();
    await step(page, "work-queue", "work-queue");
    await page.getByRole("link", { name: TITLE }).click();
    await page.waitForURL(/\/lab\/orders\/[0-9a-f-]+$/);
    await waitForHydration(page);
    expect(new URL(page.url()).pathname).toBe(orderPath.replace("/client/", "/lab/"));
    await page
      .getByText(/Shipped with Skylark Couriers/)
      .first()
      .waitFor();
    // The parcel is checked against its declaration and safety data sheet, which opens from the order.
    expect(await page.getByRole("link", { name: "zno-sds.pdf" }).getAttribute("href")).toContain("X-Amz-Signature=");
    await step(page, "order-in-transit", "order-in-transit");
    await page.getByRole("button", { name: "Mark samples received" }).click();
    await page.getByRole("button", { name: "Start measuring" }).waitFor();
    await waitForHydration(page);
    await step(page, "order-received", "order-received");
    await page.getByRole("button", { name: "Start measuring" }).click();
    await page.getByRole("link", { name: "Upload delivery files" }).waitFor();
    await expect.poll(() => page.getByRole("button", { name: "Mark data delivered" }).isDisabled()).toBe(true);
    await step(page, "order-measuring", "order-measuring");

    await page.getByRole("link", { name: "Upload delivery files" }).click();
    await page.waitForURL(/\/files$/);
    await waitForHydration(page);
    const scan = `${SAMPLE}_Cu_20-120.xy`;
    await page.getByLabel("Choose files to deliver").setInputFiles(path.join(dir, scan));
    await page.getByLabel(`Sample for ${scan}`).selectOption({ label: SAMPLE });
    await step(page, "delivery-queued", "delivery-queued");
    await page.getByRole("button", { name: "Upload 1 file" }).click();
    await page.locator(`[data-upload="${scan}"]`).getByText("Stored and verified as version 1.").waitFor({ timeout: 30_000 });
    const fileRow = page.locator(`[data-file-row="${scan} v1"]`);
    await fileRow.locator('[data-testid="check-status"][data-status="done"]').waitFor({ timeout: 45_000 });
    await step(page, "delivery-checked", "delivery-checked");

    await page.getByRole("link", { name: "Back to the order, to mark the data delivered" }).click();
    await page.waitForURL(`${BASE_URL}${orderPath.replace("/client/", "/lab/")}`);
    await waitForHydration(page);
    await page.getByRole("button", { name: "Mark data delivered" }).click();
    await page.getByText(/Delivered\. The client reviews the data/).waitFor();
    await step(page, "order-delivered", "order-delivered");
  });

  it("the client accepts the delivery and the lab sees its payout", async () => {
    const page = client.page;
    await visit(page, orderPath);
    await page.getByRole("button", { name: "Accept delivery" }).click();
    await page
      .getByText(/Delivery accepted/)
      .first()
      .waitFor();
    await step(page, "client-delivery-accepted", "client-delivery-accepted");

    // The payout: the quote total 200.00 minus the 8 % platform fee (docs/design.md#money-flow) = 184.00, shown once it exists.
    const payouts = lab.page;
    await visit(payouts, "/lab/payouts");
    const table = payouts.getByRole("table", { name: "Payouts" });
    const deadline = Date.now() + 30_000;
    while (!(await table.getByText(/184\.00/).count())) {
      if (Date.now() > deadline) throw new Error("No payout of 184.00 on the payouts screen within 30 s");
      await new Promise((r) => setTimeout(r, 1500));
      await visit(payouts, "/lab/payouts");
    }
    const paid = table.getByRole("row").filter({ hasText: /184\.00/ });
    await paid.getByRole("link", { name: TITLE }).waitFor();
    await paid.getByRole("cell", { name: /16\.00/ }).waitFor();
    await step(payouts, "payouts-paid", "payouts-paid");
    await visit(payouts, orderPath.replace("/client/", "/lab/"));
    await payouts.getByText("Accepted by the client; see Payouts.").waitFor();
    await step(payouts, "order-paid-out", "order-paid-out");
  });
});
