// The lab's records through the order screens' actions: a receipt record per sample (with a photo stored in
// the order's folder) and the due date it starts, refusal reasons per sample, the due column of the work queue,
// file names matched to sample labels, measurement conditions entered beside a scan, and the server refusing a
// delivery or an acceptance of a scan that is not `consistent` until it is confirmed (docs/design.md,
// "The lab's records").
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { moneyWorld, type MoneyWorld } from "./money-fixtures";
import { callRoute, cookieFrom, formRequest, getRequest } from "./route-call";

let w: MoneyWorld;
let routes: {
  clientOrder: typeof import("~/routes/client/order");
  labOrder: typeof import("~/routes/lab/order");
  labFiles: typeof import("~/routes/lab/order-files");
  workQueue: typeof import("~/routes/lab/work-queue");
  signIn: typeof import("~/routes/public/sign-in");
};
let files: typeof import("~/models/files/files.server");
let storage: typeof import("~/models/files/storage.server");
const cookies: Record<string, string> = {};
async function as(email: string) {
  cookies[email] ??= cookieFrom(await callRoute(routes.signIn.action, formRequest("/sign-in", { email, password: "diffractory-demo" })))!;
  return cookies[email];
}

const CLIENT = "owner@halvorsen.example";
const LAB = "lab@graniteridge.example";
const DAY = 86_400_000;

beforeAll(async () => {
  w = await moneyWorld();
  await w.onboardLab();
  routes = {
    clientOrder: await import("~/routes/client/order"),
    labOrder: await import("~/routes/lab/order"),
    labFiles: await import("~/routes/lab/order-files"),
    workQueue: await import("~/routes/lab/work-queue"),
    signIn: await import("~/routes/public/sign-in"),
  };
  files = await import("~/models/files/files.server");
  storage = await import("~/models/files/storage.server");
});
afterAll(async () => {
  await w?.close();
});

async function clientMove(orderId: string, fields: Record<string, string>) {
  return callRoute(routes.clientOrder.action, formRequest(`/client/orders/${orderId}`, fields, await as(CLIENT)), { id: orderId });
}
async function labMove(orderId: string, fields: Record<string, string>) {
  return callRoute(routes.labOrder.action, formRequest(`/lab/orders/${orderId}`, fields, await as(LAB)), { id: orderId });
}

/** A paid order in transit with the given samples on its request. */
async function orderInTransit(labels: string[]) {
  const orderId = await w.makeOrder();
  await w.pay(orderId);
  const [order] = await w.db.select().from(w.schema.orders).where(w.eq(w.schema.orders.id, orderId));
  const samples = [];
  for (const [i, label] of labels.entries()) {
    const [s] = await w.db.insert(w.schema.samples).values({ requestId: order.requestId, position: i, label, formula: "Si" }).returning();
    samples.push(s);
  }
  expect((await clientMove(orderId, { intent: "ship", carrier: "Nordpost Freight", trackingNumber: "NP-2026-0101" })).status).toBe(302);
  return { orderId, order, samples };
}

async function timelineNotes(orderId: string) {
  const rows = await w.db.select().from(w.schema.orderEvents).where(w.eq(w.schema.orderEvents.orderId, orderId));
  return rows.map((r) => r.note).join("\n");
}

/** A stored scan of the sample with a finished check of the given verdict. */
async function scanWithVerdict(orderId: string, sampleId: string, name: string, verdict: "consistent" | "review" | "inconsistent") {
  const [file] = await w.db
    .insert(w.schema.orderFiles)
    .values({
      orderId,
      sampleId,
      name,
      version: 1,
      sizeBytes: 10,
      contentType: "text/plain",
      sha256: "0".repeat(64),
      storageKey: `k/${orderId}/${name}`,
      state: "stored",
    })
    .returning();
  await w.db.insert(w.schema.scanChecks).values({ fileId: file.id, status: "done", verdict });
  return file;
}

// The first bytes of a PNG (signature and IHDR chunk, PNG specification, ISO/IEC 15948 § 5.2 and 11.2.2).
const PNG = Uint8Array.from([
  0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a, 0, 0, 0, 13, 0x49, 0x48, 0x44, 0x52, 0, 0, 0, 1, 0, 0, 0, 1, 8, 2, 0, 0, 0, 0x90, 0x77, 0x53, 0xde,
]);

