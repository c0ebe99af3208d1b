// Invoices and credit notes (docs/design.md#invoices, #tax-on-invoices). Sources: Council Directive 2006/112/EC
// (OJ L 347, 11.12.2006) Art. 226, the list of what a VAT invoice must state, points (1)–(11a) named beside each
// assertion; Art. 44/196 for the reverse charge; Art. 219 (a credit note that refers to the invoice it amends is
// treated as an invoice). The PDF is read back with pdftotext (Debian poppler-utils). Rounding: common practice.
import { execFileSync } from "node:child_process";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { moneyWorld, type MoneyWorld } from "./money-fixtures";
import { callRoute, getRequest, sessionCookies } from "./route-call";

let w: MoneyWorld;
const as = sessionCookies();
type Routes = {
  invoice: typeof import("~/routes/api/order-invoice");
  creditNote: typeof import("~/routes/api/order-credit-note");
  quotes: typeof import("~/models/requests/quotes.server");
};
let routes: Routes;
let meridian: { id: string };

beforeAll(async () => {
  w = await moneyWorld();
  routes = {
    invoice: await import("~/routes/api/order-invoice"),
    creditNote: await import("~/routes/api/order-credit-note"),
    quotes: await import("~/models/requests/quotes.server"),
  };
  [meridian] = await w.db.select().from(w.schema.organisations).where(w.eq(w.schema.organisations.slug, "meridian-analytical"));
  // The Portuguese lab with a VAT number of the PT format; invented street and number.
  await w.db
    .update(w.schema.organisations)
    .set({
      legalName: "Meridian Analytical, Lda.",
      billingAddress: { line1: "Rua das Salinas Altas 88", postcode: "4999-012", city: "Porto Meridiano", country: "PT" },
      taxId: "PT509876543",
    })
    .where(w.eq(w.schema.organisations.id, meridian.id));
}, 60_000);

afterAll(async () => {
  await w?.close();
});

/** Halvorsen's billing profile for the next acceptance (the treatment is fixed then). */
async function buyerIn(country: string, taxId: string | null, line1 = "Teststraße 1") {
  await w.db
    .update(w.schema.organisations)
    .set({ legalName: "Halvorsen Cathode Works AS", billingAddress: { line1, postcode: "10115", city: "Testburg", country }, taxId })
    .where(w.eq(w.schema.organisations.id, w.halvorsen.id));
}

let counter = 0;
const LINES = [
  { description: "Powder scan, 5–90° 2θ, Cu Kα", quantity: 2, unitMinor: 9_000, totalMinor: 18_000 },
  { description: "Sample preparation", quantity: 1, unitMinor: 1_500, totalMinor: 1_500 },
];
/** An open request of Halvorsen with a sent quote of Meridian, accepted through acceptQuote (which fixes the tax). */
async function acceptedOrder(po: string | null = null) {
  counter++;
  const [r] = await w.db
    .insert(w.schema.requests)
    .values({
      organisationId: w.halvorsen.id,
      createdBy: w.owner.id,
      title: `Invoice test ${counter}`,
      state: "open",
      rangeMin: 10,
      rangeMax: 90,
      openedAt: new Date(),
    })
    .returning();
  const [q] = await w.db
    .insert(w.schema.quotes)
    .values({
      requestId: r.id,
      labId: meridian.id,
      state: "sent",
      lineItems: LINES,
      totalMinor: 19_500,
      currency: "EUR",
      validUntil: new Date(Date.now() + 7 * 86_400_000),
      turnaroundDays: 5,
    })
    .returning();
  const accepted = await routes.quotes.acceptQuote(r.id, q.id, w.halvorsen.id, w.owner.id, po ? { number: po, fileKey: null, fileName: null } : null);
  if (!accepted.ok) throw new Error(accepted.error);
  return accepted.orderId;
}

const order = async (id: string) => (await w.db.select().from(w.schema.orders).where(w.eq(w.schema.orders.id, id)))[0];

async function invoiceOf(orderId: string, email = "owner@halvorsen.example", query = "") {
  return callRoute(routes.invoice.loader, getRequest(`/api/orders/${orderId}/invoice${query}`, await as(email)), { id: orderId });
}

async function pdfText(response: Response) {
  const bytes = Buffer.from(await response.arrayBuffer());
  expect(bytes.subarray(0, 5).toString()).toBe("%PDF-");
  return execFileSync("pdftotext", ["-layout", "-", "-"], { input: bytes }).toString();
}

