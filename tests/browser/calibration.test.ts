// The lab's calibration on record in a real browser: Granite Ridge's manager records a calibration scan of the
// silicon standard, the hourly job's function finds it overdue (withdrawn from matching), a passing scan brings
// it back, and the public profile shows the measured accuracy.
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import pg from "pg";
import { afterAll, afterEach, beforeAll, describe, expect, it } from "vitest";
import { SILICON } from "~/diffraction/structures";
import { databaseUrl } from "../../services/postgres";
import { openCalibrationRecord, recordCalibrationScan } from "./calibration-steps";
import { BASE_URL, clearSignInAttempts, openBrowser, query, screenshot, signIn, visit, type Browser } from "./harness";
import { simulatedXy } from "./test-files";

const INSTRUMENT = "Reflection diffractometer A (Cu)";
let b: Browser;
let dir: string;
let calibrationPath: string;
/** The instrument's scans on record before this file's (the demo seeds a year of them). */
let before = 0;

/** The instrument's calibrations, all of them or those of the last 12 months (the directory's window). */
async function scansOnRecord(lastTwelveMonths = false) {
  const [row] = await query<{ n: number }>(
    `select count(*)::int as n from instrument_calibrations c join instruments i on i.id = c.instrument_id
     join organisations o on o.id = i.lab_id
     where o.slug = 'granite-ridge-characterisation' and i.name = $1 ${lastTwelveMonths ? "and c.measured_at >= now() - interval '12 months'" : ""}`,
    [INSTRUMENT],
  );
  return row.n;
}

beforeAll(async () => {
  b = await openBrowser();
  dir = fs.mkdtempSync(path.join(os.tmpdir(), "diffractory-calibration-"));
  // The demo's instrument A is Cu with a Kβ filter; the scan is simulated on that source.
  const scan = simulatedXy("Silicon SRM 640c calibration", {
    structure: SILICON,
    radiation: { kind: "anode", anode: "Cu", monochromation: "k_beta_filtered" },
    from: 15,
    to: 140,
    background: 120,
    slope: -0.3,
    seed: 5,
  });
  fs.writeFileSync(path.join(dir, "si-640c-monthly.xy"), scan);
  before = await scansOnRecord();
});
afterEach(() => {
  expect(b.consoleErrors, "console errors in the browser").toEqual([]);
});
afterAll(async () => {
  await b?.close();
  fs.rmSync(dir, { recursive: true, force: true });
  await clearSignInAttempts();
  // The overdue step ran the job's function in this process; its pool closes with the test.
  if (process.env.DATABASE_URL) await (await import("~/db/client.server")).db.$client.end();
});

const recordScan = () => recordCalibrationScan(b.page, path.join(dir, "si-640c-monthly.xy"));

describe("calibration on record", () => {
  it("a lab manager records a calibration scan from the instrument's card", async () => {
    const page = b.page;
    await signIn(page, "lab@graniteridge.example");
    await page.waitForURL(`${BASE_URL}/lab`);
    calibrationPath = await openCalibrationRecord(page, INSTRUMENT);
    await recordScan();
    await page.getByText("Calibration in order", { exact: true }).first().waitFor();
    await page.getByRole("heading", { name: "Control charts" }).waitFor();
    await page.getByText(new RegExp(`^Deviation from the certificate: ${before + 1} scans?, latest`)).waitFor();
    await screenshot(page, "calibration-recorded");
  });

  it("the hourly job marks it overdue and withdraws it; a passing scan brings it back", async () => {
    const page = b.page;
    const instrumentId = calibrationPath.split("/")[3];
    const c = new pg.Client({ connectionString: databaseUrl("diffractory_browser") });
    await c.connect();
    try {
      // Only the due date is moved by hand (a month passing); the job's own function does the rest.
      await c.query("update instruments set calibration_due_at = now() - interval '1 day' where id = $1", [instrumentId]);
    } finally {
      await c.end();
    }
    process.env.DATABASE_URL = databaseUrl("diffractory_browser");
    const { markOverdueCalibrations } = await import("~/models/labs/calibration.server");
    expect(await markOverdueCalibrations(new Date(), [instrumentId])).toBe(1);
    await visit(page, calibrationPath);
    await page.getByText("Calibration overdue", { exact: true }).first().waitFor();
    await page.getByText(/Withdrawn from matching: its calibration scan is overdue/).waitFor();
    await screenshot(page, "calibration-overdue");
    await recordScan();
    await page.getByText("Calibration in order", { exact: true }).first().waitFor();
    await page.getByText(new RegExp(`^Deviation from the certificate: ${before + 2} scans, latest`)).waitFor();
    await screenshot(page, "calibration-back-in-order");
  });

  it("the public profile shows the instrument's measured accuracy", async () => {
    const page = b.page;
    await b.context.clearCookies();
    await visit(page, "/labs/granite-ridge-characterisation");
    const recent = await scansOnRecord(true);
    expect(recent).toBeGreaterThanOrEqual(2);
    await page.getByRole("cell", { name: new RegExp(`^Si: [+−]?0\\.\\d{5} Å, ${recent} scans in 12 months`) }).waitFor();
    await page.getByText(/^(On time: \d+ of \d+ orders? in 12 months|No orders delivered in 12 months)$/).waitFor();
    await screenshot(page, "calibration-public-accuracy");
  });
});
