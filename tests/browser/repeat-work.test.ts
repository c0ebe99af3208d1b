// Repeat work through the screens (docs/design.md#materials-and-lots, #standing-agreements, #lots-and-trends,
// #calibration-on-record): Halvorsen declares a material on its materials screen, proposes a standing agreement
// from an accepted Lakeside quote, the lab agrees, the client orders a new lot on the agreement without any quote
// and pays it; the lot's scan is delivered and checked and goes on the material's record, where, after twenty
// steady lots, it breaks a control rule (Western Electric Co., Statistical Quality Control Handbook, 1956: rule 1,
// one point beyond the 3σ limits); the trend flags it and the CSV holds it. Then the lab's calibration lapses:
// the hourly job's function marks it overdue and withdraws the instrument, and a passing scan brings it back.
//
// The accepted quote's order, the twenty earlier lots and the delivered scan (a copy of the demo's LFP lot
// HC-2645-1 scan and its check) are written straight into the browser database; the lot is put on the record by
// the same function the scan-check job calls (recordLot), and the due date is moved by hand (a month passing).
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import { afterAll, afterEach, beforeAll, describe, expect, it } from "vitest";
import { LANTHANUM_HEXABORIDE } from "~/diffraction/structures";
import { databaseUrl } from "../../services/postgres";
import { numberedOrderInsert } from "../setup/numbered-order";
import { checkAccessibility } from "./a11y";
import { openCalibrationRecord, recordCalibrationScan } from "./calibration-steps";
import {
  BASE_URL,
  clearSignInAttempts,
  openBrowser,
  query,
  screenshot,
  sendPaymentWebhooksHere,
  signIn,
  visit,
  waitForHydration,
  type Browser,
} from "./harness";
import { simulatedXy } from "./test-files";

const CODE = `LFP-RW-${Date.now().toString(36).toUpperCase()}`;
const NEW_LOT = "RW-021";
const INSTRUMENT = "Transmission diffractometer (Mo)";
const LAB6 = /^LaB6, NIST SRM 660c/;
const CAL_FILES = ["lab6-660c-november.xy", "lab6-660c-december.xy"];
// Lot-to-lot wobble of the twenty earlier lots, in Å (invented; a few parts in 10⁵ of the cell, as a steady plant).
const WOBBLE = [
  0.0001, -0.0002, 0.0003, -0.0001, 0.0, 0.0002, -0.0003, 0.0001, -0.0002, 0.0002, -0.0001, 0.0, 0.0003, -0.0003, 0.0001, -0.0001, 0.0002, -0.0002, 0.0, 0.0001,
];

let b: Browser;
let dir = "";
let undoWebhook = async () => {};
let sourceOrderId = "";
let materialId = "";
let agreementId = "";
let lotOrderId = "";
let instrumentId = "";
let calibrationPath = "";

