// A new lab's vetting application through the screens: account, profile, accreditation certificate, radiation-licence
// attestation and a calibration scan of silicon. Used by the lab-vetting test and the admin journey.
import fs from "node:fs";
import path from "node:path";
import type { Page } from "playwright-core";
import { MINIMAL_PDF, simulatedXy } from "./test-files";
import { SILICON } from "~/diffraction/structures";
import { BASE_URL, visit } from "./harness";

/** A state badge (shape + word) by its word. */
export const badge = (page: Page, word: string) => page.locator("[data-badge]", { hasText: new RegExp(`^\\W*${word}$`) }).first();

export interface Applicant {
  labName: string;
  person: string;
  email: string;
  password: string;
  city: string;
  country: string;
  description: string;
  accreditation: string;
  instrument: string;
  /** Noise seed of the simulated calibration scan. */
  seed: number;
}

/** Writes accreditation.pdf and si-640c.xy (a silicon scan from the NIST SRM 640c cell, docs/reference-values.md#certified-lattice-parameters, on Cu Kα1+Kα2) into `dir`. */
export function writeVettingFiles(dir: string, seed: number) {
  fs.writeFileSync(path.join(dir, "accreditation.pdf"), MINIMAL_PDF);
  fs.writeFileSync(
    path.join(dir, "si-640c.xy"),
    simulatedXy("Silicon SRM 640c calibration", { structure: SILICON, from: 15, to: 140, background: 120, slope: -0.3, seed }),
  );
}

/** Creates the lab's account and fills in its vetting application, up to (not including) handing it in. */
export async function fillVettingApplication(page: Page, a: Applicant, dir: string) {
  writeVettingFiles(dir, a.seed);
  await visit(page, "/create-account");
  await page.getByLabel("A lab").check();
  await page.getByLabel("Your name").fill(a.person);
  await page.getByLabel("E-mail").fill(a.email);
  await page.getByLabel("Password").fill(a.password);
  await page.getByLabel("Lab name").fill(a.labName);
  await page.getByLabel("City").fill(a.city);
  await page.getByLabel("Country").fill(a.country);
  await page.getByRole("button", { name: "Create account" }).click();
  await page.waitForURL(`${BASE_URL}/lab`);

  await visit(page, "/lab/vetting");
  await badge(page, "Applied").waitFor();
  await page.getByLabel("Description").fill(a.description);
  await page.getByLabel("Accreditation number").fill(a.accreditation);
  await page.getByLabel("Accreditation expires on").fill("2028-09-30");
  await page.getByLabel(/Accreditation certificate/).setInputFiles(path.join(dir, "accreditation.pdf"));
  await page.getByText("✓ accreditation.pdf uploaded").waitFor();
  await page.getByRole("checkbox", { name: /radiation licence/ }).check();
  await page.getByLabel("Your full name, as signature").fill(a.person);
  await page.getByLabel("Silicon, NIST SRM 640c").check();
  await page.getByLabel("Instrument", { exact: true }).fill(a.instrument);
  await page.getByLabel("Anode").selectOption("Cu");
  await page.getByLabel(/Calibration scan/).setInputFiles(path.join(dir, "si-640c.xy"));
  await page.getByText("✓ si-640c.xy uploaded").waitFor();
}

/** Hands the filled-in application in and waits for its calibration check. */
export async function handInVettingApplication(page: Page) {
  await page.getByRole("button", { name: "Hand in for review" }).click();
  await page.getByText("Application handed in. An admin will review it.").waitFor();
  await badge(page, "In review").waitFor();
  await page.getByRole("heading", { name: "Calibration check" }).waitFor();
}
