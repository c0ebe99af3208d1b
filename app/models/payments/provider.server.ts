// The money flow through the payment provider's SDK: checkout into holding, payouts, refunds, dispute splits.
import { and, count, desc, eq, sql } from "drizzle-orm";
import type Stripe from "stripe";
import { config } from "~/config.server";
import { db, schema } from "~/db/client.server";
import type { Order } from "~/db/schema";
import { audit } from "~/models/audit.server";
import { services } from "~/utils/services.server";
import { ACCOUNTS, heldForOrder, postLedger } from "~/models/payments/ledger.server";
import { lockOrder, moveOrder, OrderMoveRefused, type Tx } from "~/models/orders/lifecycle.server";
import type { Mover } from "~/domain/order-states";
import { hasNul, NUL_REFUSAL } from "~/utils/form.server";

const provider = () => services.payments;
const lower = (c: string) => c.toLowerCase();

export class PaymentProblem extends Error {
  constructor(
    message: string,
    readonly status = 409,
  ) {
    super(message);
  }
}

/** A provider failure in words a person can act on; nothing was recorded when this is thrown. */
function providerTrouble(err: unknown): never {
  const e = err as { type?: string; message?: string };
  if (e.type === "StripeConnectionError" || e.type === "StripeAPIError" || e.type === "StripeRateLimitError") {
    throw new PaymentProblem("The payment provider is not answering right now. Nothing was charged or changed; please try again in a minute.", 503);
  }
  throw new PaymentProblem(e.message ?? "The payment provider refused the request.", 502);
}

/** The platform fee of an amount: basis points of the order, rounded to the nearest minor unit. */
export function platformFee(amountMinor: number, bps: number) {
  return Math.round((amountMinor * bps) / 10_000);
}

// ─── Paying into holding ───

/**
 * The checkout page for an order awaiting payment. A second click while a checkout is open returns the
 * same page (the attempt number is part of the idempotency key, so concurrent clicks share one session).
 */
export async function startCheckout(orderId: string, actor: { userId: string; email: string }) {
  const [order] = await db.select().from(schema.orders).where(eq(schema.orders.id, orderId));
  if (!order) throw new PaymentProblem("No such order.", 404);
  if (order.state !== "awaiting_payment") throw new PaymentProblem("This order is already paid or closed.");
  const [open] = await db
    .select()
    .from(schema.payments)
    .where(and(eq(schema.payments.orderId, orderId), eq(schema.payments.status, "open")))
    .orderBy(desc(schema.payments.createdAt))
    .limit(1);
  if (open) {
    try {
      const session = await provider().checkout.sessions.retrieve(open.checkoutSessionId);
      if (session.status === "open" && session.url) return session.url;
      if (session.status === "complete") {
        await syncCheckout(session.id);
        throw new PaymentProblem("This order has just been paid.");
      }
    } catch (err) {
      if (err instanceof PaymentProblem) throw err;
      providerTrouble(err);
    }
    await db.update(schema.payments).set({ status: "expired", updatedAt: new Date() }).where(eq(schema.payments.id, open.id));
  }
  const [{ n }] = await db.select({ n: count() }).from(schema.payments).where(eq(schema.payments.orderId, orderId));
  const [request] = await db.select({ title: schema.requests.title }).from(schema.requests).where(eq(schema.requests.id, order.requestId));
  let session: Stripe.Checkout.Session;
  try {
    session = await provider().checkout.sessions.create(
      {
        mode: "payment",
        customer_email: actor.email,
        client_reference_id: order.id,
        line_items: [{ quantity: 1, price_data: { currency: lower(order.currency), unit_amount: order.amountMinor, product_data: { name: `Diffraction measurements: ${request?.title ?? order.id}` } } }],
        success_url: `${config.appUrl}/client/orders/${order.id}/payment?session_id={CHECKOUT_SESSION_ID}`,
        cancel_url: `${config.appUrl}/client/orders/${order.id}?payment=cancelled`,
        metadata: { orderId: order.id },
        payment_intent_data: { metadata: { orderId: order.id }, transfer_group: `order_${order.id}` },
      },
      { idempotencyKey: `checkout:${order.id}:${n}` },
    );
  } catch (err) {
    providerTrouble(err);
  }
  await db
    .insert(schema.payments)
    .values({
      orderId: order.id,
      checkoutSessionId: session.id,
      paymentIntentId: typeof session.payment_intent === "string" ? session.payment_intent : (session.payment_intent?.id ?? null),
      amountMinor: order.amountMinor,
      currency: order.currency,
      createdBy: actor.userId,
    })
    .onConflictDoNothing();
  if (!session.url) throw new PaymentProblem("The payment provider gave no checkout page.", 502);
  return session.url;
}

