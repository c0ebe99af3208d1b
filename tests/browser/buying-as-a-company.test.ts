// Buying as a company buys, in a real browser, from the quote to the accounts: Pinecrest (whose organisation
// requires purchase orders) accepts a Granite Ridge quote with a PO number, pays by bank transfer — the bank
// details, the reference, the amount, the pay-by date and the PO on screen; a part of the money arrives (the payment
// fake's transfer control, as the provider's "fund cash balance" test helper), then the rest, and the page shows
// each — downloads the invoice, disputes the delivery and gets a part refund with its credit note; the lab downloads
// the month's statement (PDF and CSV) and the admin exports the day's invoices and credit notes. The request, quote
// and order are this file's own; Pinecrest's purchase-order rule is put back as it was afterwards.
// The PDFs are read back with pdftotext (Debian poppler-utils), as a buyer's accounts software would read them.
import { execFileSync } from "node:child_process";
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import type { Page } from "playwright-core";
import { afterAll, afterEach, beforeAll, describe, expect, it } from "vitest";
import { monthName } from "../../app/domain/fee-invoice";
import { checkAccessibility } from "./a11y";
import { BASE_URL, clearSignInAttempts, openBrowser, PAYMENTS_FAKE, query, screenshot, sendPaymentWebhooksHere, signIn, visit, type Browser } from "./harness";

const TITLE = "Polymorph screen of API lot PSF-203 on a purchase order";
const PO = "PSF-PO-04611";
// Two samples at €160.00: €320.00. Granite Ridge (Canada) sells to Pinecrest (United Kingdom): no EU VAT is added
// (Council Directive 2006/112/EC applies to supplies within the EU only), so the order total is the quote total.
const UNIT_MINOR = 16_000;
const TOTAL = "€320.00";
// The transfer arrives in two parts: €120.00, then the remaining €200.00 (hand arithmetic).
const FIRST_PART_MINOR = 12_000;
const REST_MINOR = 20_000;
// The dispute is settled with €75.00 back to the client; the lab gets €245.00 less the 8 % platform fee (€19.60),
// €225.40 (hand arithmetic on the default fee of config.server.ts).
const REFUND = "75.00";
// Provider ids of the payment provider's objects (payment intents, charges, customers, refunds, transfers,
// checkout sessions) as its API reference writes them: a prefix, an underscore, then letters and digits.
const PROVIDER_ID = /\b(pi|ch|cus|re|tr|cs)_[A-Za-z0-9]{6,}/;

let b: Browser;
let dir = "";
let requestId = "";
let orderId = "";
let orderNumber = "";
let invoiceNumber = "";
let creditNoteNumber = "";
let pinecrestId = "";
let requiredBefore = false;
let undoWebhook = async () => {};
const today = new Date().toISOString().slice(0, 10);
const month = today.slice(0, 7);

/** The text of a PDF as pdftotext (poppler-utils) reads it, its layout kept so a label and its value share a line. */
function pdfText(file: string) {
  return execFileSync("pdftotext", ["-layout", file, "-"], { encoding: "utf8" });
}

/**
 * The value under a heading of the PDF's facts row ("Your purchase order", "Corrects invoice"): pdftotext keeps the
 * columns, so the value starts in the heading's column on the next line that has text.
 */
function pdfFact(text: string, heading: string) {
  const lines = text.split("\n");
  const at = lines.findIndex((l) => l.includes(heading));
  if (at < 0) return null;
  const column = lines[at].indexOf(heading);
  const below = lines.slice(at + 1).find((l) => l.trim() !== "") ?? "";
  return below
    .slice(column)
    .trim()
    .split(/\s{2,}/)[0];
}

/** The bank details as the order page lists them, label by label. */
async function transferFacts(page: Page) {
  const dl = page.locator('dl[aria-label="Bank transfer details"]');
  await dl.waitFor();
  const terms = await dl.locator("dt").allTextContents();
  const values = await dl.locator("dd").allTextContents();
  return Object.fromEntries(terms.map((t, i) => [t.trim(), values[i].trim()]));
}

