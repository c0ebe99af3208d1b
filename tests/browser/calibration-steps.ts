// A lab manager's steps on the calibration screens, shared by the browser tests of calibration on record.
import { expect } from "vitest";
import type { Page } from "playwright-core";
import { visit, waitForHydration } from "./harness";

/** From the capabilities screen, the instrument card's link to its calibration record; answers the record's path. */
export async function openCalibrationRecord(page: Page, instrument: string) {
  await visit(page, "/lab/capabilities");
  await page
    .getByRole("article", { name: `Instrument ${instrument}` })
    .getByRole("link", { name: "Calibration record" })
    .click();
  await page.getByRole("heading", { name: `Calibration of ${instrument}` }).waitFor();
  return new URL(page.url()).pathname;
}

/** Uploads a scan of the standard (the one preselected, or the one whose label matches) and waits until it passed. */
export async function recordCalibrationScan(page: Page, file: string, standard?: RegExp) {
  await waitForHydration(page);
  if (standard) await page.getByLabel(standard).check();
  await page.getByLabel(/Scan of the standard/).setInputFiles(file);
  await page.getByText(`✓ ${file.split("/").pop()} uploaded`).waitFor();
  await page.getByRole("button", { name: "Check and record" }).click();
  const answer = page.getByText(/^Calibration (passed|failed)/).first();
  await answer.waitFor({ timeout: 90_000 });
  expect(await answer.textContent()).toMatch(/^Calibration passed: /);
}