beforeAll(async () => {
  b = await openBrowser();
  dir = fs.mkdtempSync(path.join(os.tmpdir(), "diffractory-repeat-work-"));
  // Lakeside's instrument is Mo Kα1 (its vetting standard LaB6, NIST SRM 660c); two monthly scans of it are
  // simulated on that source, each with its own counting noise.
  for (const [month, seed] of CAL_FILES.map((f, i) => [f, 19 + i] as const)) {
    const scan = simulatedXy("LaB6 SRM 660c calibration", {
      structure: LANTHANUM_HEXABORIDE,
      radiation: { kind: "anode", anode: "Mo", monochromation: "k_alpha1_only" },
      from: 8,
      to: 60,
      background: 150,
      slope: -0.5,
      seed,
    });
    fs.writeFileSync(path.join(dir, month), scan);
  }
  // The provider's webhooks must reach the app under test, whichever port it runs on.
  undoWebhook = await sendPaymentWebhooksHere();
  // An earlier order of Halvorsen at Lakeside from an accepted quote: the quote the agreement is made from.
  const [client] = await query<{ id: string }>("select id from organisations where slug = 'halvorsen-cathode-works'");
  const [lab] = await query<{ id: string }>("select id from organisations where slug = 'lakeside-institute-x-ray-core'");
  const [owner] = await query<{ id: string }>("select id from users where email = 'owner@halvorsen.example'");
  const [instrument] = await query<{ id: string }>("select id from instruments where lab_id = $1 and name = $2", [lab.id, INSTRUMENT]);
  instrumentId = instrument.id;
  const [request] = await query<{ id: string }>(
    "insert into requests (organisation_id, created_by, title, state, draft_step, range_min, range_max, currency) values ($1, $2, 'LFP lot RW-001, first measurement', 'awarded', 'review', 8, 60, 'USD') returning id",
    [client.id, owner.id],
  );
  await query("insert into samples (request_id, position, label, formula) values ($1, 0, 'RW-001', 'LiFePO4')", [request.id]);
  const [quote] = await query<{ id: string }>(
    `insert into quotes (request_id, lab_id, instrument_id, state, line_items, total_minor, currency, valid_until, turnaround_days, decided_at)
     values ($1, $2, $3, 'accepted', $4, 23000, 'USD', now() + interval '14 days', 12, now()) returning id`,
    [request.id, lab.id, instrument.id, JSON.stringify([{ description: "Transmission scan, one sample", quantity: 1, unitMinor: 23000, totalMinor: 23000 }])],
  );
  const [order] = await query<{ id: string }>(
    numberedOrderInsert(
      "request_id, quote_id, client_organisation_id, lab_id, state, amount_minor, currency",
      "$1::uuid, $2::uuid, $3::uuid, $4::uuid, 'awaiting_payment', 23000, 'USD'",
    ),
    [request.id, quote.id, client.id, lab.id],
  );
  await query("insert into order_events (order_id, to_state, note) values ($1, 'awaiting_payment', 'Quote accepted')", [order.id]);
  sourceOrderId = order.id;
  // The test calls the scan-check job's and the hourly job's functions in this process, on the browser database.
  process.env.DATABASE_URL = databaseUrl("diffractory_browser");
});
afterEach(async () => {
  expect(b.consoleErrors, "console errors in the browser").toEqual([]);
  await b.context.clearCookies();
});
afterAll(async () => {
  await b?.close();
  if (dir) fs.rmSync(dir, { recursive: true, force: true });
  await undoWebhook();
  await clearSignInAttempts();
  if (process.env.DATABASE_URL) await (await import("~/db/client.server")).db.$client.end();
});