/** Clicks what starts a download and keeps the file in this test's folder; returns its path and suggested name. */
async function download(page: Page, click: () => Promise<void>) {
  const [file] = await Promise.all([page.waitForEvent("download"), click()]);
  const where = path.join(dir, file.suggestedFilename());
  await file.saveAs(where);
  return { where, name: file.suggestedFilename() };
}

/** Reloads the order page until `text` shows: the provider's webhook about a transfer reaches the app on its own time. */
async function reloadUntil(page: Page, text: string | RegExp, seconds = 20) {
  const until = Date.now() + seconds * 1000;
  for (;;) {
    await visit(page, `/client/orders/${orderId}`);
    const main = (await page.locator("main").textContent()) ?? "";
    if (typeof text === "string" ? main.includes(text) : text.test(main)) return main;
    if (Date.now() > until) throw new Error(`The order page did not show ${String(text)} within ${seconds} s; it shows: ${main.slice(0, 2000)}`);
    await page.waitForTimeout(500);
  }
}

/** A bank transfer arriving at the provider with the order's reference (the fake's control, in minor units). */
async function transferArrives(reference: string, amount: number) {
  const res = await fetch(`${PAYMENTS_FAKE}/_fake/transfers`, {
    method: "POST",
    headers: { "Content-Type": "application/json" },
    body: JSON.stringify({ reference, amount }),
  });
  expect(res.status, await res.clone().text()).toBe(200);
}

/** The paid order's samples arrive and its scan is delivered: a copy of the demo's HC-2655-A scan with its check. */
async function deliverScan() {
  const [sample] = await query<{ id: string }>("select s.id from samples s join orders o on o.request_id = s.request_id where o.id = $1", [orderId]);
  const [source] = await query<{ id: string }>("select id from order_files where name = 'HC-2655-A_Co_15-120.xy' and version = 1");
  const [file] = await query<{ id: string }>(
    `insert into order_files (order_id, sample_id, kind, name, version, size_bytes, content_type, sha256, storage_key, state, scan_format, scan_info, stored_at)
     select $1, $2, kind, 'PSF-203-A_Co_15-120.xy', 1, size_bytes, content_type, sha256, storage_key, 'stored', scan_format, scan_info, now() from order_files where id = $3 returning id`,
    [orderId, sample.id, source.id],
  );
  await query(
    "insert into scan_checks (file_id, status, verdict, result, started_at, finished_at) select $1, status, verdict, result, started_at, finished_at from scan_checks where file_id = $2",
    [file.id, source.id],
  );
  for (const to of ["samples_in_transit", "samples_received", "measuring", "data_delivered"]) {
    await query("insert into order_events (order_id, to_state, note) values ($1, $2, '')", [orderId, to]);
  }
  await query("update orders set state = 'data_delivered', delivered_at = now() where id = $1", [orderId]);
}

