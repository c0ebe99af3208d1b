// Every move of an order from one state to the next, in one place: each runs under a row lock, is allowed by the
// transition table of app/domain/order-states.ts, is written to the order's timeline and notifies through the
// outbox in the same transaction. Money that a move releases goes through app/models/payments/provider.server.ts.
import { eq, inArray, sql } from "drizzle-orm";
import { config } from "~/config.server";
import { db, schema, type Tx } from "~/db/client.server";
import type { Order } from "~/db/schema";
import { formatMoney, platformFeeOnPart } from "~/domain/money";
import { issueInvoiceTx } from "~/models/invoices/invoices.server";
import { moveProblem, type Mover, type OrderState } from "~/domain/order-states";
import { audit } from "~/models/audit.server";
import { samplesWithoutCompletedCheck } from "~/models/checks/queries.server";
import { REFUSAL_REASON_LABELS, RECEIPT_CONDITION_LABELS } from "~/domain/receipt";
import { confirmedNote, unconfirmedProblem } from "~/domain/verdict-confirmation";
import {
  receiptProblem,
  scansToConfirm,
  setDueDate,
  verifyReceiptPhotos,
  writeReceipts,
  writeRefusals,
  type ReceiptInput,
  type RefusedSampleInput,
} from "~/models/orders/lab-records.server";
import { notify } from "~/models/notifications/outbox.server";
import { ACCOUNTS, heldForOrder, postLedger } from "~/models/payments/ledger.server";
import { PaymentProblem, postPayout, refund, refundHeld, transferToLab } from "~/models/payments/provider.server";

export class OrderMoveRefused extends Error {
  constructor(
    message: string,
    readonly status = 409,
  ) {
    super(message);
  }
}

/** Locks the order row for the rest of the transaction. */
export async function lockOrder(tx: Tx, orderId: string): Promise<Order> {
  const [order] = await tx.select().from(schema.orders).where(eq(schema.orders.id, orderId)).for("update");
  if (!order) throw new OrderMoveRefused("No such order.", 404);
  return order;
}

/**
 * Moves a locked order to `to` if the state machine allows this mover, and writes the timeline row.
 * Returns the updated order.
 */
export async function moveOrder(
  tx: Tx,
  order: Order,
  to: OrderState,
  mover: Mover,
  actorUserId: string | null,
  note = "",
  extra: Partial<Pick<Order, "deliveredAt">> = {},
): Promise<Order> {
  const problem = moveProblem(order.state, to, mover);
  if (problem) throw new OrderMoveRefused(problem);
  const [updated] = await tx
    .update(schema.orders)
    .set({ state: to, updatedAt: new Date(), ...extra })
    .where(eq(schema.orders.id, order.id))
    .returning();
  await tx.insert(schema.orderEvents).values({ orderId: order.id, fromState: order.state, toState: to, actorUserId, note });
  await notify(tx, { kind: "order_moved", order: updated, from: order.state, note });
  return updated;
}

// ─── The physical side: shipping, receiving, measuring, delivering ───

/** The client marks the samples shipped, with the carrier and tracking number. */
export async function markShipped(orderId: string, userId: string, carrier: string, trackingNumber: string) {
  return db.transaction(async (tx) => {
    const order = await moveOrder(
      tx,
      await lockOrder(tx, orderId),
      "samples_in_transit",
      "client",
      userId,
      `Shipped with ${carrier}, tracking ${trackingNumber}.`,
    );
    await tx
      .insert(schema.shipments)
      .values({ orderId, carrier, trackingNumber, shippedBy: userId })
      .onConflictDoUpdate({
        target: schema.shipments.orderId,
        set: { carrier, trackingNumber, shippedBy: userId, shippedAt: new Date() },
      });
    return order;
  });
}

/** Joins the person's note and the record's own sentence into one timeline note. */
const joinNote = (...parts: (string | null | undefined)[]) =>
  parts
    .map((p) => p?.trim())
    .filter(Boolean)
    .join(" ");

/**
 * The lab takes the parcel in: one receipt record per sample (condition, seal, amount, storage place, photo),
 * and the due date starts (the quote's turnaround from now). Records are optional for callers that have none.
 */
