// Paying into holding: the provider's checkout page for an order, and bringing a checkout to the provider's truth.
import { and, count, desc, eq } from "drizzle-orm";
import type Stripe from "stripe";
import { config } from "~/config.server";
import { db, schema } from "~/db/client.server";
import { holdFunds, lockOrder } from "~/models/orders/lifecycle.server";
import { PaymentProblem, paymentProvider as provider, providerTrouble, refundHeld } from "./provider.server";

const lower = (c: string) => c.toLowerCase();

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
    .where(and(eq(schema.payments.orderId, orderId), eq(schema.payments.status, "open"), eq(schema.payments.method, "card")))
    .orderBy(desc(schema.payments.createdAt))
    .limit(1);
  if (open?.checkoutSessionId) {
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
  const [request] = await db.select({ title: schema.requests.title }).from(schema.requests).where(eq(schema.requests.id, order.requestId));
  // The order row is locked from here to the new payment row, so a concurrent click finds this checkout open
  // instead of counting the same attempts differently and opening a second one.
  return db.transaction(async (tx) => {
    const locked = await lockOrder(tx, orderId);
    if (locked.state !== "awaiting_payment") throw new PaymentProblem("This order is already paid or closed.");
    const [raced] = await tx
      .select()
      .from(schema.payments)
      .where(and(eq(schema.payments.orderId, orderId), eq(schema.payments.status, "open"), eq(schema.payments.method, "card")))
      .orderBy(desc(schema.payments.createdAt))
      .limit(1);
    if (raced?.checkoutSessionId && raced.id !== open?.id) {
      try {
        const session = await provider().checkout.sessions.retrieve(raced.checkoutSessionId);
        if (session.status === "open" && session.url) return session.url;
        // Paid already: its own return page (or webhook) holds the money once this lock is released.
        if (session.status === "complete") throw new PaymentProblem("This order has just been paid.");
      } catch (err) {
        if (err instanceof PaymentProblem) throw err;
        providerTrouble(err);
      }
    }
    const [{ n }] = await tx.select({ n: count() }).from(schema.payments).where(eq(schema.payments.orderId, orderId));
    let session: Stripe.Checkout.Session;
    try {
      session = await provider().checkout.sessions.create(
        {
          mode: "payment",
          customer_email: actor.email,
          client_reference_id: order.id,
          line_items: [
            {
              quantity: 1,
              price_data: {
                currency: lower(order.currency),
                unit_amount: order.amountMinor,
                product_data: { name: `Order ${order.number}: ${request?.title ?? "diffraction measurements"}` },
              },
            },
          ],
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
    await tx
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
  });
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
    await holdFunds(orderId, { paymentId: payment.id, paymentIntentId: intent.id, chargeId, amountMinor: intent.amount_received });
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
