// Delivery in a real browser: the lab uploads a ~30 MB scan set straight to storage with progress shown and
// sees the checks arrive; the client opens the data room, downloads a file and shares the order with a link
// that works in a signed-out browser and stops after it is revoked.
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import pg from "pg";
import { numberedOrderInsert } from "../setup/numbered-order";
import { afterAll, afterEach, beforeAll, describe, expect, it } from "vitest";
import { simulatedXy } from "./test-files";
import { SILICON } from "~/diffraction/structures";
import { databaseUrl } from "../../services/postgres";
import { BASE_URL, openBrowser, screenshot, signIn, visit, type Browser } from "./harness";

const TITLE = "Delivery run of silicon reference lot BT-7";
let b: Browser;
let outsider: Browser | undefined;
let orderId = "";
let dir = "";
const scans: { name: string; file: string; size: number }[] = [];

/** An order of Halvorsen at Granite Ridge already measuring, with two samples, made straight in the test database. */
async function measuringOrder() {
  const c = new pg.Client({ connectionString: databaseUrl("diffractory_browser") });
  await c.connect();
  try {
    const one = async (sql: string, values: unknown[] = []) => (await c.query(sql, values)).rows[0];
    const client = await one("select id from organisations where slug = 'halvorsen-cathode-works'");
    const lab = await one("select id from organisations where slug = 'granite-ridge-characterisation'");
    const owner = await one("select id from users where email = 'owner@halvorsen.example'");
    const instrument = await one("select id from instruments where lab_id = $1 and anode = 'Cu' limit 1", [lab.id]);
    const request = await one(
      "insert into requests (organisation_id, created_by, title, state, draft_step, range_min, range_max) values ($1, $2, $3, 'awarded', 'review', 10, 90) returning id",
      [client.id, owner.id, TITLE],
    );
    for (const [i, label] of ["BT-7 top of the drum", "BT-7 bottom of the drum"].entries()) {
      await c.query(
        "insert into samples (request_id, position, label, formula, expected_phase, crystal_system, centering, cell_a, cell_b, cell_c, cell_alpha, cell_beta, cell_gamma) values ($1, $2, $3, 'Si', 'silicon', 'cubic', 'F', 5.431, 5.431, 5.431, 90, 90, 90)",
        [request.id, i, label],
      );
    }
    const quote = await one(
      "insert into quotes (request_id, lab_id, instrument_id, state, line_items, total_minor, currency, valid_until, turnaround_days) values ($1, $2, $3, 'accepted', '[]', 15000, 'EUR', now() + interval '14 days', 5) returning id",
      [request.id, lab.id, instrument?.id ?? null],
    );
    const order = await one(
      numberedOrderInsert(
        "request_id, quote_id, client_organisation_id, lab_id, state, amount_minor, currency",
        "$1::uuid, $2::uuid, $3::uuid, $4::uuid, 'measuring', 15000, 'EUR'",
      ),
      [request.id, quote.id, client.id, lab.id],
    );
    await c.query("insert into order_events (order_id, to_state, note) values ($1, 'measuring', 'Made by the delivery browser test')", [order.id]);
    return order.id as string;
  } finally {
    await c.end();
  }
}

/** A simulated silicon scan padded with comment lines to about `bytes`. */
function writeScan(name: string, bytes: number, seed: number) {
  const body = simulatedXy(`Silicon reference BT-7, run ${seed} (simulated)`, {
    structure: SILICON,
    cell: { a: 5.431, b: 5.431, c: 5.431, alpha: 90, beta: 90, gamma: 90 },
    from: 20,
    to: 120,
    background: 150,
    slope: -0.4,
    seed,
  });
  const line = "# detector log: counts stable, generator 40 kV 40 mA, no interruptions during this step\n";
  const text = line.repeat(Math.max(0, Math.ceil((bytes - body.length) / line.length))) + body;
  const file = path.join(dir, name);
  fs.writeFileSync(file, text);
  scans.push({ name, file, size: Buffer.byteLength(text) });
}

beforeAll(async () => {
  orderId = await measuringOrder();
  dir = fs.mkdtempSync(path.join(os.tmpdir(), "diffractory-delivery-"));
  // One file above the single-PUT size (uploaded in parts) and one below: about 30 MB together.
  writeScan("bt7-top.xy", 19 * 1024 * 1024, 1);
  writeScan("bt7-bottom.xy", 11 * 1024 * 1024, 2);
  b = await openBrowser();
});
afterAll(async () => {
  await outsider?.close();
  await b?.close();
  if (dir) fs.rmSync(dir, { recursive: true, force: true });
});
afterEach(async () => {
  expect(b.consoleErrors).toEqual([]);
  expect(outsider?.consoleErrors ?? []).toEqual([]);
  await b.context.clearCookies();
});

