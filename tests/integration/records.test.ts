// Records that hold and names people read (docs/design.md#records-that-hold): delivered files that a client archives
// but cannot delete within the retention period, the audit log in sentences with its kind and person filters and
// sign-ins apart, the ledger export's order numbers, and a link into another of a person's organisations.
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { moneyWorld, type MoneyWorld } from "./money-fixtures";
import { callRoute, formRequest, getRequest, sessionCookies } from "./route-call";

let w: MoneyWorld;
let app: Awaited<ReturnType<typeof loadApp>>;
const as = sessionCookies();
const UUID = /[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}/i;

async function loadApp() {
  return {
    dataRoomOrder: await import("~/routes/client/data-room-order"),
    apiFiles: await import("~/routes/api/order-files"),
    auditLog: await import("~/routes/admin/audit-log"),
    ledgerExport: await import("~/routes/admin/ledger-export"),
    clientOrder: await import("~/routes/client/order"),
    clientRequest: await import("~/routes/client/request"),
    switchOrganisation: await import("~/routes/account/switch-organisation"),
    boss: await import("~/jobs/queues.server"),
  };
}

/** A stored report on the order, as the lab's verified upload leaves it (the bytes are not needed here). */
async function storedFile(orderId: string, name: string, storedAt = new Date()) {
  const [file] = await w.db
    .insert(w.schema.orderFiles)
    .values({
      orderId,
      name,
      version: 1,
      kind: "report",
      sizeBytes: 1200,
      contentType: "application/pdf",
      sha256: "0".repeat(64),
      storageKey: `orders/${orderId}/${name}`,
      state: "stored",
      storedAt,
      uploadedBy: w.labManager.id,
    })
    .returning();
  return file;
}

const fileRow = async (id: string) => (await w.db.select().from(w.schema.orderFiles).where(w.eq(w.schema.orderFiles.id, id)))[0];
const orderOf = async (id: string) => (await w.db.select().from(w.schema.orders).where(w.eq(w.schema.orders.id, id)))[0];
const roomAction = async (orderId: string, fields: Record<string, string>, email = "owner@halvorsen.example") =>
  callRoute(app.dataRoomOrder.action, formRequest(`/client/data-room/${orderId}`, fields, await as(email)), { orderId }, "198.51.100.7");
const roomFiles = async (orderId: string, query = "") => {
  const answer = await callRoute(app.dataRoomOrder.loader, getRequest(`/client/data-room/${orderId}${query}`, await as("owner@halvorsen.example")), {
    orderId,
  });
  expect(answer.status).toBe(200);
  return answer.body as { files: { name: string; archivedAt: string | null }[]; archivedCount: number };
};

type Entry = { sentence: string; details: string; who: string | null; email: string | null; action: string };
async function auditPage(query = "") {
  const answer = await callRoute(app.auditLog.loader, getRequest(`/admin/audit-log${query}`, await as("admin@diffractory.example")));
  return answer;
}

beforeAll(async () => {
  w = await moneyWorld();
  app = await loadApp();
});

afterAll(async () => {
  await app?.boss.stopBoss();
  await w?.close();
});

