// The payment provider's SDK calls that move money: payout accounts, transfers to labs, refunds, and their ledger postings.
// Order moves that cause them live in app/models/orders/lifecycle.server.ts; checkout and webhooks beside this file.
import { and, eq, sql } from "drizzle-orm";
import type Stripe from "stripe";
import { config } from "~/config.server";
import { db, schema } from "~/db/client.server";
import type { Order } from "~/db/schema";
import { services } from "~/utils/services.server";
import { ACCOUNTS, heldForOrder, postLedger } from "~/models/payments/ledger.server";
import type { Tx } from "~/db/client.server";
import { issueCreditNoteTx } from "~/models/invoices/invoices.server";

/** The provider client (the official SDK, pointed at the local fake outside production). */
export const paymentProvider = () => services.payments;
const provider = paymentProvider;
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
export function providerTrouble(err: unknown): never {
  const e = err as { type?: string; message?: string };
  if (e.type === "StripeConnectionError" || e.type === "StripeAPIError" || e.type === "StripeRateLimitError") {
    throw new PaymentProblem("The payment provider is not answering right now. Nothing was charged or changed; please try again in a minute.", 503);
  }
  throw new PaymentProblem(e.message ?? "The payment provider refused the request.", 502);
}

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

/** Sends part of what is held to the lab's connected account, once per idempotency key. */
export async function transferToLab(order: Order, amountMinor: number, idempotencyKey: string) {
  const [lab] = await db.select().from(schema.labs).where(eq(schema.labs.organisationId, order.labId));
  if (!lab?.payoutAccountId || !lab.payoutsEnabled) {
    throw new PaymentProblem("The lab's payout account is not ready yet; the payout waits until it is.");
  }
  try {
    return await provider().transfers.create(
      {
        amount: amountMinor,
        currency: lower(order.currency),
        destination: lab.payoutAccountId,
        transfer_group: `order_${order.id}`,
        metadata: { orderId: order.id },
      },
      { idempotencyKey },
    );
  } catch (err) {
    providerTrouble(err);
  }
}

/** Posts a payout (and the platform fee kept from it) to the ledger. */
export async function postPayout(tx: Tx, order: Order, transferId: string, payoutMinor: number, feeMinor: number, memo: string) {
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
export async function refund(order: Order, amountMinor: number, memo: string, idempotencyKey: string) {
  if (amountMinor <= 0) return null;
  const [payment] = await db
    .select()
    .from(schema.payments)
    .where(and(eq(schema.payments.orderId, order.id), eq(schema.payments.status, "paid")));
  if (!payment?.paymentIntentId) throw new PaymentProblem("There is no payment to refund for this order.");
  let refundObject: Stripe.Refund;
  try {
    refundObject = await provider().refunds.create(
      { payment_intent: payment.paymentIntentId, amount: amountMinor, metadata: { orderId: order.id } },
      { idempotencyKey },
    );
    // A bank-transfer payment's refund lands in the customer's cash balance; from there it goes on to the sender's bank.
    if (payment.method === "bank_transfer" && payment.customerId) {
      await provider().refunds.create(
        { customer: payment.customerId, origin: "customer_balance", amount: amountMinor, currency: lower(order.currency), metadata: { orderId: order.id } },
        { idempotencyKey: `${idempotencyKey}:to-bank` },
      );
    }
  } catch (err) {
    providerTrouble(err);
  }
  await db.transaction(async (tx) => {
    await postLedger(tx, {
      kind: "refund",
      orderId: order.id,
      currency: order.currency,
      providerObjectId: refundObject.id,
      memo,
      entries: [
        { account: ACCOUNTS.held, amountMinor: amountMinor },
        { account: ACCOUNTS.cash, amountMinor: -amountMinor },
      ],
    });
    // Its credit note, once per refund, referring to the order's invoice (docs/design.md#invoices).
    await issueCreditNoteTx(tx, order.id, { id: refundObject.id, amountMinor, reason: memo });
  });
  return refundObject;
}

/** Refunds everything still held for an order. */
export async function refundHeld(order: Order, memo: string, key: string) {
  // Two refunds of everything held can start at once (a cancellation and a payment that lands just after it):
  // a lock per order, held until the first refund is posted, makes the second read what is left, which is 0.
  return db.transaction(async (tx) => {
    await tx.execute(sql`select pg_advisory_xact_lock(hashtext(${`refund-held:${order.id}`}))`);
    const held = await heldForOrder(tx, order.id);
    return refund(order, held, memo, key);
  });
}