/**
 * Brings a checkout to the provider's current truth: paid → funds held and a ledger posting; declined →
 * the decline reason kept for the client. Safe to call any number of times, in any order.
 */
export async function syncCheckout(sessionId: string) {
  let session: Stripe.Checkout.Session;
  try {
    session = await provider().checkout.sessions.retrieve(sessionId, { expand: ["payment_intent"] });
  } catch (err) {
    providerTrouble(err);
  }
  const intent = session.payment_intent as Stripe.PaymentIntent | null;
  const orderId = session.metadata?.orderId ?? session.client_reference_id;
  if (!orderId) return { state: "unknown" as const };
  const [payment] = await db.select().from(schema.payments).where(eq(schema.payments.checkoutSessionId, sessionId));
  if (!payment) return { state: "unknown" as const };
  if (session.payment_status === "paid" && intent?.status === "succeeded") {
    const chargeId = typeof intent.latest_charge === "string" ? intent.latest_charge : (intent.latest_charge?.id ?? intent.id);
    await db.transaction(async (tx) => {
      const order = await lockOrder(tx, orderId);
      await tx.update(schema.payments).set({ status: "paid", chargeId, paymentIntentId: intent.id, lastError: null, updatedAt: new Date() }).where(eq(schema.payments.id, payment.id));
      const posted = await postLedger(tx, {
        kind: "payment_held",
        orderId,
        currency: order.currency,
        providerObjectId: chargeId,
        memo: `Payment held for order ${orderId}`,
        entries: [
          { account: ACCOUNTS.cash, amountMinor: intent.amount_received },
          { account: ACCOUNTS.held, amountMinor: -intent.amount_received },
        ],
      });
      if (posted && order.state === "awaiting_payment") await moveOrder(tx, order, "funds_held", "system", null, "Payment received and held.");
    });
    // A payment that lands after the order was cancelled goes straight back.
    const [after] = await db.select().from(schema.orders).where(eq(schema.orders.id, orderId));
    if (after.state === "cancelled") await refundHeld(after, "Paid after cancellation", `refund:${orderId}:late-payment`);
    return { state: "paid" as const };
  }
  const failure = intent?.last_payment_error;
  if (failure?.message) {
    await db.update(schema.payments).set({ lastError: failure.message, updatedAt: new Date() }).where(eq(schema.payments.id, payment.id));
    return { state: "declined" as const, reason: failure.message };
  }
  if (session.status === "expired") {
    await db.update(schema.payments).set({ status: "expired", updatedAt: new Date() }).where(eq(schema.payments.id, payment.id));
  }
  return { state: "open" as const };
}

// ─── Webhooks ───

/** A provider event that is refused (400): the provider shows the sentence in its delivery log. */
export class BadWebhook extends Error {}
export class BadSignature extends BadWebhook {}

/** The provider objects whose events Diffractory acts on; events about anything else are acknowledged and ignored. */
const HANDLED_OBJECTS = new Set(["checkout.session", "payment_intent", "account"]);

/** JSON with object keys sorted at every level, so equal documents compare equal whatever their key order. */
function canonicalJson(value: unknown): string {
  if (Array.isArray(value)) return `[${value.map(canonicalJson).join(",")}]`;
  if (value && typeof value === "object") {
    return `{${Object.keys(value)
      .sort()
      .map((k) => `${JSON.stringify(k)}:${canonicalJson((value as Record<string, unknown>)[k])}`)
      .join(",")}}`;
  }
  return JSON.stringify(value);
}

/**
 * Verifies and stores a provider event, then brings the object it is about up to date. Events are kept by
 * id, so a repeat is recognised; the object is re-read from the provider, so late or reordered events
 * cannot move money backwards.
 */
