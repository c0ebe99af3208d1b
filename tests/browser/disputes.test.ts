// A dispute both sides are heard in, in a real browser: the client pays and disputes a delivered scan, the lab
// answers with its statement and an evidence file, and the admin opens the dispute page, reads the evidence, the
// check and its plot (each read lands in the audit log) and decides the split typed as money. The order is this
// file's own (the demo's open dispute is decided by journey-admin.test.ts); its scan and check are copies of the
// demo's lot HC-2655, so the check has a real result and plot.
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import pg from "pg";
import { afterAll, afterEach, beforeAll, describe, expect, it } from "vitest";
import { databaseUrl } from "../../services/postgres";
import { simplePdf } from "../../app/demo/demo-pdf";
import { numberedOrderInsert } from "../setup/numbered-order";
import { checkAccessibility } from "./a11y";
import { BASE_URL, openBrowser, screenshot, signIn, visit, type Browser } from "./harness";

const TITLE = "Impurity recheck of NMC lot HC-2709";
const EVIDENCE = "HC-2709_holder-blank.pdf";
const STATEMENT = "The weak lines near 18° and 25° also appear on the blank holder we ran the same day; see the attached log.";
let b: Browser;
let dir = "";
let orderId = "";
let orderNumber = "";

async function withDb<T>(work: (one: (sql: string, values?: unknown[]) => Promise<Record<string, unknown>>) => Promise<T>) {
  const c = new pg.Client({ connectionString: databaseUrl("diffractory_browser") });
  await c.connect();
  try {
    return await work(async (sql, values = []) => (await c.query(sql, values)).rows[0]);
  } finally {
    await c.end();
  }
}

/** An order of Halvorsen at Granite Ridge awaiting payment (€240.00), with one sample, made in the test database. */
async function awaitingOrder() {
  return withDb(async (one) => {
    const client = await one("select id from organisations where slug = 'halvorsen-cathode-works'");
    const lab = await one("select id from organisations where slug = 'granite-ridge-characterisation'");
    const owner = await one("select id from users where email = 'owner@halvorsen.example'");
    const request = await one(
      "insert into requests (organisation_id, created_by, title, state, draft_step, range_min, range_max) values ($1, $2, $3, 'awarded', 'review', 15, 120) returning id",
      [client.id, owner.id, TITLE],
    );
    await one("insert into samples (request_id, position, label, formula) values ($1, 0, 'HC-2709-A', 'LiNi0.6Mn0.2Co0.2O2')", [request.id]);
    const quote = await one(
      "insert into quotes (request_id, lab_id, state, line_items, total_minor, currency, valid_until, turnaround_days) values ($1, $2, 'accepted', '[]', 24000, 'EUR', now() + interval '14 days', 5) returning id",
      [request.id, lab.id],
    );
    const order = await one(
      numberedOrderInsert(
        "request_id, quote_id, client_organisation_id, lab_id, state, amount_minor, currency",
        "$1::uuid, $2::uuid, $3::uuid, $4::uuid, 'awaiting_payment', 24000, 'EUR'",
      ),
      [request.id, quote.id, client.id, lab.id],
    );
    await one("insert into order_events (order_id, to_state, note) values ($1, 'awaiting_payment', 'Quote accepted')", [order.id]);
    const { number } = await one("select number from orders where id = $1", [order.id]);
    return { id: order.id as string, number: number as string };
  });
}

