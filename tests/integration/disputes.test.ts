// Disputes both sides hear: the lab's statement and evidence (with e-mail to the client and the admins), the
// client's evidence, the admin's reads of a disputed order's data room (each audit-logged, 404 on an undisputed
// order as before) and the decision typed as money. Expectations are the product's own rules (docs/design.md#disputes).
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { moneyWorld, type MoneyWorld } from "./money-fixtures";
import { callRoute, formRequest, getRequest, sessionCookies } from "./route-call";

let w: MoneyWorld;
const as = sessionCookies();
const LAB = "lab@graniteridge.example";
const OWNER = "owner@halvorsen.example";
const ADMIN = "admin@diffractory.example";

interface Delivered {
  orderId: string;
  orderNumber: string;
  fileId: string;
  checkId: string;
}

/** A paid, delivered order of Halvorsen at Granite Ridge with one scan file and its finished check. */
async function deliveredOrder(): Promise<Delivered> {
  const orderId = await w.makeOrder(30_000);
  await w.pay(orderId);
  const [order] = await w.db.select().from(w.schema.orders).where(w.eq(w.schema.orders.id, orderId));
  const [sample] = await w.db.insert(w.schema.samples).values({ requestId: order.requestId, label: "NMC lot 3", formula: "LiNiO2" }).returning();
  const [file] = await w.db
    .insert(w.schema.orderFiles)
    .values({
      orderId,
      sampleId: sample.id,
      name: "lot3.xy",
      version: 1,
      sizeBytes: 10,
      contentType: "text/plain",
      sha256: "0".repeat(64),
      storageKey: `orders/${orderId}/files/lot3.xy`,
      state: "stored",
    })
    .returning();
  const [check] = await w.db.insert(w.schema.scanChecks).values({ fileId: file.id, status: "done", verdict: "review" }).returning();
  await w.deliver(orderId);
  return { orderId, orderNumber: order.number, fileId: file.id, checkId: check.id };
}

const route = async <T>(path: string) => (await import(/* @vite-ignore */ path)) as T;
type Fn = { loader?: (a: unknown) => unknown; action?: (a: unknown) => unknown };

async function disputeRow(orderId: string) {
  const [row] = await w.db.select().from(w.schema.disputes).where(w.eq(w.schema.disputes.orderId, orderId));
  return row;
}

async function auditReads(orderId: string) {
  const rows = await w.db.select().from(w.schema.auditLog).where(w.eq(w.schema.auditLog.action, "dispute_evidence_read"));
  return rows.filter((r) => (r.details as { orderId?: string }).orderId === orderId);
}

/** Uploads bytes as one side's evidence through the route's direct-upload target, then attaches them. */
async function handIn(orderId: string, cookie: string, name: string, body: string | Uint8Array, intent = "evidence", extra: Record<string, string> = {}) {
  const { action } = await route<Fn>("~/routes/account/order-dispute");
  const bytes = typeof body === "string" ? Buffer.from(body) : Buffer.from(body);
  const target = await callRoute(
    action!,
    formRequest(
      `/orders/${orderId}/dispute`,
      { intent: "upload-target", purpose: "dispute-evidence", fileName: name, size: String(bytes.length), type: "" },
      cookie,
    ),
    { id: orderId },
  );
  expect(target.status, JSON.stringify(target.body)).toBe(200);
  const t = (target.body as { target: { uploadUrl: string; storageKey: string; contentType: string } }).target;
  const put = await fetch(t.uploadUrl, { method: "PUT", body: bytes, headers: { "Content-Type": t.contentType } });
  expect(put.ok).toBe(true);
  return callRoute(action!, formRequest(`/orders/${orderId}/dispute`, { intent, storageKey: t.storageKey, fileName: name, ...extra }, cookie), { id: orderId });
}

const PDF = "%PDF-1.4\n1 0 obj << >> endobj\ntrailer << >>\n%%EOF\n";

let disputed: Delivered;
let undisputed: Delivered;

beforeAll(async () => {
  w = await moneyWorld();
  await w.onboardLab();
  disputed = await deliveredOrder();
  undisputed = await deliveredOrder();
  await w.app.orders.openDispute(disputed.orderId, w.owner.id, "The scan shows an impurity the lab did not mention in the report.");
});

afterAll(async () => {
  await w?.close();
});