type InvoiceJson = {
  number: string;
  issueDate: string;
  supplyDate: string;
  seller: { name: string; address: { line1: string; city: string; country: string } | null; taxId: string | null };
  buyer: { name: string; address: { line1: string; city: string; country: string } | null; taxId: string | null };
  issuedOnBehalfBy: string;
  orderNumber: string;
  purchaseOrderNumber: string | null;
  lines: {
    description: string;
    quantity: number;
    unitPrice: string;
    unitPriceMinor: number;
    net: string;
    netMinor: number;
    taxRate: string;
    taxRateBps: number;
  }[];
  taxPerRate: { taxRate: string; taxRateBps: number; net: string; netMinor: number; tax: string; taxMinor: number }[];
  totals: { net: string; netMinor: number; tax: string; taxMinor: number; gross: string; grossMinor: number };
  currency: string;
  treatment: string;
  notes: string[];
  creditNotes: { number: string; issueDate: string; totals: { grossMinor: number; taxMinor: number; netMinor: number } }[];
};

describe("tax fixed on acceptance", () => {
  it("adds the seller's rate for a buyer in its member state: net = quote, tax on top", async () => {
    await buyerIn("PT", "PT123456789", "Avenida do Teste 5");
    const o = await order(await acceptedOrder());
    expect(o.taxTreatment).toBe("domestic");
    expect(o.taxRateBps).toBe(2300); // Portugal's standard rate (Commission's table, from memory)
    expect(o.taxMinor).toBe(4_485); // 195.00 × 23 % = 44.85
    expect(o.amountMinor).toBe(19_500 + 4_485);
  });

  it("adds nothing under the reverse charge (Art. 44, 196)", async () => {
    await buyerIn("DE", "DE123456789");
    const o = await order(await acceptedOrder());
    expect([o.taxTreatment, o.taxRateBps, o.taxMinor, o.amountMinor]).toEqual(["reverse_charge", 0, 0, 19_500]);
  });
});