beforeAll(async () => {
  b = await openBrowser();
  dir = fs.mkdtempSync(path.join(os.tmpdir(), "diffractory-buying-"));
  const [org] = await query<{ id: string; requires_purchase_order: boolean }>(
    "select id, requires_purchase_order from organisations where slug = 'pinecrest-solid-forms'",
  );
  pinecrestId = org.id;
  requiredBefore = org.requires_purchase_order;
  await query("update organisations set requires_purchase_order = true where id = $1", [pinecrestId]);
  // The provider's webhooks must reach the app under test, whichever port it runs on.
  undoWebhook = await sendPaymentWebhooksHere();
  const [owner] = await query<{ id: string }>("select id from users where email = 'owner@pinecrest.example'");
  const [request] = await query<{ id: string }>(
    `insert into requests (organisation_id, created_by, title, state, range_min, range_max, currency, opened_at)
     values ($1, $2, $3, 'open', 5, 60, 'EUR', now()) returning id`,
    [pinecrestId, owner.id, TITLE],
  );
  requestId = request.id;
  for (const [position, label] of ["PSF-203-A", "PSF-203-B"].entries()) {
    await query("insert into samples (request_id, position, label, formula) values ($1, $2, $3, 'C17H19NO3')", [requestId, position, label]);
  }
  const [lab] = await query<{ id: string }>("select id from organisations where slug = 'granite-ridge-characterisation'");
  await query(
    `insert into quotes (request_id, lab_id, state, line_items, total_minor, currency, valid_until, turnaround_days)
     values ($1, $2, 'sent', $3, $4, 'EUR', now() + interval '14 days', 6)`,
    [
      requestId,
      lab.id,
      JSON.stringify([{ description: "Measurement and lattice check, per sample", quantity: 2, unitMinor: UNIT_MINOR, totalMinor: 2 * UNIT_MINOR }]),
      2 * UNIT_MINOR,
    ],
  );
});
afterEach(async () => {
  expect(b.consoleErrors, "console errors in the browser").toEqual([]);
  await b.context.clearCookies();
});
afterAll(async () => {
  await b?.close();
  if (dir) fs.rmSync(dir, { recursive: true, force: true });
  if (pinecrestId) await query("update organisations set requires_purchase_order = $2 where id = $1", [pinecrestId, requiredBefore]);
  await undoWebhook();
  await clearSignInAttempts();
});