describe("the lab's statement", () => {
  it("refuses a statement that says nothing, and a client who tries to answer for the lab", async () => {
    const { action } = await route<Fn>("~/routes/account/order-dispute");
    const short = await callRoute(action!, formRequest(`/orders/${disputed.orderId}/dispute`, { intent: "statement", statement: "no" }, await as(LAB)), {
      id: disputed.orderId,
    });
    expect(short.status).toBe(302);
    expect((await disputeRow(disputed.orderId)).labStatement).toBeNull();
    const client = await callRoute(
      action!,
      formRequest(`/orders/${disputed.orderId}/dispute`, { intent: "statement", statement: "We the client write for the lab." }, await as(OWNER)),
      { id: disputed.orderId },
    );
    expect(client.status).toBe(404);
    expect((await disputeRow(disputed.orderId)).labStatement).toBeNull();
  });

  it("records the lab's statement with its evidence, and e-mails the client and every admin (essential)", async () => {
    const answer = await handIn(disputed.orderId, await as(LAB), "measurement-log.pdf", PDF, "statement", {
      statement: "The impurity peak at 21° is the sample holder; the blank scan in the log shows it.",
    });
    expect(answer.status).toBe(302);
    expect(answer.headers.get("location")).toBe(`/lab/orders/${disputed.orderId}`);
    const row = await disputeRow(disputed.orderId);
    expect(row.labStatement).toMatch(/sample holder/);
    expect(row.labStatementBy).toBe(w.labManager.id);
    expect(row.labStatementAt).toBeInstanceOf(Date);
    const evidence = await w.db.select().from(w.schema.disputeEvidence).where(w.eq(w.schema.disputeEvidence.disputeId, row.id));
    expect(evidence).toMatchObject([{ side: "lab", fileName: "measurement-log.pdf", contentType: "application/pdf", sizeBytes: PDF.length }]);
    const mails = await w.db.select().from(w.schema.outboxMessages).where(w.eq(w.schema.outboxMessages.kind, "dispute_answered"));
    const to = mails.filter((m) => m.orderId === disputed.orderId).map((m) => m.to);
    expect(to).toContain(OWNER);
    expect(to).toContain(ADMIN);
    expect(to).not.toContain(LAB);
    expect(mails.every((m) => m.essential)).toBe(true);
    const adminMail = mails.find((m) => m.to === ADMIN)!;
    // People read the order number, not its id; the admin's link leads to the dispute's own page.
    expect(adminMail.subject).toContain(disputed.orderNumber);
    expect(adminMail.text).toContain(`/admin/disputes/${disputed.orderId}`);
    expect(adminMail.text).toContain("sample holder");
  });

  it("lets the client add evidence of its own, and keeps each side's files under its own prefix", async () => {
    const added = await handIn(disputed.orderId, await as(OWNER), "impurity-note.txt", "Peak at 21.0 deg, 3 % of the main peak.\n");
    expect(added.status).toBe(302);
    expect(added.headers.get("location")).toBe(`/client/orders/${disputed.orderId}`);
    const row = await disputeRow(disputed.orderId);
    const evidence = await w.db.select().from(w.schema.disputeEvidence).where(w.eq(w.schema.disputeEvidence.disputeId, row.id));
    expect(evidence.map((e) => `${e.side}:${e.fileName}`).sort()).toEqual(["client:impurity-note.txt", "lab:measurement-log.pdf"]);
    // The lab and the admins hear of the client's file (essential); the lab's own file came with its statement's notice.
    const told = (await w.db.select().from(w.schema.outboxMessages).where(w.eq(w.schema.outboxMessages.kind, "dispute_evidence_added"))).filter(
      (m) => m.orderId === disputed.orderId,
    );
    expect(told.map((m) => m.to)).toContain(LAB);
    expect(told.map((m) => m.to)).toContain(ADMIN);
    expect(told.map((m) => m.to)).not.toContain(OWNER);
    expect(told.every((m) => m.essential && m.subject.includes(disputed.orderNumber))).toBe(true);
    // The lab cannot attach a file stored under the client's prefix.
    const { action } = await route<Fn>("~/routes/account/order-dispute");
    const clientKey = evidence.find((e) => e.side === "client")!.storageKey;
    await callRoute(
      action!,
      formRequest(`/orders/${disputed.orderId}/dispute`, { intent: "evidence", storageKey: clientKey, fileName: "x.txt" }, await as(LAB)),
      {
        id: disputed.orderId,
      },
    );
    expect(await w.db.select().from(w.schema.disputeEvidence).where(w.eq(w.schema.disputeEvidence.disputeId, row.id))).toHaveLength(2);
  });

  it("refuses evidence whose content is not what its name says", async () => {
    const row = await disputeRow(disputed.orderId);
    const before = await w.db.select().from(w.schema.disputeEvidence).where(w.eq(w.schema.disputeEvidence.disputeId, row.id));
    await handIn(disputed.orderId, await as(OWNER), "fake.pdf", "not a pdf at all");
    const after = await w.db.select().from(w.schema.disputeEvidence).where(w.eq(w.schema.disputeEvidence.disputeId, row.id));
    expect(after).toHaveLength(before.length);
  });
});