describe("delivered files within the retention period", () => {
  it("refuses the client's deletion with a sentence, archives and restores instead, each in the audit log", async () => {
    const orderId = await w.makeOrder();
    const file = await storedFile(orderId, "phase-report.pdf");

    // Deletion within the five years is refused by the server, with the day it becomes possible.
    const refused = await roomAction(orderId, { intent: "delete", fileId: file.id });
    expect(refused.status).toBe(400);
    const message = JSON.stringify(refused.body);
    expect(message).toContain("cannot be deleted before");
    expect(message).toContain(String(new Date().getUTCFullYear() + 5));
    expect((await fileRow(file.id)).deletedAt).toBeNull();

    // Archive: hidden from the data room (and its API), shown again with ?archived=1.
    const archived = await roomAction(orderId, { intent: "archive", fileId: file.id });
    expect(archived.status).toBe(302);
    expect((await fileRow(file.id)).archivedAt).not.toBeNull();
    expect((await roomFiles(orderId)).files.map((f) => f.name)).not.toContain("phase-report.pdf");
    expect((await roomFiles(orderId)).archivedCount).toBe(1);
    const shown = await roomFiles(orderId, "?archived=1");
    expect(shown.files).toEqual([expect.objectContaining({ name: "phase-report.pdf", archivedAt: expect.any(String) })]);
    // The lab's view keeps every delivered file.
    const lab = await callRoute(app.apiFiles.loader, getRequest(`/api/orders/${orderId}/files`, await as("lab@graniteridge.example")), { id: orderId });
    expect(JSON.stringify(lab.body)).toContain("phase-report.pdf");

    // A member (not only owners) may archive and restore; restoring brings the file back.
    const restored = await roomAction(orderId, { intent: "restore", fileId: file.id }, "member@halvorsen.example");
    expect(restored.status).toBe(302);
    expect((await fileRow(file.id)).archivedAt).toBeNull();
    expect((await roomFiles(orderId)).files.map((f) => f.name)).toContain("phase-report.pdf");

    const entries = await w.db.select().from(w.schema.auditLog).where(w.eq(w.schema.auditLog.subjectId, file.id));
    expect(entries.map((e) => e.action).sort()).toEqual(["order_file_archived", "order_file_restored"]);
    expect(entries.every((e) => e.clientAddress === "198.51.100.7")).toBe(true);
  });

  it("lets the owner delete once the retention period is over, and a stranger reaches nothing", async () => {
    const orderId = await w.makeOrder();
    const old = await storedFile(orderId, "old-report.pdf", new Date(Date.now() - 6 * 365.25 * 86_400_000));
    expect((await roomAction(orderId, { intent: "delete", fileId: old.id }, "member@halvorsen.example")).status).toBe(403);
    expect((await roomAction(orderId, { intent: "delete", fileId: old.id })).status).toBe(302);
    expect((await fileRow(old.id)).deletedAt).not.toBeNull();
    const stranger = await roomAction(orderId, { intent: "archive", fileId: old.id }, "owner@pinecrest.example");
    expect(stranger.status).toBe(404);
  });
});

