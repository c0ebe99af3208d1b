// Payment provider webhooks: verified by signature, stored by event id, and the object they name re-read.
import { eq } from "drizzle-orm";
import type Stripe from "stripe";
import { config } from "~/config.server";
import { db, schema } from "~/db/client.server";
import { hasNul, NUL_REFUSAL } from "~/utils/form.server";
import { syncCheckout } from "./checkout.server";
import { syncCashBalanceTransaction, syncTransfer } from "./bank-transfer.server";
import { paymentProvider as provider, syncPayoutAccount } from "./provider.server";

/** A provider event that is refused (400): the provider shows the sentence in its delivery log. */
export class BadWebhook extends Error {}
export class BadSignature extends BadWebhook {}

/** The provider objects whose events Diffractory acts on; events about anything else are acknowledged and ignored. */
const HANDLED_OBJECTS = new Set(["checkout.session", "payment_intent", "account", "customer_cash_balance_transaction"]);

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
  if (
    typeof event.id !== "string" ||
    !event.id ||
    event.id.length > 255 ||
    typeof event.type !== "string" ||
    !data?.object ||
    typeof data.object !== "object"
  ) {
    throw new BadWebhook("The event has no id, type or data object.");
  }
  if (hasNul(event)) throw new BadWebhook(NUL_REFUSAL);
  await db
    .insert(schema.webhookEvents)
    .values({ id: event.id, type: event.type, payload: event as unknown as Record<string, unknown> })
    .onConflictDoNothing();
  const [stored] = await db.select().from(schema.webhookEvents).where(eq(schema.webhookEvents.id, event.id));
  // Same id, other content: a replay with a changed body is refused. (jsonb reorders keys, so compare canonically.)
  if (canonicalJson(stored.payload) !== canonicalJson(event)) throw new BadSignature("An event with this id but other content was already received.");
  if (stored.processedAt) return { duplicate: true };
  const object = event.data.object as { id: string; object: string; metadata?: Record<string, string>; customer?: unknown };
  if (!HANDLED_OBJECTS.has(object.object) || typeof object.id !== "string") {
    await db.update(schema.webhookEvents).set({ processedAt: new Date() }).where(eq(schema.webhookEvents.id, event.id));
    return { duplicate: false, ignored: `Event type ${event.type.slice(0, 100)} is not used by Diffractory.` };
  }
  if (object.object === "checkout.session") await syncCheckout(object.id);
  else if (object.object === "payment_intent") {
    const [payment] = await db.select().from(schema.payments).where(eq(schema.payments.paymentIntentId, object.id));
    if (payment?.checkoutSessionId) await syncCheckout(payment.checkoutSessionId);
    else if (payment?.method === "bank_transfer") await syncTransfer(payment.id);
  } else if (object.object === "customer_cash_balance_transaction") {
    // Money in or out of a customer's cash balance (a bank transfer arriving, applied, or sent back).
    if (typeof object.customer === "string") await syncCashBalanceTransaction(object.customer, object.id);
  } else if (object.object === "account") await syncPayoutAccount(object.id);
  await db.update(schema.webhookEvents).set({ processedAt: new Date() }).where(eq(schema.webhookEvents.id, event.id));
  return { duplicate: false };
}
