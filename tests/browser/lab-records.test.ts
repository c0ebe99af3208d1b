// The lab's records in a real browser: the lab receives a parcel in transit and fills the receipt record of
// each sample (condition, seal, amount, storage place, a photo); then the lab delivers an order whose scan check
// is `review` through the confirmation naming the verdict, and the client accepts it through the same kind of
// confirmation. The orders are made in the test database by this file, so no other browser test's order moves.
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import pg from "pg";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { databaseUrl } from "../../services/postgres";
import { numberedOrderInsert } from "../setup/numbered-order";
import { openBrowser, screenshot, signIn, visit, waitForHydration, type Browser } from "./harness";

const RUN = Date.now().toString(36).slice(-5).toUpperCase();
const IN_TRANSIT = `Receipt trial of zirconia lot LR-${RUN}`;
const MEASURING = `Review trial of zirconia lot LV-${RUN}`;
const SCAN = `LV-${RUN}-A_Cu_10-90.xy`;
let lab: Browser;
let client: Browser;
let dir = "";
const ids = { inTransit: "", measuring: "" };

/** Halvorsen's order at Granite Ridge in the given state, with its samples, made straight in the test database. */
async function makeOrder(c: pg.Client, title: string, state: "samples_in_transit" | "measuring", labels: string[]) {
  const one = async (sql: string, values: unknown[] = []) => (await c.query(sql, values)).rows[0];
  const clientOrg = await one("select id from organisations where slug = 'halvorsen-cathode-works'");
  const labOrg = await one("select id from organisations where slug = 'granite-ridge-characterisation'");
  const owner = await one("select id from users where email = 'owner@halvorsen.example'");
  const instrument = await one("select id from instruments where lab_id = $1 and anode = 'Cu' limit 1", [labOrg.id]);
  const request = await one(
    "insert into requests (organisation_id, created_by, title, state, draft_step, range_min, range_max) values ($1, $2, $3, 'awarded', 'review', 10, 90) returning id",
    [clientOrg.id, owner.id, title],
  );
  const samples: string[] = [];
  for (const [i, label] of labels.entries()) {
    const s = await one(
      "insert into samples (request_id, position, label, formula, expected_phase, crystal_system, centering, cell_a, cell_b, cell_c, cell_alpha, cell_beta, cell_gamma) values ($1, $2, $3, 'ZrO2', 'zirconia', 'monoclinic', 'P', 5.15, 5.21, 5.31, 90, 99.2, 90) returning id",
      [request.id, i, label],
    );
    samples.push(s.id);
  }
  const quote = await one(
    "insert into quotes (request_id, lab_id, instrument_id, state, line_items, total_minor, currency, valid_until, turnaround_days) values ($1, $2, $3, 'accepted', '[]', 12000, 'EUR', now() + interval '14 days', 6) returning id",
    [request.id, labOrg.id, instrument?.id ?? null],
  );
  const order = await one(
    numberedOrderInsert(
      "request_id, quote_id, client_organisation_id, lab_id, state, amount_minor, currency",
      `$1::uuid, $2::uuid, $3::uuid, $4::uuid, '${state}', 12000, 'EUR'`,
    ),
    [request.id, quote.id, clientOrg.id, labOrg.id],
  );
  await c.query("insert into order_events (order_id, to_state, note) values ($1, $2, 'Made by the lab records browser test')", [order.id, state]);
  return { orderId: order.id as string, samples };
}

beforeAll(async () => {
  const c = new pg.Client({ connectionString: databaseUrl("diffractory_browser") });
  await c.connect();
  try {
    ids.inTransit = (await makeOrder(c, IN_TRANSIT, "samples_in_transit", [`LR-${RUN}-A`, `LR-${RUN}-B`])).orderId;
    const measuring = await makeOrder(c, MEASURING, "measuring", [`LV-${RUN}-A`]);
    ids.measuring = measuring.orderId;
    // A stored scan of the sample whose finished check says `review`.
    const file = await c.query(
      "insert into order_files (order_id, sample_id, kind, name, version, size_bytes, content_type, sha256, storage_key, state, stored_at) values ($1, $2, 'scan', $3, 1, 1200, 'text/plain', $4, $5, 'stored', now()) returning id",
      [measuring.orderId, measuring.samples[0], SCAN, "0".repeat(64), `orders/${measuring.orderId}/files/x/${SCAN}`],
    );
    await c.query("insert into scan_checks (file_id, status, verdict, finished_at) values ($1, 'done', 'review', now())", [file.rows[0].id]);
  } finally {
    await c.end();
  }
  dir = fs.mkdtempSync(path.join(os.tmpdir(), "diffractory-lab-records-"));
  // The smallest PNG header the storage check recognises (PNG specification, ISO/IEC 15948 § 5.2: the signature).
  fs.writeFileSync(
    path.join(dir, "parcel-a.png"),
    Uint8Array.from([
      0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a, 0, 0, 0, 13, 0x49, 0x48, 0x44, 0x52, 0, 0, 0, 1, 0, 0, 0, 1, 8, 2, 0, 0, 0, 0x90, 0x77, 0x53, 0xde,
    ]),
  );
  lab = await openBrowser();
  client = await openBrowser();
  await signIn(lab.page, "lab@graniteridge.example");
  await signIn(client.page, "owner@halvorsen.example");
}, 120_000);