describe("the audit log in words", () => {
  it("tells each entry as a sentence with order numbers, titles and money, never an id", async () => {
    const orderId = await w.makeOrder(23_450);
    const order = await orderOf(orderId);
    const file = await storedFile(orderId, "lot-12.xy");
    await roomAction(orderId, { intent: "archive", fileId: file.id });
    // A quote accepted and a dispute decided, as the models write them.
    await w.db.insert(w.schema.auditLog).values([
      {
        actorUserId: w.owner.id,
        organisationId: w.halvorsen.id,
        action: "quote_accepted",
        subjectType: "quote",
        subjectId: order.quoteId,
        details: { orderId },
      },
      {
        actorUserId: w.admin.id,
        action: "dispute_resolved",
        subjectType: "order",
        subjectId: orderId,
        details: { refundMinor: 12_000, payoutMinor: 10_123, feeMinor: 1327, reason: "Two of three samples measured." },
      },
    ]);
    const answer = await auditPage();
    expect(answer.status).toBe(200);
    const entries = (answer.body as { entries: Entry[] }).entries;
    const said = entries.map((e) => e.sentence);
    const [request] = await w.db.select().from(w.schema.requests).where(w.eq(w.schema.requests.id, order.requestId));
    expect(said).toContain(`${w.owner.name} archived lot-12.xy v1 of order ${order.number}`);
    expect(said).toContain(`${w.owner.name} accepted the quote of ${w.granite.name} for the request “${request.title}”, making order ${order.number}`);
    // Amounts as money in the order's currency (formatMoney's default locale writes €120.00).
    expect(said).toContain(`${w.admin.name} resolved the dispute on order ${order.number}: refund €120.00, payout to the lab €101.23, platform fee €13.27`);
    for (const e of entries) {
      expect(`${e.sentence} ${e.details}`, e.action).not.toMatch(UUID);
      expect(`${e.sentence} ${e.details}`, e.action).not.toMatch(/minor/i);
    }
  });

  it("filters by kind and by person, keeps sign-ins on their own tab, and refuses an unknown kind with a sentence", async () => {
    await as("admin@diffractory.example");
    await as("owner@halvorsen.example");
    const all = (await auditPage()).body as { entries: Entry[]; kinds: { value: string; label: string }[]; people: { id: string }[] };
    expect(all.entries.some((e) => e.action === "signed_in")).toBe(false);
    expect(all.kinds.map((k) => k.value)).toEqual(["accounts", "vetting", "requests", "orders", "money", "files", "disputes"]);
    expect(all.people.map((p) => p.id)).toContain(w.owner.id);

    const files = (await auditPage("?kind=files")).body as { entries: Entry[] };
    expect(files.entries.length).toBeGreaterThan(0);
    expect(files.entries.every((e) => e.action.startsWith("order_file_") || e.action.startsWith("share_link_"))).toBe(true);

    // Each entry is under one kind only: the files' `order_file_…` entries are not orders' (auditKindOf decides).
    const orders = (await auditPage("?kind=orders")).body as { entries: Entry[] };
    expect(orders.entries.some((e) => e.action.startsWith("order_file_"))).toBe(false);

    const disputes = (await auditPage("?kind=disputes")).body as { entries: Entry[] };
    expect(disputes.entries.map((e) => e.action)).toEqual(["dispute_resolved"]);

    const owners = (await auditPage(`?person=${w.owner.id}`)).body as { entries: Entry[] };
    expect(owners.entries.length).toBeGreaterThan(0);
    expect(owners.entries.every((e) => e.email === w.owner.email)).toBe(true);

    const signIns = (await auditPage("?kind=sign_ins")).body as { entries: Entry[]; attempts: { email: string; succeeded: boolean }[] };
    expect(signIns.entries.length).toBeGreaterThan(0);
    expect(signIns.entries.every((e) => ["signed_in", "signed_out", "second_factor_failed"].includes(e.action))).toBe(true);
    expect(signIns.entries.map((e) => e.sentence)).toContain(`${w.owner.name} signed in`);
    expect(signIns.attempts.some((a) => a.email === w.owner.email && a.succeeded)).toBe(true);

    // Sorting and paging still work beside the filters.
    expect((await auditPage("?kind=files&sort=who&dir=asc&page=1")).status).toBe(200);
    const bad = await auditPage("?kind=everything");
    expect(bad.status).toBe(400);
    expect(JSON.stringify(bad.body)).toContain("can be filtered by");
    expect((await auditPage("?person=someone")).status).toBe(400);
  });
});

describe("the ledger export", () => {
  it("names each transaction's order by its number", async () => {
    const orderId = await w.makeOrder();
    await w.pay(orderId);
    await w.db.update(w.schema.orders).set({ purchaseOrderNumber: "PO-88,12" }).where(w.eq(w.schema.orders.id, orderId));
    const order = await orderOf(orderId);
    const answer = await callRoute(app.ledgerExport.loader, getRequest(`/admin/ledger/export?orderId=${orderId}`, await as("admin@diffractory.example")));
    expect(answer.status).toBe(200);
    const lines = String(answer.body).trim().split(/\r?\n/);
    // The number, then the purchase-order number, are the last columns, so the earlier columns keep their places
    // (a memo may hold quoted commas, so the columns are counted from the end).
    expect(lines[0].split(",").slice(-2)).toEqual(["order_number", "purchase_order_number"]);
    const rows = lines.slice(1);
    expect(rows.length).toBeGreaterThan(0);
    // A PO number with a comma is quoted as RFC 4180 says (section 2, rule 6).
    expect(rows.every((r) => r.endsWith(`,${order.number},"PO-88,12"`))).toBe(true);
    // People filter by the number they read; lower case is the same number, and a malformed one gets a sentence.
    const byNumber = await callRoute(
      app.ledgerExport.loader,
      getRequest(`/admin/ledger/export?order=${order.number.toLowerCase()}`, await as("admin@diffractory.example")),
    );
    expect(String(byNumber.body).trim().split(/\r?\n/).slice(1)).toEqual(lines.slice(1));
    // An order without a purchase order leaves the column empty.
    const plain = await w.makeOrder();
    await w.pay(plain);
    const plainCsv = await callRoute(app.ledgerExport.loader, getRequest(`/admin/ledger/export?orderId=${plain}`, await as("admin@diffractory.example")));
    const plainRows = String(plainCsv.body).trim().split(/\r?\n/).slice(1);
    expect(plainRows.length).toBeGreaterThan(0);
    const plainNumber = (await orderOf(plain)).number;
    expect(plainRows.every((r) => r.endsWith(`,${plainNumber},`))).toBe(true);
    const bad = await callRoute(app.ledgerExport.loader, getRequest("/admin/ledger/export?order=42", await as("admin@diffractory.example")));
    expect(bad.status).toBe(400);
    expect(String(JSON.stringify(bad.body))).toContain("An order number reads like HCW-2026-0042.");
  });
});