describe("receipt records", () => {
  it("records each sample's condition, seal, amount, storage place and photo, starts the due date and shows the record to both sides", async () => {
    const { orderId, samples } = await orderInTransit(["RR-1 top", "RR-1 bottom"]);
    const photoKey = `orders/${orderId}/receipts/photo-1/rr-1-top.png`;
    await storage.putObject(photoKey, PNG, "image/png");
    const before = Date.now();
    const answer = await labMove(orderId, {
      intent: "received",
      note: "Opened in the receiving hood.",
      "records[0].sampleId": samples[0].id,
      "records[0].condition": "good",
      "records[0].sealIntact": "yes",
      "records[0].amount": "1.5",
      "records[0].amountUnit": "g",
      "records[0].storagePlace": "Desiccator 2, shelf B",
      "records[0].photoKey": photoKey,
      "records[0].photoName": "rr-1-top.png",
      "records[1].sampleId": samples[1].id,
      "records[1].condition": "leaking",
      "records[1].sealIntact": "no",
      "records[1].amount": "300",
      "records[1].amountUnit": "mg",
      "records[1].storagePlace": "Fume cupboard 1",
      "records[1].note": "Lid cracked; powder on the bag.",
    });
    expect(answer.status).toBe(302);
    const rows = await w.db.select().from(w.schema.sampleReceipts).where(w.eq(w.schema.sampleReceipts.orderId, orderId));
    expect(rows).toHaveLength(2);
    const top = rows.find((r) => r.sampleId === samples[0].id)!;
    expect(top).toMatchObject({ condition: "good", sealIntact: true, amount: 1.5, amountUnit: "g", storagePlace: "Desiccator 2, shelf B", photoKey });
    expect(top.photoSizeBytes).toBe(PNG.length);
    expect(top.receivedBy).toBe(w.labManager.id);
    expect(rows.find((r) => r.sampleId === samples[1].id)).toMatchObject({ condition: "leaking", sealIntact: false, note: "Lid cracked; powder on the bag." });
    // The due date: the receipt time plus the quote's 8 days of turnaround (money-fixtures' quote).
    const [order] = await w.db.select().from(w.schema.orders).where(w.eq(w.schema.orders.id, orderId));
    expect(order.dueAt!.getTime()).toBeGreaterThanOrEqual(before + 8 * DAY - 1000);
    expect(order.dueAt!.getTime()).toBeLessThanOrEqual(Date.now() + 8 * DAY + 1000);
    const notes = await timelineNotes(orderId);
    expect(notes).toContain("Opened in the receiving hood.");
    expect(notes).toContain("Not in good condition: RR-1 bottom (Leaking, seal broken).");
    // Both sides read the record and the due date.
    const lab = await callRoute(routes.labOrder.loader, getRequest(`/lab/orders/${orderId}`, await as(LAB)), { id: orderId });
    const client = await callRoute(routes.clientOrder.loader, getRequest(`/client/orders/${orderId}`, await as(CLIENT)), { id: orderId });
    for (const page of [lab, client]) {
      const body = page.body as { receipts: { sampleLabel: string; storagePlace: string; photo: { url: string } | null }[]; due: { at: string; kind: string } };
      expect(body.receipts.map((r) => r.sampleLabel)).toEqual(["RR-1 top", "RR-1 bottom"]);
      expect(body.receipts[0].storagePlace).toBe("Desiccator 2, shelf B");
      expect(body.receipts[0].photo?.url).toContain("X-Amz-Signature=");
      expect(body.due.at).toBe(order.dueAt!.toISOString());
      expect(body.due.kind).toBe("on_time");
    }
  });

  it("refuses a photo outside the order's folder and a record of another request's sample, with a sentence", async () => {
    const { orderId, samples } = await orderInTransit(["RR-2"]);
    const foreign = await labMove(orderId, {
      intent: "received",
      "records[0].sampleId": samples[0].id,
      "records[0].condition": "good",
      "records[0].sealIntact": "yes",
      "records[0].photoKey": "orders/another/receipts/x/p.png",
      "records[0].photoName": "p.png",
    });
    expect(foreign.status).toBe(409);
    expect(JSON.stringify(foreign.body)).toContain("Upload the photo again on this page.");
    const stranger = await labMove(orderId, {
      intent: "received",
      "records[0].sampleId": "00000000-0000-4000-8000-000000000000",
      "records[0].condition": "good",
      "records[0].sealIntact": "yes",
    });
    expect(JSON.stringify(stranger.body)).toContain("names a sample that is not part of this order");
    const badCondition = await labMove(orderId, {
      intent: "received",
      "records[0].sampleId": samples[0].id,
      "records[0].condition": "exploded",
      "records[0].sealIntact": "yes",
    });
    expect(badCondition.status).toBe(400);
    expect(JSON.stringify(badCondition.body)).toContain("Choose the sample's condition.");
    expect(await w.orderState(orderId)).toBe("samples_in_transit");
  });
});