describe("buying as a company: a purchase order, a bank transfer, the invoice, a part refund and the accounts", () => {
  it("the client accepts the quote with its PO number, chooses bank transfer and receives the bank details", async () => {
    const { page } = b;
    await signIn(page, "owner@pinecrest.example");
    await page.waitForURL(`${BASE_URL}/client`);
    await visit(page, `/client/requests/${requestId}`);
    const quote = page.getByRole("article", { name: "Quote from Granite Ridge Characterisation" });
    await quote.getByLabel(/Purchase-order number \(required by your organisation\)/).fill(PO);
    await quote.getByRole("button", { name: "Accept Granite Ridge Characterisation's quote" }).click();
    await page.waitForURL(/\/client\/orders\/[0-9a-f-]+$/);
    orderId = page.url().split("/").pop()!;
    const [order] = await query<{ number: string; amount_minor: number; purchase_order_number: string }>(
      "select number, amount_minor, purchase_order_number from orders where id = $1",
      [orderId],
    );
    orderNumber = order.number;
    expect(order).toMatchObject({ amount_minor: 2 * UNIT_MINOR, purchase_order_number: PO });
    await visit(page, `/client/orders/${orderId}`);
    await page.getByRole("region", { name: "Purchase order" }).getByText(PO).waitFor();
    await screenshot(page, "buying-order-accepted-with-po");

    await page.getByRole("button", { name: "Bank transfer instead" }).click();
    await page.getByRole("heading", { name: "Pay by bank transfer" }).waitFor();
    const facts = await transferFacts(page);
    // An IBAN as printed on paper (ISO 13616: country, check digits, then groups of four) and a BIC (ISO 9362: 8 or 11).
    expect(facts.IBAN).toMatch(/^[A-Z]{2}\d{2}( [A-Z0-9]{1,4})+$/);
    expect(facts.BIC).toMatch(/^[A-Z]{6}[A-Z0-9]{2}([A-Z0-9]{3})?$/);
    expect(facts.Reference).toMatch(/^[A-Z0-9-]{6,}$/);
    expect(facts["Account holder"]).not.toBe("");
    expect(facts).toMatchObject({ Amount: TOTAL, "Purchase order": PO, "Still to transfer": TOTAL });
    expect(facts["Must arrive by"]).toMatch(/^(\w{3} \d{1,2}, \d{4}|\d{1,2} \w+ \d{4})$/);
    const text = (await page.locator("main").textContent()) ?? "";
    expect(text).toContain(`It must arrive by ${facts["Must arrive by"]}`);
    expect(text).not.toMatch(PROVIDER_ID);
    expect(text).not.toMatch(/minor units?/i);
    await checkAccessibility(page, "client-order-bank-transfer");
    await screenshot(page, "buying-bank-transfer-instructions");
  });

  it("a part of the transfer arrives and the page shows what was received and what is still due; then the rest, and the money is held", async () => {
    const { page } = b;
    await signIn(page, "owner@pinecrest.example");
    await page.waitForURL(`${BASE_URL}/client`);
    await visit(page, `/client/orders/${orderId}`);
    const reference = (await transferFacts(page)).Reference;

    await transferArrives(reference, FIRST_PART_MINOR);
    const partly = await reloadUntil(page, /Received so far\s*€120\.00/);
    expect(await transferFacts(page)).toMatchObject({ "Received so far": "€120.00", "Still to transfer": "€200.00", Amount: TOTAL, Reference: reference });
    expect(partly).toContain(`Partly paid: €120.00 of ${TOTAL} has arrived. The order waits for the remaining €200.00.`);
    expect(partly).not.toMatch(PROVIDER_ID);
    // The card stays possible, and says what happens to the part already transferred.
    await page.getByRole("button", { name: `Pay ${TOTAL} by card instead` }).waitFor();
    expect(partly).toContain("Paying by card closes the bank transfer; anything already transferred is sent back to the account it came from.");
    await checkAccessibility(page, "client-order-transfer-partly-paid");
    await screenshot(page, "buying-transfer-partly-paid");

    await transferArrives(reference, REST_MINOR);
    const held = await reloadUntil(page, "The money is held.");
    expect(held).toContain("Funds held");
    // The invoice is issued when the money is held; the order page lists it for download.
    const documents = page.getByRole("region", { name: "Invoice and credit notes" });
    await documents.waitFor();
    expect(await documents.textContent()).toContain(TOTAL);
    await checkAccessibility(page, "client-order-paid-by-transfer");
    await screenshot(page, "buying-transfer-paid-held");
    const [payment] = await query<{ status: string; received_minor: number }>(
      "select status, received_minor from payments where order_id = $1 and method = 'bank_transfer'",
      [orderId],
    );
    expect(payment).toEqual({ status: "paid", received_minor: FIRST_PART_MINOR + REST_MINOR });
  });

  it("the client downloads the invoice, which names its number, the PO, both parties and the total", async () => {
    const { page } = b;
    await signIn(page, "owner@pinecrest.example");
    await page.waitForURL(`${BASE_URL}/client`);
    await visit(page, `/client/orders/${orderId}`);
    const [invoice] = await query<{ number: string }>("select number from invoices where order_id = $1 and kind = 'invoice'", [orderId]);
    invoiceNumber = invoice.number;
    const documents = page.getByRole("region", { name: "Invoice and credit notes" });
    const { where, name } = await download(page, () => documents.getByRole("link", { name: invoiceNumber }).click());
    expect(name).toBe(`${invoiceNumber}.pdf`);
    expect(fs.readFileSync(where).subarray(0, 5).toString()).toBe("%PDF-");
    const text = pdfText(where);
    // Council Directive 2006/112/EC Art. 226: (2) the number, (5) both parties' names and addresses, (8)-(10) the
    // amounts; the purchase order is the buyer's own reference, printed for its procurement.
    expect(text).toContain(invoiceNumber);
    expect(pdfFact(text, "Your purchase order")).toBe(PO);
    expect(pdfFact(text, "Order ")).toBe(orderNumber);
    expect(text).toContain("Granite Ridge Characterisation Inc.");
    expect(text).toContain("410 Quarrystone Avenue");
    expect(text).toContain("Pinecrest Solid Forms Ltd");
    expect(text).toContain("7 Larchmere Row");
    expect(text).toMatch(new RegExp(`^\\s+Total\\s+${TOTAL.replace(".", "\\.")}$`, "m"));
    expect(text).not.toMatch(PROVIDER_ID);
    expect(text).not.toMatch(/minor units?/i);
    await screenshot(page, "buying-invoice-listed");
  });

  it("the scan is delivered, the client opens a dispute and the admin decides a part refund", async () => {
    const { page } = b;
    await deliverScan();
    await signIn(page, "owner@pinecrest.example");
    await page.waitForURL(`${BASE_URL}/client`);
    await visit(page, `/client/orders/${orderId}`);
    await page
      .getByLabel("What is wrong with the delivery?")
      .fill("Only one of the two samples was measured over the range we asked for; the second stops at 45°.");
    await page.getByRole("button", { name: "Open a dispute" }).click();
    await page
      .getByRole("region", { name: "The dispute" })
      .getByText(/the second stops at 45°/)
      .waitFor();
    await screenshot(page, "buying-dispute-opened");
    await b.context.clearCookies();

    await signIn(page, "admin@diffractory.example");
    await page.waitForURL(`${BASE_URL}/admin`);
    await visit(page, `/admin/disputes/${orderId}`);
    const decision = page.getByRole("form", { name: `Decision on order ${orderNumber}` });
    await decision.getByLabel("Refund to the client, in EUR").fill(REFUND);
    await decision.getByText("The client gets €75.00 back; the lab is paid €225.40 after the platform fee of €19.60.").waitFor();
    await decision.getByLabel("Reason for the decision").fill("The second sample was measured over a shorter range than agreed. Part refund.");
    await decision.getByRole("button", { name: "Decide and settle" }).click();
    await page.getByText("Dispute decided; the refund and payout are under way.").waitFor();
    await page.getByText(/Refunded €75\.00, paid to the lab €225\.40/).waitFor();
    await screenshot(page, "buying-dispute-decided");
  });

  it("the client downloads the credit note, which names its number, the invoice it corrects and the amount", async () => {
    const { page } = b;
    await signIn(page, "owner@pinecrest.example");
    await page.waitForURL(`${BASE_URL}/client`);
    await visit(page, `/client/orders/${orderId}`);
    const [note] = await query<{ number: string }>("select number from invoices where order_id = $1 and kind = 'credit_note'", [orderId]);
    expect(note, "a credit note was issued for the refund").toBeDefined();
    creditNoteNumber = note.number;
    const documents = page.getByRole("region", { name: "Invoice and credit notes" });
    expect(await documents.textContent()).toContain(`${creditNoteNumber} (PDF) — €${REFUND} refunded`);
    await checkAccessibility(page, "client-order-credit-note");
    await screenshot(page, "buying-credit-note-listed");
    const { where, name } = await download(page, () => documents.getByRole("link", { name: creditNoteNumber }).click());
    expect(name).toBe(`${creditNoteNumber}.pdf`);
    const text = pdfText(where);
    // A credit note refers to the invoice it corrects (Council Directive 2006/112/EC Art. 219 treats it as an invoice;
    // Art. 226 then asks for its own number and date and the amounts).
    expect(text).toContain(creditNoteNumber);
    expect(pdfFact(text, "Corrects invoice")).toMatch(new RegExp(`^${invoiceNumber} of \\d{1,2} \\w+ \\d{4}$`));
    expect(text).toMatch(new RegExp(`Total credited\\s+€${REFUND.replace(".", "\\.")}\\n`));
    expect(pdfFact(text, "Your purchase order")).toBe(PO);
    // The line says why in words, not in the ledger's memo.
    expect(text).toContain(`Refund on order ${orderNumber} after the`);
    expect(text).not.toContain("Dispute decision: refund");
    expect(text).not.toMatch(PROVIDER_ID);
  });

  it("the lab downloads this month's statement, PDF and CSV, which list the order with its PO number", async () => {
    const { page } = b;
    await signIn(page, "lab@graniteridge.example");
    await page.waitForURL(`${BASE_URL}/lab`);
    await visit(page, "/lab/statements");
    const name = monthName(month);
    await page.getByRole("heading", { level: 2, name }).waitFor();
    const row = page.getByRole("row", { name: new RegExp(orderNumber) });
    expect(await row.textContent()).toContain(PO);
    await checkAccessibility(page, "lab-statements");
    await screenshot(page, "buying-lab-statement");

    // The PDF opens in the browser (shown inline); its bytes are fetched as the link gives them, with the lab's session.
    const href = (await page.getByRole("link", { name: `Statement of ${name} as PDF` }).getAttribute("href"))!;
    expect(href).toBe(`/lab/statements/${month}.pdf`);
    const answer = await page.request.get(href);
    expect(answer.headers()["content-type"]).toBe("application/pdf");
    const pdfFile = path.join(dir, `statement-${month}.pdf`);
    fs.writeFileSync(pdfFile, await answer.body());
    const pdfLines = pdfText(pdfFile);
    expect(pdfLines).toContain(orderNumber);
    expect(pdfLines).toContain(PO);
    const csv = await download(page, () => page.getByRole("link", { name: `Statement of ${name} as CSV` }).click());
    const line = fs
      .readFileSync(csv.where, "utf8")
      .split(/\r?\n/)
      .find((l) => l.includes(orderNumber));
    // Columns as STATEMENT_CSV_HEADER: the order's payout row carries its PO, the gross, the refund and what the lab got.
    expect(line).toBeDefined();
    expect(line).toContain(PO);
    expect(line).toContain("320.00");
    expect(line).toContain("75.00");
    expect(line).toContain("225.40");
  });

  it("the admin picks today on the invoices page and downloads the export with the invoice and the credit note", async () => {
    const { page } = b;
    await signIn(page, "admin@diffractory.example");
    await page.waitForURL(`${BASE_URL}/admin`);
    await visit(page, "/admin/invoices");
    const period = page.getByRole("form", { name: "Choose the period" });
    await period.getByLabel("First day").fill(today);
    await period.getByLabel("Last day").fill(today);
    await period.getByRole("button", { name: "Show the period" }).click();
    await page.waitForURL(new RegExp(`from=${today}&to=${today}`));
    await page.getByRole("cell", { name: invoiceNumber, exact: true }).waitFor();
    await page.getByRole("cell", { name: `${creditNoteNumber} corrects ${invoiceNumber}` }).waitFor();
    await checkAccessibility(page, "admin-invoices");
    await screenshot(page, "buying-admin-invoices");
    const exported = await download(page, () => page.getByRole("link", { name: "Download CSV" }).click());
    expect(exported.name).toBe(`diffractory-invoices-${today}-to-${today}.csv`);
    const csv = fs.readFileSync(exported.where, "utf8");
    expect(csv).toContain(invoiceNumber);
    expect(csv).toContain(creditNoteNumber);
    expect(csv).toContain(PO);
  });

  it("the e-mails the client got about the money name the PO and show no provider ids or minor units", async () => {
    const mails = await query<{ kind: string; subject: string; text: string; html: string }>(
      `select kind, subject, text, html from outbox_messages where order_id = $1 and "to" = 'owner@pinecrest.example' order by created_at`,
      [orderId],
    );
    const kinds = mails.map((m) => m.kind);
    expect(kinds).toEqual(expect.arrayContaining(["funds_held", "dispute_resolved"]));
    for (const m of mails) {
      const all = `${m.subject}\n${m.text}\n${m.html}`;
      expect(all, m.kind).not.toMatch(PROVIDER_ID);
      expect(all, m.kind).not.toMatch(/minor units?/i);
      if (["funds_held", "dispute_resolved", "order_cancelled", "transfer_reminder", "delivery_accepted"].includes(m.kind)) {
        expect(m.text, m.kind).toContain(PO);
        expect(m.html, m.kind).toContain(PO);
      }
    }
  });
});