describe("a link into another of one's organisations", () => {
  it("switches a member of the owning organisation there with a notice; a stranger still gets 404", async () => {
    const orderId = await w.makeOrder();
    const order = await orderOf(orderId);
    const [pinecrest] = await w.db.select().from(w.schema.organisations).where(w.eq(w.schema.organisations.slug, "pinecrest-solid-forms"));
    const consultant = await as("consultant@fieldnotes.example");
    // The consultant works in Pinecrest when the e-mail about Halvorsen's order arrives.
    const switched = await callRoute(app.switchOrganisation.action, formRequest("/switch-organisation", { organisationId: pinecrest.id }, consultant));
    expect(switched.status).toBe(302);

    const first = await callRoute(app.clientOrder.loader, getRequest(`/client/orders/${orderId}`, consultant), { id: orderId });
    expect(first.status).toBe(302);
    expect(first.headers.get("location")).toBe(`/client/orders/${orderId}`);
    const toast = first.headers.getSetCookie().find((c) => c.startsWith("diffractory_toast="));
    expect(toast).toBeTruthy();
    const again = await callRoute(app.clientOrder.loader, getRequest(`/client/orders/${orderId}`, consultant), { id: orderId });
    expect(again.status).toBe(200);
    expect(JSON.stringify(again.body)).toContain(order.number);

    // The request page does the same, back the other way.
    await callRoute(app.switchOrganisation.action, formRequest("/switch-organisation", { organisationId: pinecrest.id }, consultant));
    const requestPage = await callRoute(app.clientRequest.loader, getRequest(`/client/requests/${order.requestId}`, consultant), { id: order.requestId });
    expect(requestPage.status).toBe(302);
    expect(requestPage.headers.get("location")).toBe(`/client/requests/${order.requestId}`);

    // Someone only in Pinecrest gets the same 404 as for a missing order.
    const stranger = await callRoute(app.clientOrder.loader, getRequest(`/client/orders/${orderId}`, await as("owner@pinecrest.example")), { id: orderId });
    expect(stranger.status).toBe(404);
    const strangerRequest = await callRoute(app.clientRequest.loader, getRequest(`/client/requests/${order.requestId}`, await as("owner@pinecrest.example")), {
      id: order.requestId,
    });
    expect(strangerRequest.status).toBe(404);
  });
});

describe("the demo's archived file", () => {
  it("archives the coated trial's scan of HC-2398 once, with its audit entry, however often the seed runs", async () => {
    const orderId = await w.makeOrder();
    const order = await orderOf(orderId);
    await w.db.update(w.schema.requests).set({ title: "Lattice check of LFP reference lot HC-2398" }).where(w.eq(w.schema.requests.id, order.requestId));
    const file = await storedFile(orderId, "HC-2398-2_Co_15-110.xy");
    const { seedDemoRecords } = await import("~/demo/seed-records.server");
    expect(await seedDemoRecords()).toBe(true);
    expect(await seedDemoRecords()).toBe(false);
    expect((await fileRow(file.id)).archivedAt).not.toBeNull();
    const entries = await w.db.select().from(w.schema.auditLog).where(w.eq(w.schema.auditLog.subjectId, file.id));
    expect(entries.map((e) => e.action)).toEqual(["order_file_archived"]);
    expect((await roomFiles(orderId)).archivedCount).toBe(1);
  });
});
