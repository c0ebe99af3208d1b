// Purchase orders (docs/design.md#purchase-orders): refused without a number when the client's organisation requires
// one, nothing created then; the number on the order, the API, the receipt and the e-mails about money; a PO file
// uploaded straight to storage and checked as a PDF; corrections until the order is paid.
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { moneyWorld, type MoneyWorld } from "./money-fixtures";
import { callRoute, formRequest, getRequest, sessionCookies } from "./route-call";

let w: MoneyWorld;
const as = sessionCookies();
type Routes = {
  request: typeof import("~/routes/client/request");
  order: typeof import("~/routes/client/order");
  api: typeof import("~/routes/api/order");
  upload: typeof import("~/routes/client/request-po-upload");
  compose: typeof import("~/models/notifications/compose.server");
};
let routes: Routes;

beforeAll(async () => {
  w = await moneyWorld();
  routes = {
    request: await import("~/routes/client/request"),
    order: await import("~/routes/client/order"),
    api: await import("~/routes/api/order"),
    upload: await import("~/routes/client/request-po-upload"),
    compose: await import("~/models/notifications/compose.server"),
  };
  await w.onboardLab();
}, 60_000);

afterAll(async () => {
  await w.db.update(w.schema.organisations).set({ requiresPurchaseOrder: false }).where(w.eq(w.schema.organisations.id, w.halvorsen.id));
  await w.close();
});

let counter = 0;
/** An open request of Halvorsen with one sent quote of Granite Ridge. */
async function openRequestWithQuote() {
  const { db, schema } = w;
  counter++;
  const [r] = await db
    .insert(schema.requests)
    .values({
      organisationId: w.halvorsen.id,
      createdBy: w.owner.id,
      title: `PO test ${counter}`,
      state: "open",
      rangeMin: 10,
      rangeMax: 90,
      openedAt: new Date(),
    })
    .returning();
  const [q] = await db
    .insert(schema.quotes)
    .values({
      requestId: r.id,
      labId: w.granite.id,
      state: "sent",
      lineItems: [{ description: "Measurement", quantity: 1, unitMinor: 18_000, totalMinor: 18_000 }],
      totalMinor: 18_000,
      currency: "EUR",
      validUntil: new Date(Date.now() + 7 * 86_400_000),
      turnaroundDays: 5,
      createdBy: w.labManager.id,
    })
    .returning();
  return { requestId: r.id, quoteId: q.id };
}

async function accept(requestId: string, fields: Record<string, string>) {
  const cookie = await as("owner@halvorsen.example");
  return callRoute(routes.request.action, formRequest(`/client/requests/${requestId}`, { intent: "accept", ...fields }, cookie), { id: requestId });
}

const orderOfRequest = async (requestId: string) => (await w.db.select().from(w.schema.orders).where(w.eq(w.schema.orders.requestId, requestId)))[0] ?? null;

async function requirePo(on: boolean) {
  await w.db.update(w.schema.organisations).set({ requiresPurchaseOrder: on }).where(w.eq(w.schema.organisations.id, w.halvorsen.id));
}