describe("refusal on arrival", () => {
  it("takes a reason from the list per refused sample plus the lab's words, and records them", async () => {
    const { orderId, samples } = await orderInTransit(["RF-1", "RF-2"]);
    const none = await labMove(orderId, { intent: "refuse", reason: "The parcel does not match its declaration." });
    expect(none.status).toBe(400);
    expect(JSON.stringify(none.body)).toContain("Choose the reason for each refused sample");
    const answer = await labMove(orderId, {
      intent: "refuse",
      reason: "The vial of RF-2 leaked into the bag; RF-1 was not in the parcel.",
      "refused[0].sampleId": samples[0].id,
      "refused[0].reason": "missing",
      "refused[1].sampleId": samples[1].id,
      "refused[1].reason": "leaking",
    });
    expect(answer.status).toBe(302);
    expect(await w.orderState(orderId)).toBe("refused_on_arrival");
    const rows = await w.db.select().from(w.schema.sampleReceipts).where(w.eq(w.schema.sampleReceipts.orderId, orderId));
    expect(Object.fromEntries(rows.map((r) => [r.sampleId, r.refusalReason]))).toEqual({ [samples[0].id]: "missing", [samples[1].id]: "leaking" });
    const notes = await timelineNotes(orderId);
    expect(notes).toContain("Refused — RF-1: Missing from the parcel; RF-2: Leaking container.");
    expect(notes).toContain("RF-1 was not in the parcel");
    // The client reads the refusal record too.
    const client = await callRoute(routes.clientOrder.loader, getRequest(`/client/orders/${orderId}`, await as(CLIENT)), { id: orderId });
    expect((client.body as { receipts: { refusalReason: string }[] }).receipts.map((r) => r.refusalReason)).toEqual(["missing", "leaking"]);
  });
});

describe("due dates in the work queue", () => {
  it("shows each order's due date, sorts by it and flags the overdue in words", async () => {
    const late = await orderInTransit(["DQ-late"]);
    const soon = await orderInTransit(["DQ-soon"]);
    for (const o of [late, soon]) expect((await labMove(o.orderId, { intent: "received" })).status).toBe(302);
    await w.db
      .update(w.schema.orders)
      .set({ dueAt: new Date(Date.now() - 3 * DAY + 3_600_000) })
      .where(w.eq(w.schema.orders.id, late.orderId));
    const page = await callRoute(routes.workQueue.loader, getRequest("/lab/work-queue?sort=due&dir=asc", await as(LAB)));
    const rows = (page.body as { orders: { id: string; due: { kind: string; words: string } }[] }).orders;
    const ids = rows.map((r) => r.id);
    expect(ids.indexOf(late.orderId)).toBeLessThan(ids.indexOf(soon.orderId));
    expect(rows.find((r) => r.id === late.orderId)!.due).toMatchObject({ kind: "overdue", words: "Overdue by 3 days" });
    expect(rows.find((r) => r.id === soon.orderId)!.due).toMatchObject({ kind: "on_time", words: "Due in 8 days" });
  });
});

describe("file names matched to sample labels", () => {
  it("gives an upload without a chosen sample the sample whose label its name contains, and says plainly when none or two fit", async () => {
    const { orderId, samples } = await orderInTransit(["NM-7", "NM-7-B", "Other"]);
    expect((await labMove(orderId, { intent: "received" })).status).toBe(302);
    const [order] = await w.db.select().from(w.schema.orders).where(w.eq(w.schema.orders.id, orderId));
    const who = { userId: w.labManager.id, via: "api" as const };
    const started = await files.startOrderUpload(order, { name: "nm_7_b-Cu_10-80.xy", size: 1000, kind: "scan" }, who);
    const [row] = await w.db.select().from(w.schema.orderFiles).where(w.eq(w.schema.orderFiles.id, started.fileId));
    expect(row.sampleId).toBe(samples[1].id);
    await expect(files.startOrderUpload(order, { name: "background.xy", size: 1000, kind: "scan" }, who)).rejects.toThrow(
      "Choose the sample the scan background.xy belongs to. Its name contains none of the sample labels (NM-7, NM-7-B, Other)",
    );
  });
});