describe("repeat work: material, agreement, a lot without quotes, its trend, and the lab's calibration", () => {
  it("the client declares the material on the materials screen", async () => {
    const page = b.page;
    await signIn(page, "owner@halvorsen.example");
    await page.waitForURL(`${BASE_URL}/client`);
    await visit(page, "/client/materials/new");
    await checkAccessibility(page, "repeat-work-material-new");
    await page.getByLabel("Product code").fill(CODE);
    await page.getByLabel("Name", { exact: true }).fill("Battery-grade lithium iron phosphate");
    await page.getByLabel("Chemical formula").fill("LiFePO4");
    await page.getByLabel("Mass per lot (mg)").fill("300");
    await page.getByLabel("Main phase").fill("olivine LiFePO4");
    await page.getByLabel("Crystal system").first().selectOption("orthorhombic");
    await page.getByLabel("Centering").first().selectOption("P");
    // Approximate olivine cell (Pnma): a 10.33, b 6.01, c 4.69 Å (from memory; the check refines it).
    for (const [label, value] of [
      ["a (Å)", "10.33"],
      ["b (Å)", "6.01"],
      ["c (Å)", "4.69"],
      ["α (°)", "90"],
      ["β (°)", "90"],
      ["γ (°)", "90"],
    ]) {
      await page.getByLabel(label, { exact: true }).first().fill(value);
    }
    await page.getByLabel("2θ from (°)").fill("8");
    await page.getByLabel("2θ to (°)").fill("60");
    await page.getByRole("button", { name: "Create the material" }).click();
    await page.waitForURL(/\/client\/materials\/[0-9a-f-]{36}$/);
    materialId = page.url().split("/").pop()!;
    await page.getByRole("heading", { name: `${CODE} — Battery-grade lithium iron phosphate` }).waitFor();
    await screenshot(page, "repeat-work-material");
  });

  it("proposes a standing agreement for the material from the accepted quote's order", async () => {
    const page = b.page;
    await signIn(page, "owner@halvorsen.example");
    await page.waitForURL(`${BASE_URL}/client`);
    await visit(page, `/client/orders/${sourceOrderId}`);
    await page.getByRole("link", { name: "Make this a standing agreement for one of your materials" }).click();
    await page.getByRole("heading", { name: "Make this a standing agreement" }).waitFor();
    await waitForHydration(page);
    await checkAccessibility(page, "repeat-work-propose");
    await page.getByLabel("Material").selectOption(materialId);
    await page.getByLabel(/Budget cap, net/).fill("2300.00");
    await page.getByRole("button", { name: "Propose the agreement to the lab" }).click();
    await page.waitForURL(/\/client\/agreements\/[0-9a-f-]{36}$/);
    agreementId = page.url().split("/").pop()!;
    await page.getByText("Agreement proposed; the lab has been asked to agree.").waitFor();
    await page.getByText("Waiting for Lakeside Institute X-ray Core to agree or decline.").waitFor();
    await checkAccessibility(page, "repeat-work-client-agreement");
  });

  it("the lab agrees", async () => {
    const page = b.page;
    await signIn(page, "lab@lakeside.example");
    await page.waitForURL(`${BASE_URL}/lab`);
    await visit(page, `/lab/agreements/${agreementId}`);
    await page.getByRole("heading", { name: "Agree or decline" }).waitFor();
    await checkAccessibility(page, "repeat-work-lab-agreement");
    await page.getByRole("button", { name: "Agree", exact: true }).click();
    await page.getByRole("heading", { name: "Agree or decline" }).waitFor({ state: "detached" });
    const [row] = await query<{ state: string }>("select state from standing_agreements where id = $1", [agreementId]);
    expect(row.state).toBe("active");
    await screenshot(page, "repeat-work-lab-agreed");
  });

  it("the client orders a new lot on the agreement without any quote, and pays it", async () => {
    const page = b.page;
    const [before] = await query<{ n: number }>("select count(*)::int as n from quotes");
    await signIn(page, "owner@halvorsen.example");
    await page.waitForURL(`${BASE_URL}/client`);
    await visit(page, `/client/agreements/${agreementId}`);
    await page.getByLabel("Lot code(s), one per line").fill(NEW_LOT);
    await page.getByRole("button", { name: "Order the lot" }).click();
    await page.waitForURL(/\/client\/orders\/[0-9a-f-]{36}$/);
    lotOrderId = page.url().split("/").pop()!;
    await page.getByText(/^Order .+ made under .+; pay it to start\.$/).waitFor();
    await page.getByRole("link", { name: "A lot of a standing agreement: open the agreement" }).waitFor();
    // No quote was asked for or sent: the request was awarded at once, never open to labs, and its only quote row
    // is the agreement's terms, accepted when the order was made.
    const [request] = await query<{ state: string; visibility: string; request_id: string }>(
      "select r.state, r.visibility, r.id as request_id from orders o join requests r on r.id = o.request_id where o.id = $1",
      [lotOrderId],
    );
    expect(request).toMatchObject({ state: "awarded", visibility: "invited" });
    const quotes = await query<{ state: string; notes: string }>("select state, notes from quotes where request_id = $1", [request.request_id]);
    expect(quotes).toEqual([{ state: "accepted", notes: expect.stringMatching(/^Terms of standing agreement .+; no quote round\.$/) }]);
    const [after] = await query<{ n: number }>("select count(*)::int as n from quotes");
    expect(after.n - before.n).toBe(1);
    const [invitations] = await query<{ n: number }>("select count(*)::int as n from request_invitations where request_id = $1", [request.request_id]);
    expect(invitations.n).toBe(0);
    const [sample] = await query<{ material_id: string; lot_code: string }>("select material_id, lot_code from samples where request_id = $1", [
      request.request_id,
    ]);
    expect(sample).toEqual({ material_id: materialId, lot_code: NEW_LOT });

    await page.getByRole("button", { name: /^Pay \$/ }).click();
    await page.waitForURL(/\/pay\//);
    await page.getByLabel("Card number").fill("4242424242424242");
    await page.getByLabel(/Expiry/).fill("12/34");
    await page.getByLabel(/CVC/).fill("123");
    await page.getByRole("button", { name: /^Pay/ }).click();
    await page.waitForURL(/\/client\/orders\/[0-9a-f-]+$/);
    // The return from the payment page asks the provider at once and says so in a notice.
    await page.getByText("Payment received. The money is held until you accept the delivery.").waitFor();
    const [paid] = await query<{ state: string }>("select state from orders where id = $1", [lotOrderId]);
    expect(paid.state).toBe("funds_held");
    await screenshot(page, "repeat-work-lot-paid");
  });

  it("the lot's scan is delivered and checked; after twenty steady lots the trend flags it and the CSV holds it", async () => {
    const page = b.page;
    // The delivered scan and its finished check: copies of the demo's LFP lot HC-2645-1.
    const [source] = await query<{ id: string; a: number; b: number; c: number }>(
      `select f.id, (sc.result->'cell'->>'a')::float8 as a, (sc.result->'cell'->>'b')::float8 as b, (sc.result->'cell'->>'c')::float8 as c
       from order_files f join scan_checks sc on sc.file_id = f.id where f.name = 'HC-2645-1_Co_15-110.xy' and f.version = 1 and sc.status = 'done'`,
    );
    expect(source.a).toBeGreaterThan(10);
    // Twenty earlier lots, weekly, steady around a cell 0.01 Å shorter in a than the new lot's.
    for (const [i, d] of WOBBLE.entries()) {
      const cell = { a: source.a - 0.01 + d, b: source.b + d / 2, c: source.c - d / 3, alpha: 90, beta: 90, gamma: 90 };
      await query(
        "insert into material_lots (material_id, lot_code, measured_at, cell, esd, verdict, within_window) values ($1, $2, now() - make_interval(days => $3), $4, $5, 'consistent', null)",
        [materialId, `RW-${String(i + 1).padStart(3, "0")}`, (20 - i) * 7, JSON.stringify(cell), JSON.stringify({ a: 0.0001, b: 0.0001, c: 0.0001 })],
      );
    }
    const [sample] = await query<{ id: string }>("select s.id from samples s join orders o on o.request_id = s.request_id where o.id = $1", [lotOrderId]);
    const [file] = await query<{ id: string }>(
      `insert into order_files (order_id, sample_id, kind, name, version, size_bytes, content_type, sha256, storage_key, state, scan_format, scan_info, stored_at)
       select $1, $2, kind, $3, 1, size_bytes, content_type, sha256, storage_key, 'stored', scan_format, scan_info, now() from order_files where id = $4 returning id`,
      [lotOrderId, sample.id, `${NEW_LOT}_Co_15-110.xy`, source.id],
    );
    const [check] = await query<{ id: string }>(
      "insert into scan_checks (file_id, status, verdict, result, started_at, finished_at) select $1, status, verdict, result, now() - interval '1 minute', now() from scan_checks where file_id = $2 returning id",
      [file.id, source.id],
    );
    for (const to of ["samples_in_transit", "samples_received", "measuring", "data_delivered"]) {
      await query("insert into order_events (order_id, to_state, note) values ($1, $2, '')", [lotOrderId, to]);
    }
    await query("update orders set state = 'data_delivered', delivered_at = now() where id = $1", [lotOrderId]);
    const { recordLot } = await import("~/models/materials/materials.server");
    const lot = await recordLot(check.id);
    expect(lot).toMatchObject({ materialId, lotCode: NEW_LOT, orderId: lotOrderId });

    await signIn(page, "owner@halvorsen.example");
    await page.waitForURL(`${BASE_URL}/client`);
    await visit(page, `/client/materials/${materialId}`);
    await page.getByRole("heading", { name: "Lots on record (21)" }).waitFor();
    await page.getByRole("cell", { name: NEW_LOT, exact: true }).waitFor();

    await visit(page, `/client/materials/${materialId}/trend?parameter=a`);
    await page.locator('[data-testid="trend-chart"][data-ready="true"] canvas').waitFor();
    await page.locator('[data-testid="range-chart"][data-ready="true"] canvas').waitFor();
    await expect(page.getByTestId("trend-chart").getAttribute("aria-label")).resolves.toMatch(new RegExp(`1 lot breaks a rule: ${NEW_LOT} \\(rule 1\\)`));
    await expect(page.getByTestId("trend-summary").textContent()).resolves.toMatch(/from 20 baseline lots/);
    const flagged = page.locator('tr[data-rules="broken"]');
    await expect(flagged.count()).resolves.toBe(1);
    await expect(flagged.textContent()).resolves.toMatch(new RegExp(`${NEW_LOT}.*a: rule 1 \\(one point beyond the 3σ limits\\)`));
    await checkAccessibility(page, "repeat-work-trend");
    await screenshot(page, "repeat-work-trend");

    const [download] = await Promise.all([page.waitForEvent("download"), page.getByRole("link", { name: "Download CSV" }).click()]);
    const csvPath = path.join(dir, "trend.csv");
    await download.saveAs(csvPath);
    const csv = fs.readFileSync(csvPath, "utf8").trim().split(/\r?\n/);
    expect(csv).toHaveLength(22);
    expect(csv.at(-1)).toContain(NEW_LOT);
    expect(csv.filter((line) => line.includes("RW-0"))).toHaveLength(21);
  });

  it("the lab records a passing calibration scan of the agreement's instrument", async () => {
    const page = b.page;
    await signIn(page, "lab@lakeside.example");
    await page.waitForURL(`${BASE_URL}/lab`);
    calibrationPath = await openCalibrationRecord(page, INSTRUMENT);
    expect(calibrationPath).toBe(`/lab/instruments/${instrumentId}/calibration`);
    await recordCalibrationScan(page, path.join(dir, CAL_FILES[0]), LAB6);
    await page.getByText("Calibration in order", { exact: true }).first().waitFor();
    await page.locator('[data-testid="calibration-chart-deviation"][data-ready="true"] canvas').waitFor();
    await screenshot(page, "repeat-work-calibration-recorded");
  }, 120_000);

  it("the lab's calibration becomes overdue, withdrawing the instrument; a passing scan brings it back", async () => {
    const page = b.page;
    const scansBefore = (await query<{ n: number }>("select count(*)::int as n from instrument_calibrations where instrument_id = $1", [instrumentId]))[0].n;

    await signIn(page, "lab@lakeside.example");
    await page.waitForURL(`${BASE_URL}/lab`);
    // A month passes: the scan's date and the due date are moved back by hand; the hourly job's own function does the rest.
    await query("update instrument_calibrations set measured_at = now() - interval '31 days' where instrument_id = $1", [instrumentId]);
    await query("update instruments set calibration_due_at = now() - interval '1 day' where id = $1", [instrumentId]);
    const { markOverdueCalibrations } = await import("~/models/labs/calibration.server");
    expect(await markOverdueCalibrations(new Date(), [instrumentId])).toBe(1);
    await visit(page, "/lab/capabilities");
    const card = page.getByRole("article", { name: `Instrument ${INSTRUMENT}` });
    await card.getByText("Calibration overdue", { exact: true }).first().waitFor();
    await card.getByText(/Withdrawn from matching: its calibration scan is overdue/).waitFor();
    await screenshot(page, "repeat-work-capabilities-overdue");
    await visit(page, calibrationPath);
    await page.getByText("Calibration overdue", { exact: true }).first().waitFor();
    await page.getByText(/Withdrawn from matching: its calibration scan is overdue/).waitFor();
    await checkAccessibility(page, "repeat-work-calibration-overdue");
    await screenshot(page, "repeat-work-calibration-overdue");

    await recordCalibrationScan(page, path.join(dir, CAL_FILES[1]), LAB6);
    await page.getByText("Calibration in order", { exact: true }).first().waitFor();
    await expect(page.getByText(/Withdrawn from matching/).count()).resolves.toBe(0);
    await page.getByText(new RegExp(`^Deviation from the certificate: ${scansBefore + 1} scans, latest`)).waitFor();
    await page.locator('[data-testid="calibration-chart-deviation"][data-ready="true"] canvas').waitFor();
    const [state] = await query<{ calibration_state: string }>("select calibration_state from instruments where id = $1", [instrumentId]);
    expect(state.calibration_state).toBe("ok");
    await checkAccessibility(page, "repeat-work-calibration");
    await screenshot(page, "repeat-work-calibration-restored");
  }, 120_000);
});