export async function markReceived(orderId: string, userId: string, note: string, records: ReceiptInput[] = []) {
  const [current] = await db.select().from(schema.orders).where(eq(schema.orders.id, orderId));
  if (!current) throw new OrderMoveRefused("No such order.", 404);
  const problem = records.length
    ? await receiptProblem(
        current,
        records.map((r) => r.sampleId),
      )
    : null;
  if (problem) throw new OrderMoveRefused(problem, 400);
  const photos = await verifyReceiptPhotos(orderId, records);
  if ("error" in photos) throw new OrderMoveRefused(photos.error, 400);
  const notGood = records.filter((r) => r.condition !== "good" || !r.sealIntact);
  const recordWords = records.length
    ? `Receipt recorded for ${records.length} ${records.length === 1 ? "sample" : "samples"}${
        notGood.length ? "" : ", each in good condition with its seal intact"
      }.`
    : "";
  return db.transaction(async (tx) => {
    const order = await moveOrder(
      tx,
      await lockOrder(tx, orderId),
      "samples_received",
      "lab",
      userId,
      joinNote(note || "Samples received; the parcel matches its declaration.", recordWords, notGood.length ? await conditionWords(tx, notGood) : ""),
    );
    await writeReceipts(tx, orderId, userId, records, photos.sizes);
    const dueAt = await setDueDate(tx, order);
    return { ...order, dueAt };
  });
}

/** "Not in good condition: S-2 (Leaking, seal broken)." */
async function conditionWords(tx: Tx, records: ReceiptInput[]) {
  const labels = await sampleLabels(
    tx,
    records.map((r) => r.sampleId),
  );
  const each = records.map(
    (r) =>
      `${labels.get(r.sampleId) ?? "a sample"} (${[r.condition !== "good" ? RECEIPT_CONDITION_LABELS[r.condition] : null, r.sealIntact ? null : "seal broken"].filter(Boolean).join(", ")})`,
  );
  return `Not in good condition: ${each.join("; ")}.`;
}

async function sampleLabels(tx: Tx, ids: string[]) {
  const rows = ids.length
    ? await tx.select({ id: schema.samples.id, label: schema.samples.label }).from(schema.samples).where(inArray(schema.samples.id, ids))
    : [];
  return new Map(rows.map((r) => [r.id, r.label]));
}

export async function startMeasuring(orderId: string, userId: string, note: string) {
  return db.transaction(async (tx) => moveOrder(tx, await lockOrder(tx, orderId), "measuring", "lab", userId, note || "Measurement started."));
}

/**
 * The lab marks the data delivered; every sample needs at least one completed check first. A scan whose check
 * is not `consistent` is delivered only when the lab confirms it has read the verdicts (`confirmed`), and the
 * timeline keeps that confirmation with the verdicts.
 */
export async function markDelivered(orderId: string, userId: string, note: string, { confirmed = false }: { confirmed?: boolean } = {}) {
  const missing = await samplesWithoutCompletedCheck(orderId);
  if (missing.length > 0) {
    throw new OrderMoveRefused(`Every sample needs at least one scan with a completed lattice check first; missing: ${missing.join(", ")}.`);
  }
  const toConfirm = await scansToConfirm(orderId);
  const problem = unconfirmedProblem(toConfirm, "deliver");
  if (problem && !confirmed) throw new OrderMoveRefused(problem);
  return db.transaction(async (tx) =>
    moveOrder(
      tx,
      await lockOrder(tx, orderId),
      "data_delivered",
      "lab",
      userId,
      joinNote(note || "Data delivered to the client's data room.", confirmedNote(toConfirm, "deliver")),
      { deliveredAt: new Date() },
    ),
  );
}

// ─── Money moves: holding, cancelling, accepting, paying out, disputes ───

/**
 * A paid checkout: the payment row marked paid, the money posted as held, and the order moved to funds held.
 * A repeated call posts nothing (the ledger posting is keyed by the charge) and moves nothing.
 */
export async function holdFunds(orderId: string, paid: { paymentId: string; paymentIntentId: string; chargeId: string; amountMinor: number }) {
  await db.transaction(async (tx) => {
    const order = await lockOrder(tx, orderId);
    await tx
      .update(schema.payments)
      .set({ status: "paid", chargeId: paid.chargeId, paymentIntentId: paid.paymentIntentId, lastError: null, updatedAt: new Date() })
      .where(eq(schema.payments.id, paid.paymentId));
    const posted = await postLedger(tx, {
      kind: "payment_held",
      orderId,
      currency: order.currency,
      providerObjectId: paid.chargeId,
      memo: `Payment held for order ${order.number}`,
      entries: [
        { account: ACCOUNTS.cash, amountMinor: paid.amountMinor },
        { account: ACCOUNTS.held, amountMinor: -paid.amountMinor },
      ],
    });
    if (posted && order.state === "awaiting_payment") await moveOrder(tx, order, "funds_held", "system", null, "Payment received and held.");
    // The invoice in the lab's name, once per order, in the same transaction as the money (docs/design.md#invoices).
    if (posted) await issueInvoiceTx(tx, orderId, new Date());
  });
}