describe("measurement conditions", () => {
  it("stores what the lab enters beside a scan and refuses a number out of bounds with a sentence", async () => {
    const { orderId, samples } = await orderInTransit(["MC-1"]);
    expect((await labMove(orderId, { intent: "received" })).status).toBe(302);
    const file = await scanWithVerdict(orderId, samples[0].id, "mc-1.xy", "consistent");
    const post = async (fields: Record<string, string>) =>
      callRoute(routes.labFiles.action, formRequest(`/lab/orders/${orderId}/files`, { intent: "conditions", fileId: file.id, ...fields }, await as(LAB)), {
        id: orderId,
      });
    const bad = await post({ temperatureK: "-5" });
    expect(bad.status).toBe(400);
    expect(JSON.stringify(bad.body)).toContain("Temperature must be a number between");
    expect((await post({ temperatureK: "295", atmosphere: "Air", holder: "Zero-background silicon plate", step: "0.02" })).status).toBe(302);
    const [row] = await w.db.select().from(w.schema.orderFiles).where(w.eq(w.schema.orderFiles.id, file.id));
    expect(row.conditions).toMatchObject({ temperatureK: 295, atmosphere: "Air", holder: "Zero-background silicon plate", step: 0.02 });
    expect(row.conditions?.enteredBy).toBeTruthy();
    // The client's data room lists the file with the lab's entries.
    const list = await files.orderFileList(orderId, { side: "client" });
    expect(list[0].conditions).toMatchObject({ atmosphere: "Air" });
  });
});

describe("confirmation of verdicts that are not consistent", () => {
  it("refuses to deliver or accept a review scan without the confirmation, and records it when given", async () => {
    const { orderId, samples } = await orderInTransit(["VC-1"]);
    expect((await labMove(orderId, { intent: "received" })).status).toBe(302);
    expect((await labMove(orderId, { intent: "measuring" })).status).toBe(302);
    await scanWithVerdict(orderId, samples[0].id, "vc-1_Cu.xy", "review");
    const lab = await callRoute(routes.labOrder.loader, getRequest(`/lab/orders/${orderId}`, await as(LAB)), { id: orderId });
    expect((lab.body as { toConfirm: unknown[] }).toConfirm).toEqual([{ name: "vc-1_Cu.xy", version: 1, sampleLabel: "VC-1", verdict: "review" }]);

    const unconfirmed = await labMove(orderId, { intent: "delivered" });
    expect(unconfirmed.status).toBe(409);
    expect(JSON.stringify(unconfirmed.body)).toContain(
      "One scan's lattice check is not Consistent (vc-1_Cu.xy v1 (sample VC-1): Review); read the check and tick the confirmation to deliver the data anyway.",
    );
    expect(await w.orderState(orderId)).toBe("measuring");
    expect((await labMove(orderId, { intent: "delivered", confirmVerdicts: "yes", note: "Impurity lines noted in the report." })).status).toBe(302);
    expect(await w.orderState(orderId)).toBe("data_delivered");

    const refused = await clientMove(orderId, { intent: "accept" });
    expect(refused.status).toBe(409);
    expect(JSON.stringify(refused.body)).toContain("tick the confirmation to accept the delivery anyway");
    expect(await w.orderState(orderId)).toBe("data_delivered");
    expect((await clientMove(orderId, { intent: "accept", confirmVerdicts: "yes" })).status).toBe(302);
    expect(["accepted", "paid_out"]).toContain(await w.orderState(orderId));

    const notes = await timelineNotes(orderId);
    expect(notes).toContain("Impurity lines noted in the report. Delivered with the checks' verdicts read and confirmed: vc-1_Cu.xy v1 (sample VC-1): Review.");
    expect(notes).toContain("Accepted with the checks' verdicts read and confirmed: vc-1_Cu.xy v1 (sample VC-1): Review.");
  });

  it("asks nothing when every scan is consistent", async () => {
    const { orderId, samples } = await orderInTransit(["VC-2"]);
    expect((await labMove(orderId, { intent: "received" })).status).toBe(302);
    expect((await labMove(orderId, { intent: "measuring" })).status).toBe(302);
    await scanWithVerdict(orderId, samples[0].id, "vc-2.xy", "consistent");
    expect((await labMove(orderId, { intent: "delivered" })).status).toBe(302);
    expect((await clientMove(orderId, { intent: "accept" })).status).toBe(302);
  });
});

describe("the demo's lab records", () => {
  it("gives every received order without a record one per sample, and makes nothing on a second run", async () => {
    const { seedDemoLabRecords } = await import("~/demo/seed-lab-records.server");
    const { orderId, samples } = await orderInTransit(["DM-1", "DM-2"]);
    expect((await labMove(orderId, { intent: "received" })).status).toBe(302);
    expect(await seedDemoLabRecords()).toBeGreaterThanOrEqual(2);
    const rows = await w.db.select().from(w.schema.sampleReceipts).where(w.eq(w.schema.sampleReceipts.orderId, orderId));
    expect(rows.map((r) => r.sampleId).sort()).toEqual(samples.map((s) => s.id).sort());
    expect(rows.every((r) => r.storagePlace.length > 0)).toBe(true);
    expect(await seedDemoLabRecords()).toBe(0);
  });
});
