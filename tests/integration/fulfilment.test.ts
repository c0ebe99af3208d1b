// Shipping, receiving, refusing, measuring and delivering through the order screens' actions: only the right
// side can make each move, out-of-order moves are refused with a clear message, and delivery needs checks.
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { moneyWorld, type MoneyWorld } from "./money-fixtures";
import { callRoute, cookieFrom, formRequest, getRequest } from "./route-call";

let w: MoneyWorld;
let routes: {
  clientOrder: typeof import("~/routes/client/order");
  labOrder: typeof import("~/routes/lab/order");
  packingSlip: typeof import("~/routes/client/packing-slip");
  signIn: typeof import("~/routes/public/sign-in");
};
const cookies: Record<string, string> = {};
async function as(email: string) {
  cookies[email] ??= cookieFrom(await callRoute(routes.signIn.action, formRequest("/sign-in", { email, password: "diffractory-demo" })))!;
  return cookies[email];
}

beforeAll(async () => {
  w = await moneyWorld();
  await w.onboardLab();
  routes = {
    clientOrder: await import("~/routes/client/order"),
    labOrder: await import("~/routes/lab/order"),
    packingSlip: await import("~/routes/client/packing-slip"),
    signIn: await import("~/routes/public/sign-in"),
  };
});
afterAll(async () => {
  await w?.close();
});

const CLIENT = "owner@halvorsen.example";
const LAB = "lab@graniteridge.example";
const OTHER_LAB = "lab@lakeside.example";
const OTHER_CLIENT = "owner@pinecrest.example";

async function clientMove(orderId: string, fields: Record<string, string>, who = CLIENT) {
  return callRoute(routes.clientOrder.action, formRequest(`/client/orders/${orderId}`, fields, await as(who)), { id: orderId });
}
async function labMove(orderId: string, fields: Record<string, string>, who = LAB) {
  return callRoute(routes.labOrder.action, formRequest(`/lab/orders/${orderId}`, fields, await as(who)), { id: orderId });
}

async function addSampleWithCheck(orderId: string, status: "done" | "failed") {
  const [order] = await w.db.select().from(w.schema.orders).where(w.eq(w.schema.orders.id, orderId));
  const [sample] = await w.db
    .insert(w.schema.samples)
    .values({ requestId: order.requestId, label: `S-${status}`, formula: "Si" })
    .returning();
  const [file] = await w.db
    .insert(w.schema.orderFiles)
    .values({
      orderId,
      sampleId: sample.id,
      name: `${sample.label}.xy`,
      version: 1,
      sizeBytes: 10,
      contentType: "text/plain",
      sha256: "0".repeat(64),
      storageKey: `k/${sample.id}`,
      state: "stored",
    })
    .returning();
  await w.db.insert(w.schema.scanChecks).values({ fileId: file.id, status, verdict: status === "done" ? "consistent" : null });
  return sample;
}

describe("order moves", () => {
  it("walks an order from shipped to delivered with the right people, refusing everyone else", async () => {
    const orderId = await w.makeOrder(19_500);
    // Not paid yet: shipping is refused with a sentence.
    const early = await clientMove(orderId, { intent: "ship", carrier: "Nordpost Freight", trackingNumber: "NP-2026-0042" });
    expect(early.status).toBe(409);
    expect(JSON.stringify(early.body)).toContain('cannot become \\"Samples in transit\\"');
    await w.pay(orderId);
    // Bad input is a field error and changes nothing.
    const bad = await clientMove(orderId, { intent: "ship", carrier: "", trackingNumber: "<script>" });
    expect(bad.status).toBe(400);
    expect(await w.orderState(orderId)).toBe("funds_held");
    // Another lab and another client see nothing.
    expect((await labMove(orderId, { intent: "received" }, OTHER_LAB)).status).toBe(404);
    expect((await clientMove(orderId, { intent: "ship", carrier: "X Post", trackingNumber: "XP-1234" }, OTHER_CLIENT)).status).toBe(404);
    // The lab cannot act before the parcel is sent.
    expect((await labMove(orderId, { intent: "received" })).status).toBe(409);
    expect((await clientMove(orderId, { intent: "ship", carrier: "Nordpost Freight", trackingNumber: "NP-2026-0042" })).status).toBe(302);
    const [shipment] = await w.db.select().from(w.schema.shipments).where(w.eq(w.schema.shipments.orderId, orderId));
    expect(shipment).toMatchObject({ carrier: "Nordpost Freight", trackingNumber: "NP-2026-0042" });
    expect((await labMove(orderId, { intent: "received" })).status).toBe(302);
    expect((await labMove(orderId, { intent: "measuring" })).status).toBe(302);
    expect(await w.orderState(orderId)).toBe("measuring");
    // Delivery needs a completed check for every sample.
    await addSampleWithCheck(orderId, "failed");
    const refused = await labMove(orderId, { intent: "delivered" });
    expect(refused.status).toBe(409);
    expect(JSON.stringify(refused.body)).toContain("missing: S-failed");
    await w.db.update(w.schema.scanChecks).set({ status: "done", verdict: "review" });
    // A scan under review is delivered only with the lab's confirmation (docs/design.md, "The lab's records").
    expect((await labMove(orderId, { intent: "delivered" })).status).toBe(409);
    expect((await labMove(orderId, { intent: "delivered", confirmVerdicts: "yes" })).status).toBe(302);
    const [delivered] = await w.db.select().from(w.schema.orders).where(w.eq(w.schema.orders.id, orderId));
    expect(delivered.state).toBe("data_delivered");
    expect(delivered.deliveredAt).not.toBeNull();
    const events = await w.db.select().from(w.schema.orderEvents).where(w.eq(w.schema.orderEvents.orderId, orderId));
    expect(events.map((e) => e.toState)).toEqual(["awaiting_payment", "funds_held", "samples_in_transit", "samples_received", "measuring", "data_delivered"]);
  });

  it("lets the lab refuse a parcel on arrival with a reason, which starts the refund", async () => {
    const orderId = await w.makeOrder(19_500);
    await w.pay(orderId);
    await clientMove(orderId, { intent: "ship", carrier: "Nordpost Freight", trackingNumber: "NP-2026-0077" });
    expect((await labMove(orderId, { intent: "refuse", reason: "short" })).status).toBe(400);
    expect((await labMove(orderId, { intent: "refuse", reason: "The parcel held a liquid, not the declared powder." })).status).toBe(302);
    expect(await w.orderState(orderId)).toBe("refused_on_arrival");
    expect(await w.app.ledger.heldForOrder(w.db, orderId)).toBe(0);
  });

  it("shows the packing slip to the client only", async () => {
    const orderId = await w.makeOrder();
    expect((await callRoute(routes.packingSlip.loader, getRequest(`/client/orders/${orderId}/packing-slip`, await as(CLIENT)), { id: orderId })).status).toBe(
      200,
    );
    expect(
      (await callRoute(routes.packingSlip.loader, getRequest(`/client/orders/${orderId}/packing-slip`, await as(OTHER_CLIENT)), { id: orderId })).status,
    ).toBe(404);
    expect((await callRoute(routes.packingSlip.loader, getRequest(`/client/orders/${orderId}/packing-slip`, await as(LAB)), { id: orderId })).status).toBe(403);
    expect((await callRoute(routes.labOrder.loader, getRequest(`/lab/orders/${orderId}`, await as(LAB)), { id: orderId })).status).toBe(200);
    expect((await callRoute(routes.labOrder.loader, getRequest(`/lab/orders/${orderId}`, await as(OTHER_LAB)), { id: orderId })).status).toBe(404);
  });
});