/** Pays an accepted order out: total minus the platform fee to the lab, the fee to the platform. */
export async function releasePayout(orderId: string) {
  const [order] = await db.select().from(schema.orders).where(eq(schema.orders.id, orderId));
  if (!order) throw new PaymentProblem("No such order.", 404);
  if (order.state === "paid_out") return order;
  if (order.state !== "accepted") throw new PaymentProblem("Only an accepted delivery is paid out.");
  const fee = platformFeeOnPart(order.amountMinor, order);
  const transfer = await transferToLab(order, order.amountMinor - fee, `payout:${order.id}`);
  return db.transaction(async (tx) => {
    const locked = await lockOrder(tx, orderId);
    await postPayout(tx, locked, transfer.id, order.amountMinor - fee, fee, "Payout on accepted delivery");
    return locked.state === "accepted"
      ? moveOrder(
          tx,
          locked,
          "paid_out",
          "system",
          null,
          `Paid to the lab: ${formatMoney(order.amountMinor - fee, order.currency)} after the platform fee of ${formatMoney(fee, order.currency)}.`,
        )
      : locked;
  });
}

/**
 * Cancels an order before its samples arrive. Money already held is refunded in full; the state moves
 * first so no shipment can start while the refund is under way.
 */
export async function cancelOrder(orderId: string, mover: Mover, actorUserId: string, reason: string) {
  const order = await db.transaction(async (tx) => moveOrder(tx, await lockOrder(tx, orderId), "cancelled", mover, actorUserId, reason || "Cancelled."));
  await refundHeld(order, `Refund on cancellation: ${reason}`, `refund:${orderId}:cancel`);
  return order;
}

/**
 * The lab refuses a parcel that does not match its declaration: refund minus the handling fee, which goes to the
 * lab. Each refused sample may carry its reason from the list (REFUSAL_REASONS); the words explain them all.
 */
export async function refuseOnArrival(orderId: string, actorUserId: string, reason: string, refused: RefusedSampleInput[] = []) {
  const [current] = await db.select().from(schema.orders).where(eq(schema.orders.id, orderId));
  if (!current) throw new OrderMoveRefused("No such order.", 404);
  const problem = refused.length
    ? await receiptProblem(
        current,
        refused.map((r) => r.sampleId),
      )
    : null;
  if (problem) throw new OrderMoveRefused(problem, 400);
  const order = await db.transaction(async (tx) => {
    const labels = await sampleLabels(
      tx,
      refused.map((r) => r.sampleId),
    );
    const each = refused.map((r) => `${labels.get(r.sampleId) ?? "a sample"}: ${REFUSAL_REASON_LABELS[r.reason]}`).join("; ");
    const moved = await moveOrder(
      tx,
      await lockOrder(tx, orderId),
      "refused_on_arrival",
      "lab",
      actorUserId,
      joinNote(each ? `Refused — ${each}.` : "", reason),
    );
    await writeRefusals(tx, orderId, actorUserId, refused, reason);
    return moved;
  });
  const held = await heldForOrder(db, orderId);
  const handling = Math.min(config.payments.refusalHandlingFeeMinor, held);
  await refund(
    order,
    held - handling,
    `Refund after refusal on arrival (handling fee ${formatMoney(handling, order.currency)} kept)`,
    `refund:${orderId}:refusal`,
  );
  if (handling > 0) {
    const transfer = await transferToLab(order, handling, `payout:${orderId}:handling`);
    await db.transaction((tx) => postPayout(tx, order, transfer.id, handling, 0, "Handling fee for a parcel refused on arrival"));
  }
  return order;
}

/** What the client is told when the acceptance is recorded but the provider did not answer the payout. */
export const PAYOUT_DELAYED =
  "Delivery accepted. The payment provider is not answering just now, so the lab's payout has not gone out yet; it is sent automatically within minutes, once.";

/**
 * The client accepts the delivered data (or the review window lapses): the lab is paid. The client accepts scans
 * whose check is not `consistent` only with `confirmed` (the timeline keeps the verdicts); a lapse needs none.
 */
export async function acceptDelivery(
  orderId: string,
  mover: "client" | "system",
  actorUserId: string | null,
  { confirmed = false, note = "" }: { confirmed?: boolean; note?: string } = {},
) {
  const toConfirm = mover === "client" ? await scansToConfirm(orderId) : [];
  const problem = unconfirmedProblem(toConfirm, "accept");
  await db.transaction(async (tx) => {
    const order = await lockOrder(tx, orderId);
    if (order.state === "accepted" || order.state === "paid_out") return;
    if (problem && !confirmed) throw new OrderMoveRefused(problem);
    await moveOrder(
      tx,
      order,
      "accepted",
      mover,
      actorUserId,
      mover === "system"
        ? "The review window lapsed; delivery accepted automatically."
        : joinNote(note || "Delivery accepted.", confirmedNote(toConfirm, "accept")),
    );
  });
  return releasePayout(orderId);
}