afterAll(async () => {
  await lab?.close();
  await client?.close();
  if (dir) fs.rmSync(dir, { recursive: true, force: true });
});

describe("the lab's records", () => {
  it("receipt with a record", async () => {
    const page = lab.page;
    await visit(page, `/lab/orders/${ids.inTransit}`);
    const a = `LR-${RUN}-A`;
    const b = `LR-${RUN}-B`;
    await page.getByLabel(`Condition of ${a}`).selectOption("good");
    await page.getByLabel(`Amount of ${a} received`).fill("450");
    await page.getByLabel(`Storage place of ${a}`).fill("Desiccator 3, shelf A");
    await page.getByLabel(`Photo of ${a} (optional, PNG or JPEG)`).setInputFiles(path.join(dir, "parcel-a.png"));
    await page.getByText("✓ parcel-a.png uploaded").waitFor();
    await page.getByLabel(`Condition of ${b}`).selectOption("damaged");
    await page
      .getByRole("group", { name: `Seal of ${b} intact?` })
      .getByLabel("No")
      .check();
    await page.getByLabel(`Amount of ${b} received`).fill("1.2");
    await page.getByLabel(`Unit of the amount of ${b}`).selectOption("g");
    await page.getByLabel(`Storage place of ${b}`).fill("Sample cabinet C2, drawer 4");
    await page.getByLabel(`Note on ${b} (optional)`).fill("Outer box crushed at one corner.");
    await page.getByLabel("Note for the timeline (optional)").fill("Opened in the receiving hood.");
    await screenshot(page, "lab-records-receipt-form");
    await page.getByRole("button", { name: "Mark samples received" }).click();
    await page.getByRole("button", { name: "Start measuring" }).waitFor();
    await waitForHydration(page);
    const record = page.getByTestId("receipt-record");
    await record.getByText("Desiccator 3, shelf A").waitFor();
    await record.getByText("Sample cabinet C2, drawer 4").waitFor();
    await record.getByText("Seal broken").waitFor();
    await record.getByRole("link", { name: "parcel-a.png" }).waitFor();
    expect(await record.getByText("450 mg").count()).toBe(1);
    await page.getByTestId("due-date").getByText("Due in 6 days").waitFor();
    await page.getByText(`Not in good condition: ${b} (Damaged container, seal broken).`).waitFor();
    await screenshot(page, "lab-records-receipt-recorded");

    // The client reads the same record and the due date.
    await visit(client.page, `/client/orders/${ids.inTransit}`);
    await client.page.getByTestId("receipt-record").getByText("Sample cabinet C2, drawer 4").waitFor();
    await client.page.getByTestId("due-date").waitFor();

    // The work queue shows the due date in its own sortable column.
    await visit(page, "/lab/work-queue?sort=due&dir=asc");
    await page.getByRole("columnheader", { name: /Due/ }).waitFor();
    await page
      .getByRole("row", { name: new RegExp(IN_TRANSIT) })
      .getByText("Due in 6 days")
      .waitFor();
    expect(lab.consoleErrors).toEqual([]);
  });

  it("delivery and acceptance of a `review` scan through the confirmation", async () => {
    const page = lab.page;
    await visit(page, `/lab/orders/${ids.measuring}`);
    const confirmation = page.getByRole("group", { name: /lattice check is not Consistent/ });
    await confirmation.getByText(`${SCAN} v1`).waitFor();
    await confirmation.getByText("Review", { exact: true }).waitFor();
    // Without the tick the server refuses with a sentence naming the verdict.
    await page.getByRole("button", { name: "Mark data delivered" }).click();
    await page
      .getByRole("alert")
      .getByText(/tick the confirmation to deliver the data anyway/)
      .waitFor();
    expect(await page.getByRole("alert").filter({ hasText: "tick the confirmation" }).textContent()).toContain(`${SCAN} v1 (sample LV-${RUN}-A): Review`);
    await waitForHydration(page);
    await page.getByLabel("I have read these verdicts and deliver the data as it is.").check();
    await page.getByLabel("Note for the timeline (optional)").fill("The report explains the unindexed line near 28°.");
    await screenshot(page, "lab-records-deliver-confirmation");
    await page.getByRole("button", { name: "Mark data delivered" }).click();
    await page.getByText(/Delivered\. The client reviews the data/).waitFor();
    await page.getByText(/Delivered with the checks' verdicts read and confirmed/).waitFor();

    const cp = client.page;
    await visit(cp, `/client/orders/${ids.measuring}`);
    const accept = cp.getByRole("group", { name: /lattice check is not Consistent/ });
    await accept.getByText(`${SCAN} v1`).waitFor();
    await accept.getByText("Review", { exact: true }).waitFor();
    await cp.getByRole("button", { name: "Accept delivery" }).click();
    await cp
      .getByRole("alert")
      .getByText(/tick the confirmation to accept the delivery anyway/)
      .waitFor();
    await waitForHydration(cp);
    await cp.getByLabel(/I have read these verdicts and accept the delivery as it is/).check();
    await screenshot(cp, "lab-records-accept-confirmation");
    await cp.getByRole("button", { name: "Accept delivery" }).click();
    await cp.getByText(/Accepted with the checks' verdicts read and confirmed/).waitFor();
    expect(client.consoleErrors).toEqual([]);
    expect(lab.consoleErrors).toEqual([]);
  });
});
