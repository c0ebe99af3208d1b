// Statements and the platform's fee invoices on the real PostgreSQL and the payment fake: fee invoices issued once
// per lab, month and currency, numbered without gaps, equal to the month's platform fees in the ledger to the minor
// unit; the lab's monthly statement as CSV and PDF; the admins' export of a period cut at midnight UTC.
import { execFileSync } from "node:child_process";
import { mkdtempSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { sql } from "drizzle-orm";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { moneyWorld, type MoneyWorld } from "./money-fixtures";
import { callRoute, getRequest, signInAs } from "./route-call";

let w: MoneyWorld;
const orders: Record<string, { id: string; number: string; amount: number }> = {};
let labCookie = "";
let otherLabCookie = "";
let adminCookie = "";
let clientCookie = "";

/**
 * RFC 4180 read back (section 2: fields optionally in double quotes, a doubled quote inside, CRLF between
 * records). No CSV parser is installed beside csv-stringify, so the test reads the grammar itself.
 */
function parseCsv(text: string): string[][] {
  const rows: string[][] = [];
  let row: string[] = [];
  let field = "";
  let quoted = false;
  for (let i = 0; i < text.length; i++) {
    const c = text[i];
    if (quoted) {
      if (c === '"' && text[i + 1] === '"') {
        field += '"';
        i++;
      } else if (c === '"') quoted = false;
      else field += c;
    } else if (c === '"') quoted = true;
    else if (c === ",") {
      row.push(field);
      field = "";
    } else if (c === "\r" && text[i + 1] === "\n") {
      row.push(field);
      rows.push(row);
      row = [];
      field = "";
      i++;
    } else field += c;
  }
  if (field || row.length) rows.push([...row, field]);
  return rows;
}

/** The text of a PDF as Debian's poppler-utils pdftotext reads it (layout kept, so a row stays on one line). */
function pdfText(bytes: Uint8Array): string {
  const dir = mkdtempSync(join(tmpdir(), "statement-"));
  const file = join(dir, "doc.pdf");
  writeFileSync(file, bytes);
  return execFileSync("pdftotext", ["-layout", file, "-"], { encoding: "utf8" });
}

async function paidOut(label: string, amount: number) {
  const id = await w.makeOrder(amount);
  await w.pay(id);
  await w.deliver(id);
  await w.app.orders.acceptDelivery(id, "client", w.owner.id, { confirmed: true });
  const [o] = await w.db.select().from(w.schema.orders).where(w.eq(w.schema.orders.id, id));
  orders[label] = { id, number: o.number, amount };
  return id;
}

/** Moves an order's ledger movements to a moment in the past, as if it had been paid out then. */
async function backdate(label: string, at: string) {
  await w.db.execute(sql`update ledger_transactions set created_at = ${at} where order_id = ${orders[label].id} and kind <> 'payment_held'`);
}

/** The platform fees the ledger kept from Granite Ridge in [from, to), read straight from the entries. */
async function ledgerFees(from: string, to: string) {
  const r = await w.db.execute<{ fees: string }>(sql`
    select coalesce(-sum(e.amount_minor), 0) as fees from ledger_entries e
    join ledger_transactions t on t.id = e.transaction_id join orders o on o.id = t.order_id
    where t.kind = 'platform_fee' and e.account = 'platform_fees' and o.lab_id = ${w.granite.id}
      and t.created_at >= ${from} and t.created_at < ${to}`);
  return Number(r.rows[0].fees);
}

beforeAll(async () => {
  w = await moneyWorld();
  await w.onboardLab();
  // October 2026: two accepted orders and a dispute settled with a partial refund; the last one at 23:59:59.999
  // on the 31st. November: one order paid out at 00:00 on the 1st exactly.
  await paidOut("a", 19_500);
  await paidOut("b", 12_345);
  const disputed = await w.makeOrder(40_000);
  await w.pay(disputed);
  await w.deliver(disputed);
  await w.app.orders.openDispute(disputed, w.owner.id, "Two of the five scans are missing.");
  const { resolveDispute } = await import("~/models/orders/lifecycle.server");
  await resolveDispute(disputed, { userId: w.admin.id }, 10_000, "Three of five scans delivered.");
  const [d] = await w.db.select().from(w.schema.orders).where(w.eq(w.schema.orders.id, disputed));
  orders.d = { id: disputed, number: d.number, amount: 40_000 };
  await paidOut("n", 33_333);
  await backdate("a", "2026-10-03T09:00:00Z");
  await backdate("b", "2026-10-17T15:30:00Z");
  await backdate("d", "2026-10-31T23:59:59.999Z");
  await backdate("n", "2026-11-01T00:00:00Z");
  labCookie = (await signInAs("lab@graniteridge.example")).cookie!;
  otherLabCookie = (await signInAs("lab@lakeside.example")).cookie!;
  adminCookie = (await signInAs("admin@diffractory.example")).cookie!;
  clientCookie = (await signInAs("owner@halvorsen.example")).cookie!;
});

afterAll(async () => {
  await w?.close();
});

describe("platform fee invoices", () => {
  it("issues one per lab and month, equal to the month's platform fees in the ledger to the minor unit, and only once", async () => {
    const { issueFeeInvoicesForMonth } = await import("~/models/invoices/fee-invoices.server");
    // Issued at 23:59 on the last day of November (the admin export below counts it in November).
    const first = await issueFeeInvoicesForMonth("2026-10", new Date("2026-11-30T23:59:00Z"));
    expect(first.issued).toEqual(["FEE-2026-0001"]);
    const again = await issueFeeInvoicesForMonth("2026-10", new Date("2026-12-02T08:00:00Z"));
    expect(again).toEqual({ month: "2026-10", issued: [], alreadyIssued: 1 });

    const [inv] = await w.db.select().from(w.schema.invoices).where(w.eq(w.schema.invoices.number, "FEE-2026-0001"));
    const fees = await ledgerFees("2026-10-01T00:00:00Z", "2026-11-01T00:00:00Z");
    // 8 % of 195.00, of 123.45 and of the 300.00 paid out after the dispute's refund, each rounded to the cent
    // (platformFee in app/domain/money.ts): 15.60 + 9.88 + 24.00.
    expect(fees).toBe(1560 + 988 + 2400);
    expect(inv.totalMinor).toBe(fees);
    expect(inv.recipientOrganisationId).toBe(w.granite.id);
    expect(inv.issuerOrganisationId).toBeNull();
    expect(inv.period).toBe("2026-10");
    expect(inv.sourceKey).toBe(`fee:${w.granite.id}:2026-10:EUR`);
    // Granite Ridge bills from Canada: the place of supply is outside the EU (Directive 2006/112/EC Art. 44), no VAT.
    expect(inv.document.treatment).toBe("outside_eu");
    expect(inv.taxMinor).toBe(0);
    expect(inv.document.lines.map((l) => l.description).join("\n")).toContain(orders.d.number);
    expect(inv.document.lines.reduce((s, l) => s + l.netMinor, 0)).toBe(inv.netMinor);
    expect(inv.document.seller.name).toBe("Diffractory Marketplace B.V.");
    expect(inv.document.seller.taxId).toBe("NL864207531B01");
  });

  it("numbers the next month's invoice without a gap, and a lab in the platform's member state is charged VAT inside the fee", async () => {
    const { issueFeeInvoicesForMonth } = await import("~/models/invoices/fee-invoices.server");
    const { taxOn } = await import("~/domain/vat");
    // Granite Ridge moves its billing address to the Netherlands without a VAT number: domestic supply, 21 %
    // (the Dutch standard rate, European Commission VAT rates table, from memory as in app/domain/vat.ts).
    await w.db
      .update(w.schema.organisations)
      .set({ billingAddress: { line1: "Kade 7", postcode: "1011 AA", city: "Amsterdam", country: "NL" }, legalName: "Granite Ridge Characterisation B.V." })
      .where(w.eq(w.schema.organisations.id, w.granite.id));
    // Two runs at once: the second waits for the first's number and gives its own back, so no gap.
    const runs = await Promise.all([
      issueFeeInvoicesForMonth("2026-11", new Date("2026-12-01T00:00:00Z")),
      issueFeeInvoicesForMonth("2026-11", new Date("2026-12-01T00:00:00Z")),
    ]);
    expect(runs.flatMap((r) => r.issued)).toEqual(["FEE-2026-0002"]);
    expect(runs.reduce((s, r) => s + r.alreadyIssued, 0)).toBe(1);
    const seqs = await w.db.select({ seq: w.schema.invoices.seq }).from(w.schema.invoices).where(w.eq(w.schema.invoices.kind, "fee_invoice"));
    expect(seqs.map((s) => s.seq).sort()).toEqual([1, 2]);

    const [inv] = await w.db.select().from(w.schema.invoices).where(w.eq(w.schema.invoices.number, "FEE-2026-0002"));
    const fees = await ledgerFees("2026-11-01T00:00:00Z", "2026-12-01T00:00:00Z");
    expect(fees).toBe(2667); // 8 % of 333.33 = 26.6664, rounded to 26.67
    expect(inv.document.treatment).toBe("domestic");
    expect(inv.totalMinor).toBe(fees); // what was kept, VAT included (Art. 73: the VAT is in the consideration)
    expect(inv.netMinor).toBe(Math.round((2667 * 10_000) / 12_100)); // 2204
    expect(inv.netMinor + inv.taxMinor).toBe(inv.totalMinor);
    expect(Math.abs(inv.taxMinor - taxOn(inv.netMinor, 2100))).toBeLessThanOrEqual(1);
    expect(inv.document.buyer.name).toBe("Granite Ridge Characterisation B.V.");
  });

  it("refuses a month that has not ended", async () => {
    const { issueFeeInvoicesForMonth } = await import("~/models/invoices/fee-invoices.server");
    await expect(issueFeeInvoicesForMonth("2026-12", new Date("2026-12-20T00:00:00Z"))).rejects.toThrow(/not ended/);
  });

  it("shows the fee invoice PDF to the lab's members and admins only", async () => {
    const route = (await import("~/routes/lab/fee-invoice-pdf")).loader;
    const path = "/lab/statements/fee-invoices/FEE-2026-0001.pdf";
    const own = await callRoute(route, getRequest(path, labCookie), { file: "FEE-2026-0001.pdf" });
    expect(own.status).toBe(200);
    expect(own.headers.get("content-type")).toBe("application/pdf");
    expect((await callRoute(route, getRequest(path, adminCookie), { file: "FEE-2026-0001.pdf" })).status).toBe(200);
    expect((await callRoute(route, getRequest(path, otherLabCookie), { file: "FEE-2026-0001.pdf" })).status).toBe(404);
    expect((await callRoute(route, getRequest(path, clientCookie), { file: "FEE-2026-0001.pdf" })).status).toBe(403);
    const pdf = await (await import("~/models/invoices/pdf.server")).invoicePdf(
      (await (await import("~/models/invoices/fee-invoices.server")).feeInvoiceByNumber("FEE-2026-0001"))!.document,
    );
    const text = pdfText(pdf);
    expect(text).toContain("FEE-2026-0001");
    expect(text).toContain("€49.48");
    expect(text).toContain(orders.a.number);
  });
});

describe("the lab's monthly statement", () => {
  it("lists October's payouts with gross, refunds, fee and net, whose totals add up, as CSV", async () => {
    const route = (await import("~/routes/lab/statement-file")).loader;
    const answer = await callRoute(route, getRequest("/lab/statements/2026-10.csv", labCookie), { file: "2026-10.csv" });
    expect(answer.status).toBe(200);
    expect(answer.headers.get("content-type")).toContain("text/csv");
    const rows = parseCsv(answer.body as string);
    const [header, ...rest] = rows;
    const col = (name: string) => header.indexOf(name);
    const payouts = rest.filter((r) => r[0] === "payout");
    expect(payouts.map((r) => r[col("order")])).toEqual([orders.a.number, orders.b.number, orders.d.number]);
    const d = payouts[2];
    // The disputed order: 400.00 paid, 100.00 refunded, 8 % of the 300.00 kept (24.00), 276.00 to the lab.
    expect([d[col("gross")], d[col("refunded")], d[col("platform_fee")], d[col("net_paid")]]).toEqual(["400.00", "100.00", "24.00", "276.00"]);
    expect(d[col("transfer_date")]).toBe("2026-10-31");
    const total = rest.find((r) => r[0] === "total")!;
    expect(total[col("currency")]).toBe("EUR");
    // 195.00 + 123.45 + 400.00; fees 15.60 + 9.88 + 24.00; net 179.40 + 113.57 + 276.00.
    expect([total[col("gross")], total[col("refunded")], total[col("platform_fee")], total[col("net_paid")]]).toEqual(["718.45", "100.00", "49.48", "568.97"]);
    // What the clients paid = refunded + platform fee + paid to the lab, for every row and the total.
    for (const r of [...payouts, total]) {
      const cents = (name: string) => Math.round(Number(r[col(name)]) * 100);
      expect(cents("gross")).toBe(cents("refunded") + cents("platform_fee") + cents("net_paid"));
    }
    const fee = rest.find((r) => r[0] === "fee_invoice")!;
    expect(fee[col("fee_invoice")]).toBe("FEE-2026-0001");
    expect(fee[col("platform_fee")]).toBe("49.48");
    // The order at 00:00 on 1 November belongs to November's statement, not October's.
    expect((answer.body as string).includes(orders.n.number)).toBe(false);
  });

  it("is a PDF that pdftotext reads back with the month, the totals and the fee invoice number", async () => {
    const route = (await import("~/routes/lab/statement-file")).loader;
    const answer = await fetchPdf(route, "/lab/statements/2026-10.pdf", { file: "2026-10.pdf" });
    const text = pdfText(answer);
    expect(text).toContain("Payout statement, October 2026");
    expect(text).toContain("Granite Ridge Characterisation B.V.");
    expect(text).toContain("€718.45");
    expect(text).toContain("€49.48");
    expect(text).toContain("€568.97");
    expect(text).toContain("FEE-2026-0001");
    expect(text).toContain(orders.d.number);
  });

  it("is for the lab's own members: another lab reads its own (empty) month, a client is refused, a bad month is a sentence", async () => {
    const route = (await import("~/routes/lab/statement-file")).loader;
    const other = await callRoute(route, getRequest("/lab/statements/2026-10.csv", otherLabCookie), { file: "2026-10.csv" });
    expect(other.status).toBe(200);
    expect(parseCsv(other.body as string).filter((r) => r[0] === "payout")).toEqual([]);
    expect((await callRoute(route, getRequest("/lab/statements/2026-10.csv", clientCookie), { file: "2026-10.csv" })).status).toBe(403);
    const bad = await callRoute(route, getRequest("/lab/statements/2026-13.csv", labCookie), { file: "2026-13.csv" });
    expect(bad.status).toBe(400);
    expect(bad.body).toMatch(/YYYY-MM/);
  });

  it("the statements page lists both months with their fee invoices", async () => {
    const route = (await import("~/routes/lab/statements")).loader;
    const answer = await callRoute(route, getRequest("/lab/statements", labCookie));
    const body = answer.body as { months: { month: string; feeInvoices: string[] }[]; statement: { month: string } };
    expect(body.months.map((m) => [m.month, m.feeInvoices])).toEqual([
      ["2026-11", ["FEE-2026-0002"]],
      ["2026-10", ["FEE-2026-0001"]],
    ]);
    expect(body.statement.month).toBe("2026-11");
  });
});

async function fetchPdf(route: Parameters<typeof callRoute>[0], path: string, params: Record<string, string>) {
  const { loader } = { loader: route };
  const value = (await loader({ request: getRequest(path, labCookie), params, context: { clientAddress: "192.0.2.10" } })) as Response;
  expect(value.headers.get("content-type")).toBe("application/pdf");
  return new Uint8Array(await value.arrayBuffer());
}

describe("the admins' export of a period", () => {
  it("counts a document issued at 23:59 on the period's last day and not one issued at 00:00 the next day (UTC)", async () => {
    const route = (await import("~/routes/admin/invoices-export")).loader;
    const answer = await callRoute(route, getRequest("/admin/invoices/export?from=2026-11-01&to=2026-11-30", adminCookie));
    expect(answer.status).toBe(200);
    const [header, ...rows] = parseCsv(answer.body as string);
    expect(header).toEqual([
      "number",
      "kind",
      "issue_date",
      "seller",
      "buyer",
      "buyer_tax_id",
      "order",
      "purchase_order",
      "currency",
      "net",
      "tax",
      "gross",
      "treatment",
      "refers_to_invoice",
      "fee_period",
    ]);
    // Only fee invoices here: the order invoices and credit notes are issued by another part (not in this world).
    const fees = rows.filter((r) => r[1] === "fee_invoice");
    expect(fees.map((r) => r[0])).toEqual(["FEE-2026-0001"]);
    expect(fees[0].slice(8, 15)).toEqual(["EUR", "49.48", "0.00", "49.48", "outside_eu", "", "2026-10"]);
    const december = await callRoute(route, getRequest("/admin/invoices/export?from=2026-12-01&to=2026-12-01", adminCookie));
    expect(
      parseCsv(december.body as string)
        .filter((r) => r[1] === "fee_invoice")
        .map((r) => r[0]),
    ).toEqual(["FEE-2026-0002"]);
  });

  it("shows the totals per currency on the screen, refuses a reversed period with a sentence, and is for admins only", async () => {
    const screen = (await import("~/routes/admin/invoices")).loader;
    const answer = await callRoute(screen, getRequest("/admin/invoices?from=2026-11-01&to=2026-12-31", adminCookie));
    const body = answer.body as { totals: { currency: string; kind: string; documents: number; grossMinor: number; taxMinor: number }[] };
    const fee = body.totals.find((t) => t.kind === "fee_invoice")!;
    expect(fee).toMatchObject({ currency: "EUR", documents: 2, grossMinor: 4948 + 2667 });
    const reversed = await callRoute(screen, getRequest("/admin/invoices?from=2026-12-01&to=2026-11-01", adminCookie));
    expect((reversed.body as { error: string }).error).toMatch(/before its first day/);
    const route = (await import("~/routes/admin/invoices-export")).loader;
    expect((await callRoute(route, getRequest("/admin/invoices/export?from=2026-11-01&to=2026-11-30", labCookie))).status).toBe(403);
    expect((await callRoute(route, getRequest("/admin/invoices/export?from=soon&to=2026-11-30", adminCookie))).status).toBe(400);
  });
});