describe("the admin's reads of a disputed order", () => {
  it("opens the check, its JSON, its status, the file list (with check ids) and the files, each read audit-logged", async () => {
    const admin = await as(ADMIN);
    const before = (await auditReads(disputed.orderId)).length;
    const check = await route<Fn>("~/routes/check");
    const json = await route<Fn>("~/routes/check-result-json");
    const status = await route<Fn>("~/routes/api/check");
    const files = await route<Fn>("~/routes/api/order-files");
    const download = await route<Fn>("~/routes/account/file-download");
    const page = await callRoute(check.loader!, getRequest(`/checks/${disputed.checkId}`, admin), { id: disputed.checkId });
    expect(page.status).toBe(200);
    expect((page.body as { side: string }).side).toBe("admin");
    expect((await callRoute(json.loader!, getRequest(`/checks/${disputed.checkId}/result.json`, admin), { id: disputed.checkId })).status).toBe(200);
    expect((await callRoute(status.loader!, getRequest(`/api/checks/${disputed.checkId}`, admin), { id: disputed.checkId })).status).toBe(200);
    const list = await callRoute(files.loader!, getRequest(`/api/orders/${disputed.orderId}/files`, admin), { id: disputed.orderId });
    expect(list.status).toBe(200);
    expect((list.body as { files: { id: string; check: { id: string } }[] }).files).toMatchObject([{ id: disputed.fileId, check: { id: disputed.checkId } }]);
    const got = await callRoute(download.loader!, getRequest(`/files/${disputed.fileId}/download`, admin), { fileId: disputed.fileId });
    expect(got.status).toBe(302);
    const reads = await auditReads(disputed.orderId);
    expect(reads.length - before).toBe(5);
    for (const r of reads) {
      expect(r.actorUserId).toBe(w.admin.id);
      expect((r.details as { orderNumber: string }).orderNumber).toBe(disputed.orderNumber);
    }
    expect(reads.map((r) => r.subjectType).sort()).toEqual(["check", "check", "check", "order", "order_file"]);
  });

  it("downloads either side's evidence, audit-logged, and so may both parties", async () => {
    const row = await disputeRow(disputed.orderId);
    const evidence = await w.db.select().from(w.schema.disputeEvidence).where(w.eq(w.schema.disputeEvidence.disputeId, row.id));
    const { loader } = await route<Fn>("~/routes/account/dispute-evidence");
    const before = (await auditReads(disputed.orderId)).length;
    for (const e of evidence) {
      for (const who of [ADMIN, OWNER, LAB]) {
        const got = await callRoute(loader!, getRequest(`/orders/${disputed.orderId}/dispute/evidence/${e.id}`, await as(who)), {
          id: disputed.orderId,
          evidenceId: e.id,
        });
        expect(got.status, `${who} reads ${e.fileName}`).toBe(302);
      }
    }
    const reads = (await auditReads(disputed.orderId)).slice(before);
    expect(reads).toHaveLength(evidence.length);
    expect(reads.every((r) => r.subjectType === "dispute_evidence")).toBe(true);
    // Someone on neither side is told there is no such file.
    const other = await callRoute(loader!, getRequest(`/orders/${disputed.orderId}/dispute/evidence/${evidence[0].id}`, await as("owner@pinecrest.example")), {
      id: disputed.orderId,
      evidenceId: evidence[0].id,
    });
    expect(other.status).toBe(404);
  });

  it("answers an admin 404 on an order without a dispute, as before, and logs nothing", async () => {
    const admin = await as(ADMIN);
    const u = undisputed;
    const calls: [string, string, Record<string, string>][] = [
      ["~/routes/check", `/checks/${u.checkId}`, { id: u.checkId }],
      ["~/routes/check-result-json", `/checks/${u.checkId}/result.json`, { id: u.checkId }],
      ["~/routes/check-peaks-csv", `/checks/${u.checkId}/peaks.csv`, { id: u.checkId }],
      ["~/routes/api/check", `/api/checks/${u.checkId}`, { id: u.checkId }],
      ["~/routes/api/order-files", `/api/orders/${u.orderId}/files`, { id: u.orderId }],
      ["~/routes/account/file-download", `/files/${u.fileId}/download`, { fileId: u.fileId }],
      ["~/routes/admin/dispute", `/admin/disputes/${u.orderId}`, { id: u.orderId }],
    ];
    for (const [mod, path, params] of calls) {
      const { loader } = await route<Fn>(mod);
      expect((await callRoute(loader!, getRequest(path, admin), params)).status, path).toBe(404);
    }
    expect(await auditReads(u.orderId)).toHaveLength(0);
  });
});