/** The paid order's samples arrive and its scan is delivered: a copy of the demo's HC-2655-A scan with its check. */
async function deliverScan(id: string) {
  await withDb(async (one) => {
    const sample = await one("select s.id from samples s join orders o on o.request_id = s.request_id where o.id = $1", [id]);
    const source = await one("select id from order_files where name = 'HC-2655-A_Co_15-120.xy' and version = 1");
    const file = await one(
      `insert into order_files (order_id, sample_id, kind, name, version, size_bytes, content_type, sha256, storage_key, state, scan_format, scan_info, stored_at)
       select $1, $2, kind, 'HC-2709-A_Co_15-120.xy', 1, size_bytes, content_type, sha256, storage_key, 'stored', scan_format, scan_info, now() from order_files where id = $3 returning id`,
      [id, sample.id, source.id],
    );
    await one(
      "insert into scan_checks (file_id, status, verdict, result, started_at, finished_at) select $1, status, verdict, result, started_at, finished_at from scan_checks where file_id = $2",
      [file.id, source.id],
    );
    for (const to of ["samples_in_transit", "samples_received", "measuring", "data_delivered"]) {
      await one("insert into order_events (order_id, to_state, note) values ($1, $2, '')", [id, to]);
    }
    await one("update orders set state = 'data_delivered', delivered_at = now() where id = $1", [id]);
  });
}

beforeAll(async () => {
  b = await openBrowser();
  dir = fs.mkdtempSync(path.join(os.tmpdir(), "diffractory-dispute-"));
  fs.writeFileSync(path.join(dir, EVIDENCE), simplePdf(["Blank holder scan, same day as HC-2709-A (invented test document)", "Weak lines: 18.1, 25.3 deg"]));
  ({ id: orderId, number: orderNumber } = await awaitingOrder());
});
afterAll(async () => {
  await b?.close();
  if (dir) fs.rmSync(dir, { recursive: true, force: true });
});
afterEach(async () => {
  expect(b.consoleErrors).toEqual([]);
  await b.context.clearCookies();
});