describe("the invoice of a paid order", () => {
  let domesticId: string;
  let json: InvoiceJson;

  beforeAll(async () => {
    await buyerIn("PT", "PT123456789", "Avenida do Teste 5");
    domesticId = await acceptedOrder("PO-7781-A");
    const before = await invoiceOf(domesticId);
    expect(before.status).toBe(404);
    expect((before.body as { error: string }).error).toMatch(/has no invoice yet: the invoice is issued when the order is paid\.$/);
    await w.pay(domesticId);
    const answer = await invoiceOf(domesticId);
    expect(answer.status).toBe(200);
    json = answer.body as InvoiceJson;
  });

  it("carries every field of Art. 226 on the JSON", async () => {
    const o = await order(domesticId);
    // (1) the date of issue
    expect(json.issueDate).toMatch(/^\d{4}-\d{2}-\d{2}$/);
    // (2) a sequential number in a series of the lab (INV-<lab letters>-<year>-<seq>)
    expect(json.number).toMatch(/^INV-[A-Z]+-\d{4}-\d{4}$/);
    // (3) the supplier's VAT identification number
    expect(json.seller.taxId).toBe("PT509876543");
    // (4) the customer's VAT identification number
    expect(json.buyer.taxId).toBe("PT123456789");
    // (5) the full names and addresses of the supplier and the customer
    expect(json.seller.name).toBe("Meridian Analytical, Lda.");
    expect(json.seller.address).toMatchObject({ line1: "Rua das Salinas Altas 88", city: "Porto Meridiano", country: "PT" });
    expect(json.buyer.name).toBe("Halvorsen Cathode Works AS");
    expect(json.buyer.address).toMatchObject({ line1: "Avenida do Teste 5", city: "Testburg", country: "PT" });
    // (6) the extent and nature of the services
    expect(json.lines.map((l) => [l.description, l.quantity])).toEqual([
      ["Powder scan, 5–90° 2θ, Cu Kα", 2],
      ["Sample preparation", 1],
    ]);
    // (7) the date the supply was made or the payment received
    expect(json.supplyDate).toMatch(/^\d{4}-\d{2}-\d{2}$/);
    // (8) the taxable amount per rate and the unit price exclusive of VAT
    expect(json.lines.map((l) => [l.unitPriceMinor, l.unitPrice])).toEqual([
      [9_000, "€90.00"],
      [1_500, "€15.00"],
    ]);
    expect(json.taxPerRate).toEqual([{ taxRate: "23 %", taxRateBps: 2300, net: "€195.00", netMinor: 19_500, tax: "€44.85", taxMinor: 4_485 }]);
    // (9) the VAT rate applied
    expect(json.lines.every((l) => l.taxRate === "23 %")).toBe(true);
    // (10) the VAT amount payable, and the totals
    expect(json.totals).toEqual({ net: "€195.00", netMinor: 19_500, tax: "€44.85", taxMinor: 4_485, gross: "€239.85", grossMinor: 23_985 });
    expect(json.totals.grossMinor).toBe(o.amountMinor);
    expect(json.currency).toBe("EUR");
    // Beside the directive: the order, the client's PO, and who issued it on the lab's behalf.
    expect(json.orderNumber).toBe(o.number);
    expect(json.purchaseOrderNumber).toBe("PO-7781-A");
    expect(json.issuedOnBehalfBy).toBe("Diffractory");
    expect(json.treatment).toBe("domestic");
    expect(json.creditNotes).toEqual([]);
  });

  it("carries the same fields on the PDF, read back with pdftotext", async () => {
    const answer = (await routes.invoice.loader({
      request: getRequest(`/api/orders/${domesticId}/invoice?format=pdf`, await as("lab@meridian.example")),
      params: { id: domesticId },
    } as never)) as Response;
    expect(answer.headers.get("content-type")).toBe("application/pdf");
    expect(answer.headers.get("content-disposition")).toBe(`attachment; filename="${json.number}.pdf"`);
    const text = await pdfText(answer);
    const o = await order(domesticId);
    expect(text).toContain(`Invoice ${json.number}`); // (2)
    expect(text).toMatch(/Date of issue/i); // (1)
    expect(text).toContain("PT509876543"); // (3)
    expect(text).toContain("PT123456789"); // (4)
    for (const s of ["Meridian Analytical, Lda.", "Rua das Salinas Altas 88", "Halvorsen Cathode Works AS", "Avenida do Teste 5"]) expect(text).toContain(s); // (5)
    expect(text).toContain("Sample preparation"); // (6)
    expect(text).toMatch(/Date of supply or payment/i); // (7)
    expect(text).toContain("€90.00"); // (8) unit price
    expect(text).toMatch(/Tax at 23 % on €195\.00\s+€44\.85/); // (8), (9), (10)
    expect(text).toMatch(/Total\s+€239\.85/); // (10)
    expect(text).toContain("PO-7781-A");
    expect(text).toContain(o.number);
    expect(text).toContain("Issued by Diffractory in the name and on behalf of the seller.");
  });

  it("says “Reverse charge” for a business buyer in another member state (Art. 226(11a), Art. 196)", async () => {
    await buyerIn("DE", "DE123456789");
    const id = await acceptedOrder();
    await w.pay(id);
    const rc = (await invoiceOf(id)).body as InvoiceJson;
    expect(rc.treatment).toBe("reverse_charge");
    expect(rc.notes[0]).toBe("Reverse charge"); // (11a)
    expect(rc.buyer.taxId).toBe("DE123456789"); // (4)
    expect(rc.totals).toMatchObject({ taxMinor: 0, netMinor: 19_500, grossMinor: 19_500 });
    const pdf = await pdfText(
      (await routes.invoice.loader({
        request: getRequest(`/api/orders/${id}/invoice?format=pdf`, await as("owner@halvorsen.example")),
        params: { id },
      } as never)) as Response,
    );
    expect(pdf).toContain("Reverse charge");
    expect(pdf).toContain("DE123456789");
  });

  it("shows an order's invoice to its parties and admins only; everyone else the order's 404", async () => {
    expect((await invoiceOf(domesticId, "member@halvorsen.example")).status).toBe(200);
    expect((await invoiceOf(domesticId, "lab@meridian.example")).status).toBe(200);
    expect((await invoiceOf(domesticId, "admin@diffractory.example")).status).toBe(200);
    for (const other of ["owner@pinecrest.example", "lab@graniteridge.example", "lab@lakeside.example"]) {
      const a = await invoiceOf(domesticId, other);
      expect(a.status, other).toBe(404);
      expect(JSON.stringify(a.body)).not.toContain(json.number);
    }
    expect((await invoiceOf(domesticId, "owner@halvorsen.example", "?format=xml")).status).toBe(400);
  });
});

describe("numbering without gaps", () => {
  it("gives 10 orders of one lab paid at once consecutive numbers, none twice", async () => {
    await buyerIn("PT", "PT123456789");
    const ids: string[] = [];
    for (let i = 0; i < 10; i++) ids.push(await acceptedOrder());
    await Promise.all(ids.map((id) => w.pay(id)));
    const rows = await w.db
      .select({ seq: w.schema.invoices.seq, number: w.schema.invoices.number, orderId: w.schema.invoices.orderId, series: w.schema.invoices.series })
      .from(w.schema.invoices)
      .where(w.eq(w.schema.invoices.issuerOrganisationId, meridian.id));
    const invoices = rows.filter((r) => r.series.startsWith("invoice:"));
    expect(new Set(invoices.map((r) => r.series)).size).toBe(1);
    // Every one of the 10 has exactly one invoice; the series is 1..n with no gap and no repeat.
    for (const id of ids) expect(invoices.filter((r) => r.orderId === id)).toHaveLength(1);
    const seqs = invoices.map((r) => r.seq).sort((a, b) => a - b);
    expect(seqs).toEqual(Array.from({ length: seqs.length }, (_, i) => i + 1));
    expect(new Set(invoices.map((r) => r.number)).size).toBe(invoices.length);
  });
});

