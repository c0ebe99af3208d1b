// The physical side of an order: shipping the samples, receiving them, measuring, and delivering the data.
import { eq } from "drizzle-orm";
import { db, schema } from "~/db/client.server";
import { samplesWithoutCompletedCheck } from "~/models/checks/scan-check.server";
import { lockOrder, moveOrder, OrderMoveRefused } from "~/models/orders/lifecycle.server";

export { samplesWithoutCompletedCheck };

/** The client marks the samples shipped, with the carrier and tracking number. */
export async function markShipped(orderId: string, userId: string, carrier: string, trackingNumber: string) {
  return db.transaction(async (tx) => {
    const order = await moveOrder(tx, await lockOrder(tx, orderId), "samples_in_transit", "client", userId, `Shipped with ${carrier}, tracking ${trackingNumber}.`);
    await tx.insert(schema.shipments).values({ orderId, carrier, trackingNumber, shippedBy: userId }).onConflictDoUpdate({
      target: schema.shipments.orderId,
      set: { carrier, trackingNumber, shippedBy: userId, shippedAt: new Date() },
    });
    return order;
  });
}

export async function markReceived(orderId: string, userId: string, note: string) {
  return db.transaction(async (tx) => moveOrder(tx, await lockOrder(tx, orderId), "samples_received", "lab", userId, note || "Samples received; the parcel matches its declaration."));
}

export async function startMeasuring(orderId: string, userId: string, note: string) {
  return db.transaction(async (tx) => moveOrder(tx, await lockOrder(tx, orderId), "measuring", "lab", userId, note || "Measurement started."));
}

/** The lab marks the data delivered; every sample needs at least one completed check first. */
export async function markDelivered(orderId: string, userId: string, note: string) {
  const missing = await samplesWithoutCompletedCheck(orderId);
  if (missing.length > 0) {
    throw new OrderMoveRefused(`Every sample needs at least one scan with a completed lattice check first; missing: ${missing.join(", ")}.`);
  }
  return db.transaction(async (tx) =>
    moveOrder(tx, await lockOrder(tx, orderId), "data_delivered", "lab", userId, note || "Data delivered to the client's data room.", { deliveredAt: new Date() }),
  );
}

export async function shipmentOf(orderId: string) {
  const [row] = await db.select().from(schema.shipments).where(eq(schema.shipments.orderId, orderId));
  return row ?? null;
}
