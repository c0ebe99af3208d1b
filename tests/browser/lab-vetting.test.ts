// Lab vetting in a real browser: a new lab hands in its application with a certificate and a calibration scan; an admin approves it.
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import pg from "pg";
import type { Page } from "playwright-core";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { formatScanAsXy, simulatePattern } from "~/diffraction/simulate";
import { SILICON } from "~/diffraction/structures";
import { databaseUrl } from "../../services/postgres";
import { BASE_URL, openBrowser, screenshot, signIn, signOut, visit, type Browser } from "./harness";

/** A state badge (shape + word) by its word. */
const badge = (page: Page, word: string) => page.locator("span.rounded-full", { hasText: new RegExp(`^\\W*${word}$`) }).first();

const LAB_NAME = "Thornbury Powder Lab";
let b: Browser;
let dir: string;

beforeAll(async () => {
  b = await openBrowser();
  dir = fs.mkdtempSync(path.join(os.tmpdir(), "diffractory-vetting-"));
  fs.writeFileSync(path.join(dir, "accreditation.pdf"), "%PDF-1.4\n1 0 obj << /Type /Catalog >> endobj\ntrailer << /Root 1 0 R >>\n%%EOF\n");
  // A silicon scan simulated from the NIST SRM 640c cell (REFERENCE.md) on Cu Kα1+Kα2.
  const sim = simulatePattern({
    structure: SILICON,
    radiation: { kind: "anode", anode: "Cu", monochromation: "k_alpha_doublet" },
    twoThetaMin: 15,
    twoThetaMax: 140,
    step: 0.02,
    background: { constant: 120, slope: -0.3 },
    noise: { seed: 21 },
  });
  fs.writeFileSync(path.join(dir, "si-640c.xy"), formatScanAsXy(sim, "Silicon SRM 640c calibration"));
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
    await visit(page, "/create-account");
    await page.getByLabel("A lab").check();
    await page.getByLabel("Your name").fill("Idris Pemberton-Lowe");
    await page.getByLabel("E-mail").fill("manager@thornbury-powder.example");
    await page.getByLabel("Password").fill("thornbury-powder-2026");
    await page.getByLabel("Lab name").fill(LAB_NAME);
    await page.getByLabel("City").fill("Thornbury Wells");
    await page.getByLabel("Country").fill("New Zealand");
    await page.getByRole("button", { name: "Create account" }).click();
    await page.waitForURL(`${BASE_URL}/lab`);

    await visit(page, "/lab/vetting");
    await badge(page, "Applied").waitFor();
    await page.getByLabel("Description").fill("Contract powder diffraction for ceramics and cement producers, one reflection instrument.");
    await page.getByLabel("Accreditation number").fill("NZ-17025-0815");
    await page.getByLabel("Accreditation expires on").fill("2028-09-30");
    await page.getByLabel(/Accreditation certificate/).setInputFiles(path.join(dir, "accreditation.pdf"));
    await page.getByText("✓ accreditation.pdf uploaded").waitFor();
    await page.getByRole("checkbox", { name: /radiation licence/ }).check();
    await page.getByLabel("Your full name, as signature").fill("Idris Pemberton-Lowe");
    await page.getByLabel("Silicon, NIST SRM 640c").check();
    await page.getByLabel("Instrument", { exact: true }).fill("Reflection diffractometer A");
    await page.getByLabel("Anode").selectOption("Cu");
    await page.getByLabel(/Calibration scan/).setInputFiles(path.join(dir, "si-640c.xy"));
    await page.getByText("✓ si-640c.xy uploaded").waitFor();
    await screenshot(page, "lab-vetting-application");
    await page.getByRole("button", { name: "Hand in for review" }).click();
    await page.getByText("Application handed in. An admin will review it.").waitFor();
    await badge(page, "In review").waitFor();
    await page.getByRole("heading", { name: "Calibration check" }).waitFor();
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