describe("credit notes", () => {
  it("credits each refund, referring to the invoice, and sums back to the invoice exactly", async () => {
    await buyerIn("PT", "PT123456789");
    const id = await acceptedOrder("PO-CN-1");
    await w.pay(id);
    const o = await order(id);
    // Three uneven partial refunds then the rest: the cumulative split keeps every cent (common practice).
    await w.app.payments.refund(o, 1_001, "Goodwill for a late delivery", `refund:${id}:t1`);
    await w.app.payments.refund(o, 333, "One sample not measured", `refund:${id}:t2`);
    await w.app.payments.refund(o, 7, "Rounding", `refund:${id}:t3`);
    // A repeated refund (same idempotency key) gives no second credit note.
    await w.app.payments.refund(o, 7, "Rounding", `refund:${id}:t3`);
    await w.app.payments.refundHeld(o, "Cancelled", `refund:${id}:rest`);

    const json = (await invoiceOf(id)).body as InvoiceJson;
    expect(json.creditNotes).toHaveLength(4);
    const sum = (k: "grossMinor" | "taxMinor" | "netMinor") => json.creditNotes.reduce((s, c) => s + c.totals[k], 0);
    expect(sum("grossMinor")).toBe(json.totals.grossMinor);
    expect(sum("taxMinor")).toBe(json.totals.taxMinor);
    expect(sum("netMinor")).toBe(json.totals.netMinor);
    expect(json.creditNotes.map((c) => c.totals.grossMinor)).toEqual([1_001, 333, 7, 23_985 - 1_341]);
    // The first: tax = round(10.01 × 44.85 / 239.85) = round(1.8717…) = 1.87.
    expect(json.creditNotes[0].totals.taxMinor).toBe(187);

    // Numbered in the lab's credit-note series, without gaps; each refers to the invoice (Art. 219).
    expect(json.creditNotes.map((c) => c.number)).toEqual(json.creditNotes.map((c) => c.number).sort());
    const first = json.creditNotes[0].number;
    expect(first).toMatch(/^CN-[A-Z]+-\d{4}-\d{4}$/);
    const cookie = await as("owner@halvorsen.example");
    const one = await callRoute(routes.creditNote.loader, getRequest(`/api/orders/${id}/credit-notes/${first}`, cookie), { id, number: first });
    expect(one.status).toBe(200);
    const note = one.body as InvoiceJson & { creditsInvoice: { number: string; issueDate: string } };
    expect(note.creditsInvoice).toEqual({ number: json.number, issueDate: json.issueDate });
    expect(note.seller).toEqual(json.seller);
    expect(note.buyer).toEqual(json.buyer);
    expect(note.totals).toEqual({ net: "€8.14", netMinor: 814, tax: "€1.87", taxMinor: 187, gross: "€10.01", grossMinor: 1_001 });
    const pdf = await pdfText(
      (await routes.creditNote.loader({
        request: getRequest(`/api/orders/${id}/credit-notes/${first}?format=pdf`, cookie),
        params: { id, number: first },
      } as never)) as Response,
    );
    expect(pdf).toContain(`Credit note ${first}`);
    expect(pdf).toMatch(/Corrects invoice/i);
    expect(pdf).toContain(json.number);
    expect(pdf).toMatch(/Total credited\s+€10\.01/);
    expect(pdf).toContain("PO-CN-1");
    // Another client and another lab: the same 404 as for the order.
    for (const other of ["owner@pinecrest.example", "lab@graniteridge.example"]) {
      const a = await callRoute(routes.creditNote.loader, getRequest(`/api/orders/${id}/credit-notes/${first}`, await as(other)), { id, number: first });
      expect(a.status, other).toBe(404);
    }
    expect((await callRoute(routes.creditNote.loader, getRequest(`/api/orders/${id}/credit-notes/CN-X`, cookie), { id, number: "CN-X" })).status).toBe(404);
  });

  it("issues the invoice lazily for an order paid before invoices existed", async () => {
    const id = await w.makeOrder(12_345);
    await w.pay(id);
    // As if it had been paid before this feature: no invoice row.
    await w.db.delete(w.schema.invoices).where(w.eq(w.schema.invoices.orderId, id));
    const json = (await invoiceOf(id)).body as InvoiceJson;
    expect(json.totals.grossMinor).toBe(12_345);
    expect(json.totals.taxMinor).toBe(0);
    expect((await invoiceOf(id)).body).toEqual(json);
  });
});