describe("the admin's dispute page and decision", () => {
  it("shows both statements with their evidence, the files with their checks and the timeline", async () => {
    const { loader } = await route<Fn>("~/routes/admin/dispute");
    const page = await callRoute(loader!, getRequest(`/admin/disputes/${disputed.orderId}`, await as(ADMIN)), { id: disputed.orderId });
    expect(page.status).toBe(200);
    const d = page.body as {
      order: { number: string };
      dispute: { reason: string; labStatement: string; evidence: { side: string }[] };
      files: { id: string; check: { id: string; verdict: string } }[];
      timeline: { toState: string }[];
      heldMinor: number;
    };
    expect(d.order.number).toBe(disputed.orderNumber);
    expect(d.dispute.reason).toMatch(/impurity/);
    expect(d.dispute.labStatement).toMatch(/sample holder/);
    expect(d.dispute.evidence.map((e) => e.side).sort()).toEqual(["client", "lab"]);
    expect(d.files).toMatchObject([{ id: disputed.fileId, check: { id: disputed.checkId, verdict: "review" } }]);
    expect(d.timeline.map((e) => e.toState)).toContain("disputed");
    expect(d.heldMinor).toBe(30_000);
  });

  it("takes the refund as money (120.50 is 12050 cents), refuses minor-unit or out-of-range text in a sentence", async () => {
    const { action } = await route<Fn>("~/routes/admin/dispute");
    const admin = await as(ADMIN);
    const send = async (refund: string) =>
      callRoute(
        action!,
        formRequest(`/admin/disputes/${disputed.orderId}`, { refund, reason: "The impurity is the sample holder; half the scans were still usable." }, admin),
        { id: disputed.orderId },
      );
    const words = await send("12000 minor units");
    expect(words.status).toBe(400);
    const tooMuch = await send("400.00");
    expect(tooMuch.status).toBe(400);
    expect(JSON.stringify(tooMuch.body)).toContain("€300.00");
    expect(await w.orderState(disputed.orderId)).toBe("disputed");
    const decided = await send("120.50");
    expect(decided.status).toBe(302);
    expect(decided.headers.get("location")).toBe(`/admin/disputes/${disputed.orderId}`);
    const row = await disputeRow(disputed.orderId);
    // The lab's part is 300.00 − 120.50 = 179.50, less the order's platform fee on it.
    const fee = Math.round((17_950 * (await orderFeeBps(disputed.orderId))) / 10_000);
    expect(row).toMatchObject({ state: "resolved", refundMinor: 12_050, payoutMinor: 17_950 - fee, decidedBy: w.admin.id });
  });

  it("still lets the admin read a resolved dispute's data, audit-logged, and takes no more evidence", async () => {
    const check = await route<Fn>("~/routes/api/check");
    const before = (await auditReads(disputed.orderId)).length;
    expect((await callRoute(check.loader!, getRequest(`/api/checks/${disputed.checkId}`, await as(ADMIN)), { id: disputed.checkId })).status).toBe(200);
    expect(await auditReads(disputed.orderId)).toHaveLength(before + 1);
    const { action } = await route<Fn>("~/routes/account/order-dispute");
    const late = await callRoute(
      action!,
      formRequest(`/orders/${disputed.orderId}/dispute`, { intent: "statement", statement: "A late word after the decision was made." }, await as(LAB)),
      { id: disputed.orderId },
    );
    expect(late.status).toBe(302);
    expect((await disputeRow(disputed.orderId)).labStatement).toMatch(/sample holder/);
  });
});

async function orderFeeBps(orderId: string) {
  const [o] = await w.db.select().from(w.schema.orders).where(w.eq(w.schema.orders.id, orderId));
  return o.platformFeeBps;
}