describe("delivering data and sharing it", () => {
  it("the lab uploads a ~30 MB scan set with progress, and the checks appear without reloading", async () => {
    const { page } = b;
    await signIn(page, "lab@graniteridge.example");
    await page.waitForURL(`${BASE_URL}/lab`);
    await visit(page, `/lab/orders/${orderId}/files`);
    await page.getByLabel("Choose files to deliver").setInputFiles(scans.map((s) => s.file));
    await page.getByLabel("Sample for bt7-top.xy").selectOption({ label: "BT-7 top of the drum" });
    await page.getByLabel("Sample for bt7-bottom.xy").selectOption({ label: "BT-7 bottom of the drum" });
    await screenshot(page, "delivery-queue");
    // Storage on loopback answers at once; hold each PUT for a second so the page can be seen mid-way.
    await page.route(/127\.0\.0\.1:54330/, async (route) => {
      await new Promise((r) => setTimeout(r, 1000));
      await route.continue();
    });
    await page.getByRole("button", { name: "Upload 2 files" }).click();
    // The first file is stored while the second still goes up: the overall bar stands between 0 and 100 %.
    const overall = page.getByTestId("overall-progress");
    await overall.getByText(/of 3\d(\.\d)? MB · [1-9]\d? %/).waitFor({ timeout: 45_000 });
    await page.locator('[data-upload="bt7-top.xy"]').getByText("Stored and verified as version 1.").waitFor();
    await screenshot(page, "delivery-uploading");
    for (const s of scans) {
      await page.locator(`[data-upload="${s.name}"]`).getByText("Stored and verified as version 1.").waitFor({ timeout: 60_000 });
    }
    await page.unroute(/127\.0\.0\.1:54330/);
    expect(await overall.textContent()).toMatch(/100 %/);
    // The table lists both, stored, and each check moves on to its verdict while the page stays open.
    for (const s of scans) {
      const row = page.locator(`[data-file-row="${s.name} v1"]`);
      await row.getByText(/Stored$/).waitFor();
      await row.locator('[data-testid="check-status"][data-status="done"], [data-testid="check-status"][data-status="failed"]').waitFor({ timeout: 60_000 });
    }
    await screenshot(page, "delivery-stored-and-checked");
  });

  it("the client downloads a file from the data room and shares the order with a link until it is revoked", async () => {
    const { page } = b;
    await signIn(page, "owner@halvorsen.example");
    await page.waitForURL(`${BASE_URL}/client`);
    await visit(page, "/client/data-room");
    await page.getByRole("link", { name: TITLE }).click();
    await page.waitForURL(`${BASE_URL}/client/data-room/${orderId}`);
    await page.getByRole("heading", { name: "Files" }).waitFor();
    await screenshot(page, "data-room-order");

    const [download] = await Promise.all([page.waitForEvent("download"), page.getByRole("link", { name: "Download bt7-bottom.xy v1" }).click()]);
    expect(download.suggestedFilename()).toBe("bt7-bottom.xy");
    const saved = await download.path();
    expect(fs.statSync(saved).size).toBe(scans.find((s) => s.name === "bt7-bottom.xy")!.size);
    await visit(page, `/client/data-room/${orderId}`);
    await page.getByRole("table", { name: "Access log" }).getByText("bt7-bottom.xy").waitFor();

    await page.getByLabel("Who it is for").fill("Dr. Aino Kettunen, external auditor");
    await page.getByLabel("Valid for (days)").fill("3");
    await page.getByRole("button", { name: "Create share link" }).click();
    const linkBox = page.getByLabel("New share link");
    await linkBox.waitFor();
    const link = await linkBox.inputValue();
    expect(link).toMatch(/\/shared\/[A-Za-z0-9_-]{20,}$/);
    await screenshot(page, "data-room-share-link");

    // A colleague outside the organisation, in a browser that never signed in.
    outsider = await openBrowser();
    const shared = new URL(link);
    await visit(outsider.page, shared.pathname);
    await outsider.page.getByRole("heading", { name: TITLE }).waitFor();
    const [theirs] = await Promise.all([outsider.page.waitForEvent("download"), outsider.page.getByRole("link", { name: "Download bt7-top.xy v1" }).click()]);
    expect(fs.statSync(await theirs.path()).size).toBe(scans.find((s) => s.name === "bt7-top.xy")!.size);
    await screenshot(outsider.page, "shared-data-room");

    // The download through the link is in the access log; then the owner revokes the link.
    await visit(page, `/client/data-room/${orderId}`);
    await page.getByRole("table", { name: "Access log" }).getByText("Share link: Dr. Aino Kettunen, external auditor").waitFor();
    await page.getByRole("button", { name: "Revoke the link for Dr. Aino Kettunen, external auditor" }).click();
    await page.getByText("Share link revoked; it no longer opens this data room.").waitFor();

    const gone = await outsider.page.goto(shared.pathname);
    expect(gone?.status()).toBe(410);
    await outsider.page.getByRole("heading", { name: "This share link no longer opens the data room" }).waitFor();
    await screenshot(outsider.page, "shared-data-room-revoked");
  });
});