describe("a dispute where the lab answers and the admin opens the evidence (audit-logged) and decides", () => {
  it("the client pays, the scan is delivered and the client opens a dispute", async () => {
    const { page } = b;
    await signIn(page, "owner@halvorsen.example");
    await page.waitForURL(`${BASE_URL}/client`);
    await visit(page, `/client/orders/${orderId}`);
    await page.getByRole("button", { name: "Pay €240.00" }).click();
    await page.waitForURL(/\/pay\//);
    await page.getByLabel("Card number").fill("4242424242424242");
    await page.getByLabel(/Expiry/).fill("12/34");
    await page.getByLabel(/CVC/).fill("123");
    await page.getByRole("button", { name: /^Pay/ }).click();
    await page.waitForURL(/\/client\/orders\/[0-9a-f-]+$/);
    await page.getByText("Payment received. The money is held until you accept the delivery.").waitFor();

    await deliverScan(orderId);
    await visit(page, `/client/orders/${orderId}`);
    await page
      .getByLabel("What is wrong with the delivery?")
      .fill("The check puts the scan under review: unindexed lines near 18° and 25° that the report does not explain.");
    await page.getByRole("button", { name: "Open a dispute" }).click();
    const panel = page.getByRole("region", { name: "The dispute" });
    await panel.getByText(/unindexed lines near 18°/).waitFor();
    await panel.getByText("The lab has not answered yet.").waitFor();
    await screenshot(page, "dispute-client-opened");
  });

  it("the lab answers with its statement and an evidence file; the client and the admins are told", async () => {
    const { page } = b;
    await signIn(page, "lab@graniteridge.example");
    await page.waitForURL(`${BASE_URL}/lab`);
    await visit(page, `/lab/orders/${orderId}`);
    const panel = page.getByRole("region", { name: "The dispute" });
    await panel.getByText(/unindexed lines near 18°/).waitFor();
    await panel.getByLabel("The lab's statement for the admin").fill(STATEMENT);
    await panel.getByLabel(/^Evidence file/).setInputFiles(path.join(dir, EVIDENCE));
    await panel.getByText(`✓ ${EVIDENCE} uploaded`).waitFor();
    await panel.getByRole("button", { name: "Send the statement" }).click();
    await page.getByText("Statement sent; the client and the admins have been told.").waitFor();
    await panel.locator("blockquote", { hasText: /also appear on the blank holder/ }).waitFor();
    await panel.getByRole("link", { name: EVIDENCE }).waitFor();
    await checkAccessibility(page, "lab-order-dispute");
    await screenshot(page, "dispute-lab-answered");
    const told = await withDb((one) =>
      one('select array_agg(distinct "to" order by "to") as to from outbox_messages where kind = \'dispute_answered\' and order_id = $1', [orderId]),
    );
    expect(told.to).toEqual(expect.arrayContaining(["admin@diffractory.example", "owner@halvorsen.example"]));
  });

  it("the admin reads both sides, the evidence, the check and its plot — each read audit-logged — and decides in money", async () => {
    const { page } = b;
    await signIn(page, "admin@diffractory.example");
    await page.waitForURL(`${BASE_URL}/admin`);
    await visit(page, "/admin/disputes");
    await page.getByRole("link", { name: `Order ${orderNumber}` }).click();
    await page.getByRole("heading", { level: 1, name: `Dispute on order ${orderNumber}` }).waitFor();
    const statements = page.getByRole("region", { name: "Both statements" });
    await statements.getByText(/unindexed lines near 18°/).waitFor();
    await statements.getByText(/also appear on the blank holder/).waitFor();

    // The lab's evidence opens for the admin: a PDF, as handed in.
    const href = (await statements.getByRole("link", { name: EVIDENCE }).getAttribute("href"))!;
    const evidence = await page.request.get(href);
    expect(evidence.ok()).toBe(true);
    expect((await evidence.body()).subarray(0, 5).toString()).toBe("%PDF-");

    // The delivered file with its check: the check screen answers the admin, and the plot shows on the dispute page.
    const files = page.getByRole("list", { name: "Delivered files" });
    await files.getByText("HC-2709-A_Co_15-120.xy v1").waitFor();
    await files.getByRole("link", { name: "Open the check" }).click();
    await page.waitForURL(/\/checks\/[0-9a-f-]+$/);
    await page.getByRole("link", { name: /Back to the order/ }).click();
    await page.getByRole("heading", { level: 1, name: `Dispute on order ${orderNumber}` }).waitFor();
    await page.getByRole("link", { name: "Show the plot here" }).click();
    await page.getByRole("img", { name: /Observed scan of HC-2709-A_Co_15-120\.xy v1/ }).waitFor();
    await checkAccessibility(page, "admin-dispute");
    await screenshot(page, "dispute-admin-case");

    const reads = await withDb((one) =>
      one(
        "select count(*)::int as n, array_agg(distinct subject_type order by subject_type) as kinds from audit_log where action = 'dispute_evidence_read' and details->>'orderNumber' = $1",
        [orderNumber],
      ),
    );
    expect(reads.n).toBeGreaterThanOrEqual(3);
    expect(reads.kinds).toEqual(["check", "dispute_evidence"]);

    // €240.00 held; €90.00 back to the client leaves €150.00, less the 8 % platform fee (€12.00), for the lab.
    const decision = page.getByRole("form", { name: `Decision on order ${orderNumber}` });
    await decision.getByLabel("Refund to the client, in EUR").fill("90.00");
    await decision.getByText("The client gets €90.00 back; the lab is paid €138.00 after the platform fee of €12.00.").waitFor();
    await decision.getByLabel("Reason for the decision").fill("The blank holder shows the same lines; the report should have said so. Part refund.");
    await decision.getByRole("button", { name: "Decide and settle" }).click();
    await page.getByText("Dispute decided; the refund and payout are under way.").waitFor();
    await page.getByText(/Refunded €90\.00, paid to the lab €138\.00/).waitFor();
    await screenshot(page, "dispute-admin-decided");
    const row = await withDb((one) => one("select state, refund_minor, payout_minor from disputes where order_id = $1", [orderId]));
    expect(row).toEqual({ state: "resolved", refund_minor: 9000, payout_minor: 13800 });
  });
});