export async function receiveWebhook(rawBody: string, signature: string | null) {
  let event: Stripe.Event;
  try {
    event = provider().webhooks.constructEvent(rawBody, signature ?? "", config.payments.webhookSecret);
  } catch (err) {
    // The SDK checks the signature first, then parses: a signed body that is not JSON is not a signature problem.
    if (err instanceof SyntaxError) throw new BadWebhook("The event is signed but its body is not JSON.");
    throw new BadSignature("The webhook signature does not verify.");
  }
  const data = (event as { data?: { object?: unknown } }).data;
  if (typeof event.id !== "string" || !event.id || event.id.length > 255 || typeof event.type !== "string" || !data?.object || typeof data.object !== "object") {
    throw new BadWebhook("The event has no id, type or data object.");
  }
  if (hasNul(event)) throw new BadWebhook(NUL_REFUSAL);
  await db.insert(schema.webhookEvents).values({ id: event.id, type: event.type, payload: event as unknown as Record<string, unknown> }).onConflictDoNothing();
  const [stored] = await db.select().from(schema.webhookEvents).where(eq(schema.webhookEvents.id, event.id));
  // Same id, other content: a replay with a changed body is refused. (jsonb reorders keys, so compare canonically.)
  if (canonicalJson(stored.payload) !== canonicalJson(event)) throw new BadSignature("An event with this id but other content was already received.");
  if (stored.processedAt) return { duplicate: true };
  const object = event.data.object as { id: string; object: string; metadata?: Record<string, string> };
  if (!HANDLED_OBJECTS.has(object.object) || typeof object.id !== "string") {
    await db.update(schema.webhookEvents).set({ processedAt: new Date() }).where(eq(schema.webhookEvents.id, event.id));
    return { duplicate: false, ignored: `Event type ${event.type.slice(0, 100)} is not used by Diffractory.` };
  }
  if (object.object === "checkout.session") await syncCheckout(object.id);
  else if (object.object === "payment_intent") {
    const [payment] = await db.select().from(schema.payments).where(eq(schema.payments.paymentIntentId, object.id));
    if (payment) await syncCheckout(payment.checkoutSessionId);
  } else if (object.object === "account") await syncPayoutAccount(object.id);
  await db.update(schema.webhookEvents).set({ processedAt: new Date() }).where(eq(schema.webhookEvents.id, event.id));
  return { duplicate: false };
}

// ─── Payout accounts ───

/** The onboarding page for a lab's payout account, creating the connected account on first use. */
export async function payoutOnboardingUrl(labId: string, email: string) {
  const [lab] = await db.select().from(schema.labs).where(eq(schema.labs.organisationId, labId));
  if (!lab) throw new PaymentProblem("No such lab.", 404);
  let accountId = lab.payoutAccountId;
  try {
    if (!accountId) {
      const account = await provider().accounts.create(
        { type: "express", email, capabilities: { transfers: { requested: true } }, metadata: { labId } },
        { idempotencyKey: `payout-account:${labId}` },
      );
      accountId = account.id;
      await db.update(schema.labs).set({ payoutAccountId: accountId, updatedAt: new Date() }).where(eq(schema.labs.organisationId, labId));
    }
    const link = await provider().accountLinks.create({
      account: accountId,
      type: "account_onboarding",
      refresh_url: `${config.appUrl}/lab/payouts?onboarding=retry`,
      return_url: `${config.appUrl}/lab/payouts?onboarding=done`,
    });
    return link.url;
  } catch (err) {
    providerTrouble(err);
  }
}

/** Reads the connected account's flags from the provider into the lab row. */
export async function syncPayoutAccount(accountId: string) {
  let account: Stripe.Account;
  try {
    account = await provider().accounts.retrieve(accountId);
  } catch (err) {
    providerTrouble(err);
  }
  await db
    .update(schema.labs)
    .set({ payoutsEnabled: Boolean(account.payouts_enabled && account.charges_enabled), updatedAt: new Date() })
    .where(eq(schema.labs.payoutAccountId, accountId));
  return Boolean(account.payouts_enabled);
}

// ─── Releasing and refunding ───

async function transferToLab(order: Order, amountMinor: number, idempotencyKey: string) {
  const [lab] = await db.select().from(schema.labs).where(eq(schema.labs.organisationId, order.labId));
  if (!lab?.payoutAccountId || !lab.payoutsEnabled) {
    throw new PaymentProblem("The lab's payout account is not ready yet; the payout waits until it is.");
  }
  try {
    return await provider().transfers.create(
      { amount: amountMinor, currency: lower(order.currency), destination: lab.payoutAccountId, transfer_group: `order_${order.id}`, metadata: { orderId: order.id } },
      { idempotencyKey },
    );
  } catch (err) {
    providerTrouble(err);
  }
}

/** Pays an accepted order out: total minus the platform fee to the lab, the fee to the platform. */
export async function releasePayout(orderId: string) {
  const [order] = await db.select().from(schema.orders).where(eq(schema.orders.id, orderId));
  if (!order) throw new PaymentProblem("No such order.", 404);
  if (order.state === "paid_out") return order;
  if (order.state !== "accepted") throw new PaymentProblem("Only an accepted delivery is paid out.");
  const fee = platformFee(order.amountMinor, order.platformFeeBps);
  const transfer = await transferToLab(order, order.amountMinor - fee, `payout:${order.id}`);
  return db.transaction(async (tx) => {
    const locked = await lockOrder(tx, orderId);
    await postPayout(tx, locked, transfer.id, order.amountMinor - fee, fee, "Payout on accepted delivery");
    return locked.state === "accepted" ? moveOrder(tx, locked, "paid_out", "system", null, `Paid to the lab: ${order.amountMinor - fee} minor units after the platform fee of ${fee}.`) : locked;
  });
}

