// The admin's whole job in a real browser, through the screens only: vet a new lab with its calibration check,
// resolve a dispute with a split (by keyboard alone), read the ledger with its filters and export, and find both
// decisions in the audit log. A screenshot per step under test-results/screenshots/journey-admin/, and axe-core
// on every screen visited.
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import pg from "pg";
import type { Page } from "playwright-core";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { databaseUrl } from "../../services/postgres";
import { checkAccessibility, focusedElement, tabTo } from "./a11y";
import { BASE_URL, openBrowser, screenshot, signIn, waitForHydration, type Browser } from "./harness";
import { badge, fillVettingApplication, handInVettingApplication, type Applicant } from "./vetting-applicant";

// A lab of its own: the demo's Meridian (awaiting vetting) is edited by lab-vetting.test.ts and must stay unvetted
// for the directory tests, so the admin vets a lab that applies in this file.
const APPLICANT: Applicant = {
  labName: "Kestrel Bay Diffraction",
  person: "Oriane Vasquez-Holm",
  email: "manager@kestrelbay-diffraction.example",
  password: "kestrel-bay-2026",
  city: "Port Kestrel",
  country: "Ireland",
  description: "Powder diffraction for mineral and pigment producers; one reflection instrument with a copper tube.",
  accreditation: "IE-17025-2207",
  instrument: "Reflection diffractometer K1",
  seed: 47,
};
// The demo scenario's open dispute (app/demo/seed-orders.server.ts): Halvorsen against Granite Ridge.
const DISPUTE = "Impurity check of NMC lot HC-2655";
const ADMIN = "admin@diffractory.example";

let admin: Browser;
let lab: Browser | undefined;
let dir = "";
let shot = 0;
const started = Date.now();

/** A numbered screenshot of this journey's step. */
async function step(page: Page, name: string) {
  shot += 1;
  await screenshot(page, `journey-admin/${String(shot).padStart(2, "0")}-${name}`);
}

/** Follows a link of the admin navigation and waits for the screen's heading. */
async function navigate(page: Page, link: string, heading: string | RegExp) {
  await page
    .getByRole("navigation", { name: /navigation/ })
    .getByRole("link", { name: link, exact: true })
    .click();
  await page.getByRole("heading", { level: 1, name: heading }).waitFor();
  await waitForHydration(page);
}

/** A money figure on screen ("€1,234.50", "-€12.00", "EUR 5.00") as minor units. */
function minorUnits(text: string) {
  const m = text.replace(/\u2212/g, "-").match(/(-?)[^\d-]*([\d,]+)\.(\d{2})/);
  if (!m) throw new Error(`No amount in "${text}"`);
  return (m[1] === "-" ? -1 : 1) * (Number(m[2].replace(/,/g, "")) * 100 + Number(m[3]));
}

beforeAll(async () => {
  dir = fs.mkdtempSync(path.join(os.tmpdir(), "diffractory-journey-admin-"));
  fs.rmSync(path.join(process.cwd(), "test-results/screenshots/journey-admin"), { recursive: true, force: true });
  admin = await openBrowser();
});

afterAll(async () => {
  await lab?.close();
  await admin?.close();
  if (dir) fs.rmSync(dir, { recursive: true, force: true });
  // Sign-in attempts are counted per address; leave none behind for the next file.
  const c = new pg.Client({ connectionString: databaseUrl("diffractory_browser") });
  await c.connect();
  await c.query("delete from sign_in_attempts");
  await c.end();
  console.info(`journey-admin: ${shot} screenshots in ${((Date.now() - started) / 1000).toFixed(1)} s`);
});