/** Accepts every delivery whose review window has lapsed; returns how many. */
export async function acceptLapsedDeliveries(now = new Date()) {
  // The review window runs from delivery; orders in dispute are frozen and not touched.
  const due = await db.execute<{ id: string }>(
    sql`select id from orders where state = 'data_delivered' and delivered_at + make_interval(days => review_window_days) <= ${now.toISOString()}`,
  );
  let accepted = 0;
  for (const { id } of due.rows) {
    try {
      await acceptDelivery(id, "system", null);
      accepted++;
    } catch (err) {
      if (!(err instanceof PaymentProblem) && !(err instanceof OrderMoveRefused)) throw err;
      console.warn(`review window: order ${id} not paid out yet: ${(err as Error).message}`);
    }
  }
  return accepted;
}

/**
 * Pays out accepted orders whose payout did not go through (the provider failed after the acceptance was
 * recorded). The transfer's idempotency key is the order's, so a payout the provider did make is not repeated.
 */
export async function releasePendingPayouts(): Promise<number> {
  const pending = await db.select({ id: schema.orders.id }).from(schema.orders).where(eq(schema.orders.state, "accepted"));
  let paid = 0;
  for (const { id } of pending) {
    try {
      await releasePayout(id);
      paid++;
    } catch (err) {
      if (!(err instanceof PaymentProblem) && !(err instanceof OrderMoveRefused)) throw err;
      console.warn(`payouts: order ${id} not paid out yet: ${(err as Error).message}`);
    }
  }
  return paid;
}

/** The client opens a dispute on delivered data; the money stays frozen until an admin decides. */
export async function openDispute(orderId: string, actorUserId: string, reason: string) {
  return db.transaction(async (tx) => {
    const order = await moveOrder(tx, await lockOrder(tx, orderId), "disputed", "client", actorUserId, reason);
    await tx.insert(schema.disputes).values({ orderId, openedBy: actorUserId, reason });
    return order;
  });
}

/**
 * An admin settles a dispute: `refundMinor` back to the client, the rest to the lab minus the platform
 * fee on that part. The decision and its reason are recorded and audit-logged.
 */
export async function resolveDispute(orderId: string, admin: { userId: string; clientAddress?: string }, refundMinor: number, reason: string) {
  const [order] = await db.select().from(schema.orders).where(eq(schema.orders.id, orderId));
  if (!order) throw new PaymentProblem("No such order.", 404);
  if (order.state !== "disputed") throw new PaymentProblem("This order is not in dispute.");
  const held = await heldForOrder(db, orderId);
  if (!Number.isInteger(refundMinor) || refundMinor < 0 || refundMinor > held) {
    throw new PaymentProblem(`The refund must be between ${formatMoney(0, order.currency)} and the ${formatMoney(held, order.currency)} held.`, 400);
  }
  const payoutPart = held - refundMinor;
  const fee = platformFeeOnPart(payoutPart, order);
  await refund(order, refundMinor, `Dispute decision: refund. ${reason}`, `refund:${orderId}:dispute`);
  const transfer = payoutPart - fee > 0 ? await transferToLab(order, payoutPart - fee, `payout:${orderId}:dispute`) : null;
  await db.transaction(async (tx) => {
    const locked = await lockOrder(tx, orderId);
    if (transfer) await postPayout(tx, locked, transfer.id, payoutPart - fee, fee, `Dispute decision: payout. ${reason}`);
    else if (fee > 0) await postPayout(tx, locked, `dispute:${orderId}`, 0, fee, "Dispute decision: fee");
    await tx
      .update(schema.disputes)
      .set({ state: "resolved", refundMinor, payoutMinor: payoutPart - fee, decidedBy: admin.userId, decidedAt: new Date(), decisionReason: reason })
      .where(eq(schema.disputes.orderId, orderId));
    if (locked.state === "disputed")
      await moveOrder(
        tx,
        locked,
        "resolved",
        "admin",
        admin.userId,
        `Refund ${formatMoney(refundMinor, order.currency)}, payout ${formatMoney(payoutPart - fee, order.currency)}, platform fee ${formatMoney(fee, order.currency)}. ${reason}`,
      );
    await audit(
      {
        actorUserId: admin.userId,
        organisationId: order.clientOrganisationId,
        action: "dispute_resolved",
        subjectType: "order",
        subjectId: orderId,
        details: { refundMinor, payoutMinor: payoutPart - fee, feeMinor: fee, reason },
        clientAddress: admin.clientAddress,
      },
      tx,
    );
  });
}