async function postPayout(tx: Tx, order: Order, transferId: string, payoutMinor: number, feeMinor: number, memo: string) {
  await postLedger(tx, {
    kind: "payout",
    orderId: order.id,
    currency: order.currency,
    providerObjectId: transferId,
    memo,
    entries: [
      { account: ACCOUNTS.held, amountMinor: payoutMinor },
      { account: ACCOUNTS.cash, amountMinor: -payoutMinor },
    ],
  });
  if (feeMinor > 0) {
    await postLedger(tx, {
      kind: "platform_fee",
      orderId: order.id,
      currency: order.currency,
      providerObjectId: `fee:${transferId}`,
      memo: `Platform fee (${order.platformFeeBps / 100} %)`,
      entries: [
        { account: ACCOUNTS.held, amountMinor: feeMinor },
        { account: ACCOUNTS.fees, amountMinor: -feeMinor },
      ],
    });
  }
}

/** Refunds part or all of what is held for an order, once per idempotency key. */
async function refund(order: Order, amountMinor: number, memo: string, idempotencyKey: string) {
  if (amountMinor <= 0) return null;
  const [payment] = await db.select().from(schema.payments).where(and(eq(schema.payments.orderId, order.id), eq(schema.payments.status, "paid")));
  if (!payment?.paymentIntentId) throw new PaymentProblem("There is no payment to refund for this order.");
  let refundObject: Stripe.Refund;
  try {
    refundObject = await provider().refunds.create({ payment_intent: payment.paymentIntentId, amount: amountMinor, metadata: { orderId: order.id } }, { idempotencyKey });
  } catch (err) {
    providerTrouble(err);
  }
  await db.transaction((tx) =>
    postLedger(tx, {
      kind: "refund",
      orderId: order.id,
      currency: order.currency,
      providerObjectId: refundObject.id,
      memo,
      entries: [
        { account: ACCOUNTS.held, amountMinor: amountMinor },
        { account: ACCOUNTS.cash, amountMinor: -amountMinor },
      ],
    }),
  );
  return refundObject;
}

async function refundHeld(order: Order, memo: string, key: string) {
  const held = await heldForOrder(db, order.id);
  return refund(order, held, memo, key);
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

/** The lab refuses a parcel that does not match its declaration: refund minus the handling fee, which goes to the lab. */
export async function refuseOnArrival(orderId: string, actorUserId: string, reason: string) {
  const order = await db.transaction(async (tx) => moveOrder(tx, await lockOrder(tx, orderId), "refused_on_arrival", "lab", actorUserId, reason));
  const held = await heldForOrder(db, orderId);
  const handling = Math.min(config.payments.refusalHandlingFeeMinor, held);
  await refund(order, held - handling, `Refund after refusal on arrival (handling fee ${handling} kept)`, `refund:${orderId}:refusal`);
  if (handling > 0) {
    const transfer = await transferToLab(order, handling, `payout:${orderId}:handling`);
    await db.transaction((tx) => postPayout(tx, order, transfer.id, handling, 0, "Handling fee for a parcel refused on arrival"));
  }
  return order;
}

/** What the client is told when the acceptance is recorded but the provider did not answer the payout. */
export const PAYOUT_DELAYED =
  "Delivery accepted. The payment provider is not answering just now, so the lab's payout has not gone out yet; it is sent automatically within minutes, once.";

/** The client accepts the delivered data (or the review window lapses): the lab is paid. */
export async function acceptDelivery(orderId: string, mover: "client" | "system", actorUserId: string | null) {
  await db.transaction(async (tx) => {
    const order = await lockOrder(tx, orderId);
    if (order.state === "accepted" || order.state === "paid_out") return;
    await moveOrder(tx, order, "accepted", mover, actorUserId, mover === "system" ? "The review window lapsed; delivery accepted automatically." : "Delivery accepted.");
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
    throw new PaymentProblem(`The refund must be a whole amount between 0 and the ${held} minor units held.`, 400);
  }
  const payoutPart = held - refundMinor;
  const fee = platformFee(payoutPart, order.platformFeeBps);
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
    if (locked.state === "disputed") await moveOrder(tx, locked, "resolved", "admin", admin.userId, `Refund ${refundMinor}, payout ${payoutPart - fee}, fee ${fee}. ${reason}`);
    await audit(
      { actorUserId: admin.userId, organisationId: order.clientOrganisationId, action: "dispute_resolved", subjectType: "order", subjectId: orderId, details: { refundMinor, payoutMinor: payoutPart - fee, feeMinor: fee, reason }, clientAddress: admin.clientAddress },
      tx,
    );
  });
}