describe("admin journey", () => {
  it("a new lab hands in its application with a calibration scan (in its own browser)", async () => {
    lab = await openBrowser();
    await fillVettingApplication(lab.page, APPLICANT, dir);
    await handInVettingApplication(lab.page);
    await step(lab.page, "applicant-handed-in");
    expect(lab.consoleErrors, "console errors in the applicant's browser").toEqual([]);
    await lab.close();
    lab = undefined;
  });

  it("the admin signs in with password and code and sees what waits", async () => {
    const { page } = admin;
    await signIn(page, ADMIN);
    await page.waitForURL(`${BASE_URL}/admin`);
    await page.getByRole("heading", { level: 1, name: "Platform overview" }).waitFor();
    await waitForHydration(page);
    await page.getByRole("link", { name: /Applications in review/ }).waitFor();
    await page.getByRole("link", { name: /Open disputes/ }).waitFor();
    await checkAccessibility(page, "admin-home");
    await step(page, "admin-home");
  });

  it("vets the lab: reads the calibration check, a rejection without a note is refused, then approves", async () => {
    const { page } = admin;
    await navigate(page, "Vetting queue", "Vetting queue");
    const row = page.getByRole("row", { name: new RegExp(APPLICANT.labName) });
    await row.waitFor();
    // The vetting state and the calibration verdict carry words (and a shape), not colour alone.
    await row.getByText("In review").waitFor();
    await row.getByText("Consistent").waitFor();
    await checkAccessibility(page, "admin-vetting-queue");
    await step(page, "vetting-queue");

    await row.getByRole("link", { name: `Review ${APPLICANT.labName}` }).click();
    await page.getByRole("heading", { level: 1, name: APPLICANT.labName }).waitFor();
    await waitForHydration(page);
    const check = page.getByRole("region", { name: "Calibration check" });
    await check.getByText("Within tolerance").waitFor();
    await check.getByRole("img", { name: /Calibration scan of Silicon, NIST SRM 640c/ }).waitFor();
    // The refined cell against the certified one: NIST SRM 640c, a = 5.4311946 ± 0.0000092 Å (its certificate,
    // docs/reference-values.md#certified-lattice-parameters); approval needs |Δa| ≤ 0.0005 Å.
    const refined = Number((await check.getByRole("definition").nth(2).textContent())!.match(/^\s*(\d+\.\d+)/)![1]);
    const certified = Number((await check.getByRole("definition").nth(3).textContent())!.match(/^\s*(\d+\.\d+)/)![1]);
    expect(certified).toBeCloseTo(5.4311946, 6);
    expect(Math.abs(refined - certified)).toBeLessThanOrEqual(0.0005);
    await check.getByText(/Tolerance for approval: \|deviation\| ≤ 0\.0005 Å/).waitFor();
    await checkAccessibility(page, "admin-lab-review");
    await step(page, "lab-review-calibration-check");

    // Rejecting needs a note for the lab and the record: without one nothing changes.
    await page.getByRole("button", { name: "Reject" }).click();
    await page.getByText(/^Write a note for the lab and the record/).waitFor();
    await badge(page, "In review").waitFor();
    await checkAccessibility(page, "admin-lab-review-refused");
    await step(page, "reject-without-note-refused");

    await page.getByLabel("Note to the lab and the record").fill("Accreditation current; silicon calibration within tolerance.");
    await page.getByRole("button", { name: "Approve" }).click();
    await page.getByText("Lab approved.").waitFor();
    await badge(page, "Approved").waitFor();
    // The day in the viewer's locale (docs/design-system.md, dates): "5 Dec 2026" in Britain, "Dec 5, 2026" in the US.
    await page.getByText(/Last decision \((\d{1,2} [A-Z][a-z]{2} \d{4}|[A-Z][a-z]{2} \d{1,2}, \d{4})\): Accreditation current/).waitFor();
    await checkAccessibility(page, "admin-lab-approved");
    await step(page, "lab-approved");
  });

  let refundMinor = 0;
  let payoutMinor = 0;
  it("reads both sides of the open dispute and settles it with a split, by keyboard alone", async () => {
    const { page } = admin;
    await navigate(page, "Disputes", "Disputes");
    const card = page.getByRole("listitem").filter({ has: page.getByRole("heading", { name: new RegExp(DISPUTE) }) });
    await card.waitFor();
    await card.locator("[data-badge]", { hasText: /^\W*Open$/ }).waitFor();
    // The client's side (the reason given) and the lab's side (its notes on the order's timeline).
    await card.getByRole("region", { name: /Client/ }).waitFor();
    await card.getByRole("region", { name: /Lab/ }).waitFor();
    const heldMinor = minorUnits((await card.getByText(/· held /).textContent())!.split("· held ").pop()!);
    expect(heldMinor).toBeGreaterThan(0);
    await checkAccessibility(page, "admin-disputes");
    await step(page, "disputes-open");

    // A split: 30 % back to the client, the rest to the lab minus the 8 % platform fee (docs/design.md#money-flow).
    refundMinor = Math.round(heldMinor * 0.3);
    const payoutPart = heldMinor - refundMinor;
    payoutMinor = payoutPart - Math.round((payoutPart * 800) / 10_000);
    const refundText = (refundMinor / 100).toFixed(2);

    // Keyboard only from here: Tab from the dispute's heading, Enter opens the lab's timeline, Enter sends the form.
    await card.getByRole("heading", { name: new RegExp(DISPUTE) }).click();
    const timeline = await tabTo(page, (f) => f.tag === "summary", 10);
    expect(timeline.found.visibleFocus, "visible focus on the timeline toggle").toBe(true);
    await page.keyboard.press("Enter");
    await card.getByRole("list", { name: "Order timeline" }).getByText("Data delivered").first().waitFor();
    const refundField = await tabTo(page, (f) => f.name === "refund", 10);
    expect(refundField.found.visibleFocus, "visible focus on the refund field").toBe(true);
    await page.keyboard.type(refundText);
    // Without a reason the decision is refused, says why, and the keyboard lands on the reason.
    const submit = await tabTo(page, (f) => f.tag === "button" && f.text === "Decide and settle", 5);
    expect(submit.found.visibleFocus, "visible focus on the submit button").toBe(true);
    await page.keyboard.press("Enter");
    await card.getByText("Write the reason for the decision.").waitFor();
    await card.locator("[data-badge]", { hasText: /^\W*Open$/ }).waitFor();
    await page.waitForFunction(() => (document.activeElement as HTMLTextAreaElement | null)?.name === "reason");
    const reasonField = await focusedElement(page);
    expect(reasonField?.visibleFocus, "visible focus on the reason field").toBe(true);
    await step(page, "dispute-refused-without-reason");
    await page.keyboard.type("The nickel impurity was real but one of the two scans is usable; 30 % is refunded and the rest paid to the lab.");
    const again = await tabTo(page, (f) => f.tag === "button" && f.text === "Decide and settle", 5);
    expect(again.found.visibleFocus, "visible focus on the submit button").toBe(true);
    await step(page, "dispute-decision-by-keyboard");
    await page.keyboard.press("Enter");
    await page.getByText("Dispute decided; the refund and payout are under way.").waitFor();
    await card.locator("[data-badge]", { hasText: /^\W*Decided$/ }).waitFor();
    const decision = (await card.getByText(/^Refunded /).textContent())!.match(/^Refunded (\S+), paid to the lab (\S+)\. /)!;
    expect(minorUnits(decision[1])).toBe(refundMinor);
    expect(minorUnits(decision[2])).toBe(payoutMinor);
    await checkAccessibility(page, "admin-disputes-decided");
    await step(page, "dispute-resolved");
  });

  it("reads the ledger: the refund and payout, the totals add up, filters and the CSV export", async () => {
    const { page } = admin;
    await navigate(page, "Ledger", "Ledger");
    await page.getByText("Every transaction balances").waitFor();
    // Taken in = paid to labs + platform fees + refunded + still held, per currency, from the screen's summary.
    const eur = page.getByRole("region", { name: "Totals in EUR" });
    const figure = async (key: string) => minorUnits((await eur.locator(`dd[data-total="${key}"]`).textContent())!);
    const [takenIn, paidOut, fees, refunded, stillHeld] = await Promise.all(["taken-in", "paid-out", "fees", "refunded", "held"].map(figure));
    expect(takenIn).toBeGreaterThan(0);
    expect(paidOut + fees + refunded + stillHeld).toBe(takenIn);
    await eur.getByText("Taken in = paid to labs + fees + refunded + still held").waitFor();
    await checkAccessibility(page, "admin-ledger");
    await step(page, "ledger");

    // The dispute's refund and payout are in the ledger.
    await page.getByLabel("Movement").selectOption("refund");
    await page.getByRole("button", { name: "Filter" }).click();
    await page.waitForURL(/kind=refund/);
    const refundRow = page
      .getByRole("row")
      .filter({ hasText: "platform_cash" })
      .filter({ hasText: (refundMinor / 100).toFixed(2) });
    await refundRow.first().waitFor();
    await checkAccessibility(page, "admin-ledger-refunds");
    await step(page, "ledger-filtered-refunds");
    await page.getByLabel("Movement").selectOption("payout");
    await page.getByRole("button", { name: "Filter" }).click();
    await page.waitForURL(/kind=payout/);
    await page
      .getByRole("row")
      .filter({ hasText: "platform_cash" })
      .filter({ hasText: (payoutMinor / 100).toFixed(2) })
      .first()
      .waitFor();

    // A bad filter says what is wrong and shows nothing.
    await page.getByLabel("Currency").fill("euro");
    await page.getByRole("button", { name: "Filter" }).click();
    await page.getByRole("alert").getByText("A currency is three capital letters, e.g. EUR.").waitFor();
    await checkAccessibility(page, "admin-ledger-bad-filter");
    await step(page, "ledger-bad-filter");
    await page.getByLabel("Currency").fill("EUR");
    await page.getByRole("button", { name: "Filter" }).click();
    await page.waitForURL(/currency=EUR/);

    // The export carries the same filter.
    const [download] = await Promise.all([page.waitForEvent("download"), page.getByRole("link", { name: "Download CSV" }).click()]);
    expect(download.suggestedFilename()).toBe("diffractory-ledger.csv");
    const csv = fs
      .readFileSync((await download.path())!, "utf8")
      .trim()
      .split("\r\n");
    expect(csv[0]).toBe("transaction_id,created_at,kind,order_id,account,amount_minor,currency,provider_object_id,memo,order_number,purchase_order_number");
    const rows = csv.slice(1).map((l) => l.split(","));
    expect(rows.length).toBeGreaterThan(0);
    expect(rows.every((r) => r[2] === "payout" && r[6] === "EUR")).toBe(true);
    expect(rows.some((r) => r[4] === "platform_cash" && Number(r[5]) === -payoutMinor)).toBe(true);
    await step(page, "ledger-payouts-exported");
  });

  it("finds the dispute decision and the vetting decision in the audit log", async () => {
    const { page } = admin;
    await navigate(page, "Audit log", "Audit log");
    // Each entry reads as a sentence, the amounts as money (docs/design.md#records-that-hold).
    const resolved = page.getByRole("row").filter({ hasText: "resolved the dispute on order" }).filter({ hasText: ADMIN }).first();
    await resolved.waitFor();
    const refundMoney = (refundMinor / 100).toLocaleString("en", { minimumFractionDigits: 2, maximumFractionDigits: 2 });
    await resolved.getByText(new RegExp(`refund [^0-9\\s]*${refundMoney.replace(/[.,]/g, "\\$&")}`)).waitFor();
    const approved = page
      .getByRole("row")
      .filter({ hasText: `approved ${APPLICANT.labName}` })
      .first();
    await approved.waitFor();
    await approved.getByText(/Accreditation current/).waitFor();
    await checkAccessibility(page, "admin-audit-log");
    await step(page, "audit-log");
  });

  it("looks up the new lab's manager among the users and reads the outbox", async () => {
    const { page } = admin;
    await navigate(page, "Users", "Users");
    await page
      .getByRole("row", { name: new RegExp(APPLICANT.email) })
      .getByText(`${APPLICANT.labName} (lab, manager)`)
      .waitFor();
    await checkAccessibility(page, "admin-users");
    await step(page, "users");

    await navigate(page, "Outbox", "Outbox");
    await page.getByRole("link", { name: /^All/ }).click();
    await page.waitForURL(/status=all/);
    // The approval went out to the lab's manager as an e-mail.
    await page.getByRole("row").filter({ hasText: APPLICANT.email }).first().waitFor();
    await checkAccessibility(page, "admin-outbox");
    await step(page, "outbox");
    expect(admin.consoleErrors, "console errors in the admin's browser").toEqual([]);
  });
});