describe("purchase orders on acceptance", () => {
  it("refuses a required PO's absence in one sentence and creates nothing", async () => {
    await requirePo(true);
    const { requestId, quoteId } = await openRequestWithQuote();
    const answer = await accept(requestId, { quoteId, purchaseOrderNumber: "  " });
    expect(answer.status).toBe(400);
    expect((answer.body as { error: string }).error).toBe(
      "Your organisation requires a purchase-order number on every order: enter the PO number to accept this quote. Nothing was accepted.",
    );
    expect(await orderOfRequest(requestId)).toBeNull();
    const [quote] = await w.db.select().from(w.schema.quotes).where(w.eq(w.schema.quotes.id, quoteId));
    expect(quote.state).toBe("sent");
    const [request] = await w.db.select().from(w.schema.requests).where(w.eq(w.schema.requests.id, requestId));
    expect(request.state).toBe("open");
  });

  it("refuses a number with characters a PO number does not have", async () => {
    const { requestId, quoteId } = await openRequestWithQuote();
    const answer = await accept(requestId, { quoteId, purchaseOrderNumber: "<script>" });
    expect(answer.status).toBe(400);
    expect((answer.body as { error: string }).error).toMatch(/^A purchase-order number has letters, digits/);
    expect(await orderOfRequest(requestId)).toBeNull();
  });

  it("accepts with the number; the order, the API, the e-mails about money and the receipt carry it", async () => {
    await requirePo(true);
    const { requestId, quoteId } = await openRequestWithQuote();
    const answer = await accept(requestId, { quoteId, purchaseOrderNumber: " PO-4711-0042 " });
    expect(answer.status).toBe(302);
    const order = (await orderOfRequest(requestId))!;
    expect(order.purchaseOrderNumber).toBe("PO-4711-0042");

    const cookie = await as("owner@halvorsen.example");
    const api = await callRoute(routes.api.loader, getRequest(`/api/orders/${order.id}`, cookie), { id: order.id });
    expect(api.status).toBe(200);
    expect((api.body as { purchaseOrderNumber: string }).purchaseOrderNumber).toBe("PO-4711-0042");
    const lab = await as("lab@graniteridge.example");
    const labApi = await callRoute(routes.api.loader, getRequest(`/api/orders/${order.id}`, lab), { id: order.id });
    expect((labApi.body as { purchaseOrderNumber: string }).purchaseOrderNumber).toBe("PO-4711-0042");
    // The order lists of both sides carry it too, and an order without one says null.
    const ordersList = (await import("~/routes/api/orders")).loader;
    type Listed = { orders: { id: string; number: string; purchaseOrderNumber: string | null }[] };
    for (const who of [cookie, lab]) {
      const list = await callRoute(ordersList, getRequest("/api/orders", who));
      expect(list.status).toBe(200);
      const listed = (list.body as Listed).orders;
      expect(listed.find((o) => o.id === order.id)).toMatchObject({ number: order.number, purchaseOrderNumber: "PO-4711-0042" });
    }
    const withoutPo = await w.makeOrder();
    const listed = (await callRoute(ordersList, getRequest("/api/orders?state=awaiting_payment", cookie))).body as Listed;
    expect(listed.orders.find((o) => o.id === withoutPo)?.purchaseOrderNumber).toBeNull();

    // The lab's "quote accepted" letter, then the client's and the lab's "payment held" letters.
    await w.pay(order.id);
    expect(await w.orderState(order.id)).toBe("funds_held");
    const letters = await w.db.select().from(w.schema.outboxMessages).where(w.eq(w.schema.outboxMessages.orderId, order.id));
    const kinds = new Set(letters.map((l) => l.kind));
    expect(kinds.has("funds_held")).toBe(true);
    expect(kinds.has("quote_accepted")).toBe(true);
    for (const l of letters.filter((x) => x.kind === "funds_held" || x.kind === "quote_accepted")) {
      expect(l.text, l.kind).toContain("Purchase order");
      expect(l.text, l.kind).toContain("PO-4711-0042");
      expect(l.html, l.kind).toContain("PO-4711-0042");
    }

    // The receipt of the payment.
    const [payment] = await w.db.select().from(w.schema.payments).where(w.eq(w.schema.payments.orderId, order.id));
    const receipt = await import("~/routes/client/payment-receipt");
    const page = await callRoute(receipt.loader, getRequest(`/client/payments/${payment.id}/receipt`, cookie), { id: payment.id });
    expect((page.body as { receipt: { purchaseOrderNumber: string } }).receipt.purchaseOrderNumber).toBe("PO-4711-0042");

    // Once paid, the PO can no longer be changed.
    const change = await callRoute(
      routes.order.action,
      formRequest(`/client/orders/${order.id}`, { intent: "purchase-order", purchaseOrderNumber: "PO-9999" }, cookie),
      { id: order.id },
    );
    expect(change.status).toBe(400);
    expect((change.body as { poError: string }).poError).toBe("The purchase order can be changed only until the order is paid.");
  });

  it("puts the number in every letter about money (payout, refunds, disputes, cancellation)", () => {
    const { orderLetter } = routes.compose;
    const order = {
      id: "x",
      number: "HCW-2026-0099",
      purchaseOrderNumber: "PO-4711-0042",
      amountMinor: 18_000,
      currency: "EUR",
      platformFeeBps: 1000,
      reviewWindowDays: 7,
    };
    const c = { order: order as never, requestTitle: "PO letters", clientName: "Halvorsen Cathode Works", labName: "Granite Ridge Characterisation", note: "" };
    for (const kind of [
      "funds_held",
      "payout_sent",
      "order_cancelled",
      "refused_on_arrival",
      "dispute_opened",
      "dispute_resolved",
      "delivery_accepted",
    ] as const) {
      for (const side of ["client", "lab", "admin"] as const) {
        const letter = orderLetter(kind, c, side);
        expect(letter.facts, `${kind} to ${side}`).toContainEqual(["Purchase order", "PO-4711-0042"]);
      }
    }
    const without = orderLetter("funds_held", { ...c, order: { ...order, purchaseOrderNumber: null } as never }, "client");
    expect(without.facts.map(([k]) => k)).not.toContain("Purchase order");
  });

  it("lets the client add or correct the number until the order is paid, and not remove a required one", async () => {
    await requirePo(false);
    const { requestId, quoteId } = await openRequestWithQuote();
    expect((await accept(requestId, { quoteId })).status).toBe(302);
    const order = (await orderOfRequest(requestId))!;
    expect(order.purchaseOrderNumber).toBeNull();
    const cookie = await as("owner@halvorsen.example");
    const set = (n: string) =>
      callRoute(routes.order.action, formRequest(`/client/orders/${order.id}`, { intent: "purchase-order", purchaseOrderNumber: n }, cookie), { id: order.id });
    expect((await set("PO-4711-0050")).status).toBe(302);
    expect((await orderOfRequest(requestId))!.purchaseOrderNumber).toBe("PO-4711-0050");
    await requirePo(true);
    const removed = await set("");
    expect(removed.status).toBe(400);
    expect((removed.body as { poError: string }).poError).toMatch(/requires a purchase-order number/);
    expect((await orderOfRequest(requestId))!.purchaseOrderNumber).toBe("PO-4711-0050");
    // The order page shows it.
    const page = await callRoute(routes.order.loader, getRequest(`/client/orders/${order.id}`, cookie), { id: order.id });
    expect((page.body as { purchaseOrder: { number: string; editable: boolean } }).purchaseOrder).toMatchObject({ number: "PO-4711-0050", editable: true });
    // The audit log says who set it.
    const entries = await w.db.select().from(w.schema.auditLog).where(w.eq(w.schema.auditLog.subjectId, order.id));
    expect(entries.map((e) => e.action)).toContain("order_purchase_order_set");
  });
});

