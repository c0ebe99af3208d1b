// Lab vetting in a real browser: a new lab hands in its application with a certificate and a calibration scan; an admin approves it.
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import pg from "pg";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { databaseUrl } from "../../services/postgres";
import { BASE_URL, openBrowser, screenshot, signIn, signOut, visit, type Browser } from "./harness";
import { badge, fillVettingApplication, handInVettingApplication } from "./vetting-applicant";

const LAB_NAME = "Thornbury Powder Lab";
let b: Browser;
let dir: string;

beforeAll(async () => {
  b = await openBrowser();
  dir = fs.mkdtempSync(path.join(os.tmpdir(), "diffractory-vetting-"));
});

afterAll(async () => {
  await b?.close();
  fs.rmSync(dir, { recursive: true, force: true });
  // Sign-in attempts are counted per address; leave none behind for the next file.
  const c = new pg.Client({ connectionString: databaseUrl("diffractory_browser") });
  await c.connect();
  await c.query("delete from sign_in_attempts");
  await c.end();
});

describe("lab vetting", () => {
  it("a new lab applies, the admin reviews the calibration check and approves", async () => {
    const page = b.page;
    await fillVettingApplication(
      page,
      {
        labName: LAB_NAME,
        person: "Idris Pemberton-Lowe",
        email: "manager@thornbury-powder.example",
        password: "thornbury-powder-2026",
        city: "Thornbury Wells",
        country: "New Zealand",
        description: "Contract powder diffraction for ceramics and cement producers, one reflection instrument.",
        accreditation: "NZ-17025-0815",
        instrument: "Reflection diffractometer A",
        seed: 21,
      },
      dir,
    );
    await screenshot(page, "lab-vetting-application");
    await handInVettingApplication(page);
    await screenshot(page, "lab-vetting-in-review");
    await signOut(page);

    await signIn(page, "admin@diffractory.example");
    await page.waitForURL(`${BASE_URL}/admin`);
    await visit(page, "/admin/vetting-queue");
    await page.getByRole("cell", { name: LAB_NAME, exact: true }).waitFor();
    await screenshot(page, "admin-vetting-queue");
    await page.getByRole("link", { name: `Review ${LAB_NAME}` }).click();
    await page.getByRole("heading", { name: LAB_NAME }).waitFor();
    await page.getByRole("heading", { name: "Calibration check" }).waitFor();
    await page.getByText("Within tolerance").waitFor();
    await page.getByRole("img", { name: /Calibration scan of Silicon, NIST SRM 640c/ }).waitFor();
    expect(await page.getByRole("link", { name: "accreditation.pdf" }).getAttribute("href")).toContain("X-Amz-Expires=300");
    await screenshot(page, "admin-lab-review");
    await page.getByLabel("Note to the lab and the record").fill("Accreditation and silicon calibration in order.");
    await page.getByRole("button", { name: "Approve" }).click();
    await page.getByText("Lab approved.").waitFor();
    await badge(page, "Approved").waitFor();
    await screenshot(page, "admin-lab-approved");
    expect(b.consoleErrors, "console errors in the browser").toEqual([]);
  });

  it("a lab manager adds an instrument with its d-spacing coverage and saves the price list (Meridian)", async () => {
    const page = b.page;
    await b.context.clearCookies();
    // Meridian (awaiting vetting, so not in the directory) edits its own capabilities; the approved demo labs stay
    // as seeded for the other browser tests that read the directory and quotes.
    await signIn(page, "lab@meridian.example");
    await page.waitForURL(`${BASE_URL}/lab`);
    await visit(page, "/lab/capabilities");
    const form = page.locator("form#instrument-new");
    await form.getByLabel("Instrument name").fill("Transmission capillary diffractometer");
    await form.getByLabel("Technique").selectOption("powder_transmission");
    await form.getByLabel("Anode", { exact: true }).selectOption("Mo");
    await form.getByLabel("Smallest 2θ (°)").fill("2");
    await form.getByLabel("Largest 2θ (°)").fill("190");
    await form.getByLabel("Smallest step (° 2θ)").fill("0.01");
    await form.getByLabel("Sealed capillary").check();
    await form.getByRole("button", { name: "Add instrument" }).click();
    await form.getByText("2θ lies between 0° and 180°.").waitFor();
    await form.getByLabel("Largest 2θ (°)").fill("145");
    await form.getByRole("button", { name: "Add instrument" }).click();
    await page.getByText("Instrument saved.").waitFor();
    // Bragg's law by hand: Mo Kα1 0.709317 Å over 2θ 2–145° → d 0.3719–20.32 Å.
    const card = page.getByRole("article", { name: "Instrument Transmission capillary diffractometer" });
    await card.getByText("d 0.3719–20.32 Å", { exact: false }).waitFor();
    await screenshot(page, "lab-capabilities");

    await visit(page, "/lab/price-list");
    await page.getByLabel("Currency").selectOption("CAD");
    await page.getByLabel("Powder, transmission (CAD)").fill("-20");
    await page.getByRole("button", { name: "Save price list" }).click();
    await page.getByText("Prices cannot be negative.").waitFor();
    await page.getByLabel("Powder, transmission (CAD)").fill("210.00");
    await page.getByRole("button", { name: "Save price list" }).click();
    await page.getByText("Price list saved.").waitFor();
    expect(await page.getByLabel("Powder, transmission (CAD)").inputValue()).toBe("210.00");
    await screenshot(page, "lab-price-list");
    expect(b.consoleErrors, "console errors in the browser").toEqual([]);
  });
});