describe("the PO file", () => {
  /** Asks the upload route for a target and PUTs the bytes there, as the browser's DirectUpload does. */
  async function upload(requestId: string, fileName: string, bytes: Uint8Array) {
    const cookie = await as("owner@halvorsen.example");
    const target = await callRoute(
      routes.upload.action,
      formRequest(
        `/client/requests/${requestId}/po-upload`,
        { intent: "upload-target", fileName, size: String(bytes.length), type: "application/pdf" },
        cookie,
      ),
      { id: requestId },
    );
    expect(target.status).toBe(200);
    const t = (target.body as { target: { uploadUrl: string; storageKey: string; contentType: string } }).target;
    const put = await fetch(t.uploadUrl, { method: "PUT", body: Buffer.from(bytes), headers: { "Content-Type": t.contentType } });
    expect(put.ok).toBe(true);
    const { createHash } = await import("node:crypto");
    return { storageKey: t.storageKey, sha256: createHash("sha256").update(bytes).digest("hex") };
  }

  // A minimal PDF: the header "%PDF-" is what the content check looks for (ISO 32000-1 §7.5.2, file header).
  const PDF = new TextEncoder().encode("%PDF-1.4\n1 0 obj << /Type /Catalog >> endobj\ntrailer << /Root 1 0 R >>\n%%EOF\n");

  it("is accepted as a PDF and kept on the order beside the number", async () => {
    const { requestId, quoteId } = await openRequestWithQuote();
    const file = await upload(requestId, "PO-4711-0042.pdf", PDF);
    const answer = await accept(requestId, {
      quoteId,
      purchaseOrderNumber: "PO-4711-0042",
      purchaseOrderFileKey: file.storageKey,
      purchaseOrderFileName: "PO-4711-0042.pdf",
      purchaseOrderFileSha256: file.sha256,
    });
    expect(answer.status).toBe(302);
    const order = (await orderOfRequest(requestId))!;
    expect(order.purchaseOrderFileKey).toBe(file.storageKey);
    expect(order.purchaseOrderFileName).toBe("PO-4711-0042.pdf");
    const cookie = await as("owner@halvorsen.example");
    const page = await callRoute(routes.order.loader, getRequest(`/client/orders/${order.id}`, cookie), { id: order.id });
    const po = (page.body as { purchaseOrder: { fileUrl: string | null } }).purchaseOrder;
    expect(po.fileUrl).toBeTruthy();
    expect(
      Buffer.from(await (await fetch(po.fileUrl!)).arrayBuffer())
        .subarray(0, 5)
        .toString(),
    ).toBe("%PDF-");
  });

  it("refuses a file that is not a PDF, or one under another request, and creates nothing", async () => {
    const { requestId, quoteId } = await openRequestWithQuote();
    const notPdf = await upload(requestId, "po.pdf", new TextEncoder().encode("just text, not a PDF"));
    const refused = await accept(requestId, {
      quoteId,
      purchaseOrderNumber: "PO-1",
      purchaseOrderFileKey: notPdf.storageKey,
      purchaseOrderFileSha256: notPdf.sha256,
    });
    expect(refused.status).toBe(400);
    expect((refused.body as { error: string }).error).toBe("The file's content is not a PDF.");
    const other = await openRequestWithQuote();
    const elsewhere = await upload(other.requestId, "po.pdf", PDF);
    const wrongPlace = await accept(requestId, { quoteId, purchaseOrderNumber: "PO-1", purchaseOrderFileKey: elsewhere.storageKey });
    expect((wrongPlace.body as { error: string }).error).toBe("Upload the purchase-order file on this page.");
    expect(await orderOfRequest(requestId)).toBeNull();
    // A Word file is refused before any upload URL is given.
    const cookie = await as("owner@halvorsen.example");
    const docx = await callRoute(
      routes.upload.action,
      formRequest(
        `/client/requests/${requestId}/po-upload`,
        { intent: "upload-target", fileName: "po.docx", size: "1000", type: "application/msword" },
        cookie,
      ),
      { id: requestId },
    );
    expect(docx.status).toBe(400);
    expect((docx.body as { error: string }).error).toBe("Upload a PDF.");
  });
});
