// Paying into holding by bank transfer (docs/design.md#bank-transfer): the provider's customer-balance funding
// instructions with a reference, what has arrived kept in step with the provider, the reminder before the pay-by
// date, the lapse after it, and money that is not needed (an excess, a lapsed part payment) sent back to the sender.
// Shapes: Stripe API reference — PaymentIntents with `payment_method_types: ["customer_balance"]` and
// `next_action.display_bank_transfer_instructions`; Customers "cash balance transactions"; Refunds with `origin`.
import { and, desc, eq, inArray, isNotNull, sql } from "drizzle-orm";
import type Stripe from "stripe";
import { db, schema } from "~/db/client.server";
import type { Order, Payment } from "~/db/schema";
import { formatMoney } from "~/domain/money";
import { holdFunds, lockOrder, moveOrder } from "~/models/orders/lifecycle.server";
import { notify } from "~/models/notifications/outbox.server";
import { PaymentProblem, paymentProvider as provider, providerTrouble, refundHeld } from "./provider.server";

/** The country of the bank account the provider gives for EU transfers (the platform's own, in euros). */
const TRANSFER_ACCOUNT_COUNTRY = "DE";
/** A SEPA credit transfer takes one to two business days; the client gets at least this long (common practice). */
export const TRANSFER_MIN_DAYS = 5;
/** The reminder goes out this many days before the pay-by date. */
export const TRANSFER_REMIND_DAYS = 3;
const DAY_MS = 86_400_000;

/** What the client needs to make the transfer, as stored on the payment row (no provider ids). */
export interface TransferInstructions {
  accountHolderName: string;
  iban: string;
  bic: string;
  reference: string;
  amountRemainingMinor: number;
  /** Money that arrived and went back to the sender (an excess, or a part payment of a lapsed order). */
  returnedMinor?: number;
}

const lower = (c: string) => c.toLowerCase();

function instructionsFrom(intent: Stripe.PaymentIntent, before: TransferInstructions | null): TransferInstructions | null {
  const shown = intent.next_action?.display_bank_transfer_instructions;
  const iban = shown?.financial_addresses?.find((a) => a.type === "iban")?.iban;
  if (!shown || !iban?.iban || !shown.reference) {
    return before ? { ...before, amountRemainingMinor: intent.status === "succeeded" ? 0 : before.amountRemainingMinor } : null;
  }
  return {
    ...before,
    accountHolderName: iban.account_holder_name ?? "",
    iban: iban.iban,
    bic: iban.bic ?? "",
    reference: shown.reference,
    amountRemainingMinor: shown.amount_remaining ?? intent.amount,
  };
}

const instructionsOf = (p: Payment) => (p.bankInstructions as TransferInstructions | null) ?? null;

/** The provider customer whose cash balance takes the organisation's transfers: one per client organisation. */
async function customerFor(organisationId: string) {
  const [known] = await db
    .select({ customerId: schema.payments.customerId })
    .from(schema.payments)
    .innerJoin(schema.orders, eq(schema.orders.id, schema.payments.orderId))
    .where(and(eq(schema.orders.clientOrganisationId, organisationId), isNotNull(schema.payments.customerId)))
    .limit(1);
  if (known?.customerId) return known.customerId;
  const [org] = await db.select().from(schema.organisations).where(eq(schema.organisations.id, organisationId));
  try {
    const customer = await provider().customers.create(
      { name: org?.legalName || org?.name || undefined, email: org?.invoiceEmail ?? undefined, metadata: { organisationId } },
      { idempotencyKey: `customer:${organisationId}` },
    );
    return customer.id;
  } catch (err) {
    providerTrouble(err);
  }
}

/**
 * Asks the provider for transfer instructions for an order awaiting payment. A second click returns the
 * transfer already started (the order row is locked meanwhile, so concurrent clicks share one).
 */
export async function startBankTransfer(orderId: string, actor: { userId: string }) {
  const [first] = await db.select().from(schema.orders).where(eq(schema.orders.id, orderId));
  if (!first) throw new PaymentProblem("No such order.", 404);
  if (first.currency.toUpperCase() !== "EUR") throw new PaymentProblem("Bank transfer is offered for quotes in euros; please pay this order by card.");
  const customerId = await customerFor(first.clientOrganisationId);
  await settleWaitingCash(customerId);
  return db.transaction(async (tx) => {
    const order = await lockOrder(tx, orderId);
    if (order.state !== "awaiting_payment") throw new PaymentProblem("This order is already paid or closed.");
    const [open] = await tx
      .select()
      .from(schema.payments)
      .where(and(eq(schema.payments.orderId, orderId), eq(schema.payments.method, "bank_transfer"), eq(schema.payments.status, "open")))
      .limit(1);
    if (open) return open;
    const [{ n }] = await tx.select({ n: sql<number>`count(*)::int` }).from(schema.payments).where(eq(schema.payments.orderId, orderId));
    let intent: Stripe.PaymentIntent;
    try {
      intent = await provider().paymentIntents.create(
        {
          amount: order.amountMinor,
          currency: lower(order.currency),
          customer: customerId,
          // The SDK's API version names the list `allowed_payment_method_types` (earlier ones: `payment_method_types`).
          allowed_payment_method_types: ["customer_balance"],
          payment_method_data: { type: "customer_balance" },
          payment_method_options: {
            customer_balance: {
              funding_type: "bank_transfer",
              bank_transfer: { type: "eu_bank_transfer", eu_bank_transfer: { country: TRANSFER_ACCOUNT_COUNTRY } },
            },
          },
          confirm: true,
          description: `Order ${order.number}`,
          metadata: { orderId: order.id },
          transfer_group: `order_${order.id}`,
        },
        { idempotencyKey: `transfer:${order.id}:${n}` },
      );
    } catch (err) {
      providerTrouble(err);
    }
    const instructions = instructionsFrom(intent, null);
    if (!instructions) throw new PaymentProblem("The payment provider gave no bank details for the transfer.", 502);
    const [row] = await tx
      .insert(schema.payments)
      .values({
        orderId: order.id,
        method: "bank_transfer",
        paymentIntentId: intent.id,
        customerId,
        amountMinor: order.amountMinor,
        currency: order.currency,
        bankInstructions: instructions as unknown as Record<string, unknown>,
        createdBy: actor.userId,
      })
      .returning();
    return row;
  });
}

/**
 * Money on the organisation's cash balance when a new transfer starts belongs to earlier transfers whose events
 * have not been handled yet (an excess, a late transfer): confirming the new payment would apply it there, so
 * those transfers are brought up to date first and the money goes back to its sender as their own.
 */
async function settleWaitingCash(customerId: string) {
  let waiting = false;
  try {
    const balance = await provider().customers.retrieveCashBalance(customerId);
    waiting = Object.values(balance.available ?? {}).some((v) => v > 0);
  } catch (err) {
    providerTrouble(err);
  }
  if (!waiting) return;
  const earlier = await db
    .select({ id: schema.payments.id })
    .from(schema.payments)
    .where(and(eq(schema.payments.customerId, customerId), eq(schema.payments.method, "bank_transfer")));
  for (const p of earlier) await syncTransfer(p.id);
}

/** Every cash-balance transaction of a customer (the provider lists them newest first, in pages). */
async function cashTransactions(customerId: string) {
  const all: Stripe.CustomerCashBalanceTransaction[] = [];
  for await (const t of provider().customers.listCashBalanceTransactions(customerId, { limit: 100 })) all.push(t);
  return all;
}

const sameReference = (a: string | null | undefined, b: string) => (a ?? "").trim().toUpperCase() === b.toUpperCase();

/**
 * Brings a transfer payment to the provider's truth: paid in full → funds held (as a card payment); paid in
 * part → what arrived is shown; once the payment intent is settled (paid or cancelled), anything that arrived
 * with its reference beyond what the order keeps is sent back to the sender. Safe to repeat, in any order.
 */
export async function syncTransfer(paymentId: string) {
  const [payment] = await db.select().from(schema.payments).where(eq(schema.payments.id, paymentId));
  if (!payment?.paymentIntentId || payment.method !== "bank_transfer") return { state: "unknown" as const };
  let intent: Stripe.PaymentIntent;
  try {
    intent = await provider().paymentIntents.retrieve(payment.paymentIntentId);
  } catch (err) {
    providerTrouble(err);
  }
  const before = instructionsOf(payment);
  const instructions = instructionsFrom(intent, before);
  const received =
    intent.status === "succeeded"
      ? intent.amount_received
      : intent.status === "canceled"
        ? payment.receivedMinor
        : intent.amount - (instructions?.amountRemainingMinor ?? intent.amount);
  await db.transaction(async (tx) => {
    // Webhooks arrive twice and out of order: what is written never goes back behind what another sync wrote
    // (money only arrives, the amount remaining only falls) and the returns recorded meanwhile are kept.
    const [now] = await tx.select().from(schema.payments).where(eq(schema.payments.id, payment.id)).for("update");
    const current = instructionsOf(now);
    const merged = instructions && {
      ...instructions,
      amountRemainingMinor: Math.min(instructions.amountRemainingMinor, current?.amountRemainingMinor ?? instructions.amountRemainingMinor),
      returnedMinor: current?.returnedMinor,
    };
    await tx
      .update(schema.payments)
      .set({ receivedMinor: Math.max(received, now.receivedMinor), bankInstructions: merged as unknown as Record<string, unknown>, updatedAt: new Date() })
      .where(eq(schema.payments.id, payment.id));
  });
  if (intent.status === "succeeded" && payment.status !== "paid" && (await orderPaidOtherwise(payment))) {
    // The order was paid another way (by card) before the transfer completed: the transfer's money is not needed.
    try {
      await provider().refunds.create(
        { payment_intent: intent.id, metadata: { orderId: payment.orderId } },
        { idempotencyKey: `transfer-surplus:${payment.id}` },
      );
    } catch (err) {
      providerTrouble(err);
    }
    await db.update(schema.payments).set({ status: "expired", updatedAt: new Date() }).where(eq(schema.payments.id, payment.id));
    await returnUnneeded(payment, 0, instructions);
    return { state: "closed" as const, receivedMinor: received };
  }
  if (intent.status === "succeeded") {
    const chargeId = typeof intent.latest_charge === "string" ? intent.latest_charge : (intent.latest_charge?.id ?? intent.id);
    await holdFunds(payment.orderId, { paymentId: payment.id, paymentIntentId: intent.id, chargeId, amountMinor: intent.amount_received });
    // A transfer that completes after the order was closed goes straight back, as a late card payment does.
    const [after] = await db.select().from(schema.orders).where(eq(schema.orders.id, payment.orderId));
    if (after.state === "cancelled") await refundHeld(after, "Paid by bank transfer after the order was closed", `refund:${after.id}:late-transfer`);
  }
  if (intent.status === "succeeded" || intent.status === "canceled")
    await returnUnneeded(payment, intent.status === "succeeded" ? intent.amount_received : 0, instructions);
  return {
    state: intent.status === "succeeded" ? ("paid" as const) : intent.status === "canceled" ? ("closed" as const) : ("open" as const),
    receivedMinor: received,
  };
}

/** Whether another payment of the order (a card payment) was taken while this transfer was open. */
async function orderPaidOtherwise(payment: Payment) {
  const [other] = await db
    .select({ id: schema.payments.id })
    .from(schema.payments)
    .where(and(eq(schema.payments.orderId, payment.orderId), eq(schema.payments.status, "paid"), sql`${schema.payments.id} <> ${payment.id}`))
    .limit(1);
  return Boolean(other);
}

/** Sends back what arrived with the payment's reference and the order does not keep, once per amount arrived. */
async function returnUnneeded(payment: Payment, kept: number, instructions: TransferInstructions | null) {
  if (!instructions || !payment.customerId) return;
  let arrived = 0;
  let available = 0;
  try {
    const txns = await cashTransactions(payment.customerId);
    for (const t of txns) {
      if (t.type === "funded" && t.currency === lower(payment.currency) && sameReference(t.funded?.bank_transfer.reference, instructions.reference))
        arrived += t.net_amount;
    }
    const balance = await provider().customers.retrieveCashBalance(payment.customerId);
    available = balance.available?.[lower(payment.currency)] ?? 0;
  } catch (err) {
    providerTrouble(err);
  }
  // What was sent back already, as recorded now (another sync may have recorded a return since `instructions` was read).
  const [fresh] = await db.select().from(schema.payments).where(eq(schema.payments.id, payment.id));
  const returned = instructionsOf(fresh)?.returnedMinor ?? 0;
  const owed = Math.min(arrived - kept - returned, available);
  if (owed <= 0) return;
  try {
    await provider().refunds.create(
      { customer: payment.customerId, origin: "customer_balance", amount: owed, currency: lower(payment.currency), metadata: { orderId: payment.orderId } },
      { idempotencyKey: `transfer-return:${payment.id}:${arrived}` },
    );
  } catch (err) {
    providerTrouble(err);
  }
  await db.transaction(async (tx) => {
    const order = await lockOrder(tx, payment.orderId);
    const [now] = await tx.select().from(schema.payments).where(eq(schema.payments.id, payment.id)).for("update");
    const current = instructionsOf(now) ?? instructions;
    // Another sync may have recorded the same return (the provider answered both from one idempotency key).
    if ((current.returnedMinor ?? 0) >= returned + owed) return;
    await tx
      .update(schema.payments)
      .set({ bankInstructions: { ...current, returnedMinor: returned + owed } as unknown as Record<string, unknown>, updatedAt: new Date() })
      .where(eq(schema.payments.id, payment.id));
    const why = kept > 0 ? "more than the order total arrived by bank transfer" : "the order did not need this bank transfer";
    await tx.insert(schema.orderEvents).values({
      orderId: order.id,
      fromState: order.state,
      toState: order.state,
      note: `${formatMoney(owed, payment.currency)} sent back to the sender's bank account: ${why}.`,
    });
  });
}

/** A provider event about a customer's cash balance: the payment it concerns is brought up to date. */
export async function syncCashBalanceTransaction(customerId: string, transactionId: string) {
  let txn: Stripe.CustomerCashBalanceTransaction;
  try {
    txn = await provider().customers.retrieveCashBalanceTransaction(customerId, transactionId);
  } catch (err) {
    providerTrouble(err);
  }
  const piOf = (x: { payment_intent: string | Stripe.PaymentIntent } | undefined) =>
    x ? (typeof x.payment_intent === "string" ? x.payment_intent : x.payment_intent.id) : null;
  const intentId = piOf(txn.applied_to_payment) ?? piOf(txn.unapplied_from_payment);
  let payment: Payment | undefined;
  if (intentId) [payment] = await db.select().from(schema.payments).where(eq(schema.payments.paymentIntentId, intentId));
  const reference = txn.funded?.bank_transfer.reference;
  if (!payment && reference) {
    [payment] = await db
      .select()
      .from(schema.payments)
      .where(
        and(
          eq(schema.payments.customerId, customerId),
          eq(schema.payments.method, "bank_transfer"),
          sql`upper(trim(${schema.payments.bankInstructions}->>'reference')) = ${reference.trim().toUpperCase()}`,
        ),
      )
      .orderBy(desc(schema.payments.createdAt))
      .limit(1);
  }
  return payment ? syncTransfer(payment.id) : { state: "unknown" as const };
}

/** When the transfer must have arrived: the quote's validity, but never sooner than TRANSFER_MIN_DAYS after it was started. */
export function payByOf(validUntil: Date, startedAt: Date) {
  return new Date(Math.max(validUntil.getTime(), startedAt.getTime() + TRANSFER_MIN_DAYS * DAY_MS));
}

/** Open transfer payments with their order and the quote's validity. */
async function openTransfers() {
  return db
    .select({ payment: schema.payments, order: schema.orders, validUntil: schema.quotes.validUntil })
    .from(schema.payments)
    .innerJoin(schema.orders, eq(schema.orders.id, schema.payments.orderId))
    .innerJoin(schema.quotes, eq(schema.quotes.id, schema.orders.quoteId))
    .where(and(eq(schema.payments.method, "bank_transfer"), eq(schema.payments.status, "open")));
}

/**
 * Closes a transfer the order no longer waits for: the payment intent is cancelled (what it had taken goes back
 * to the cash balance and from there to the sender). If the money completed it first, it is paid instead.
 */
async function closeTransfer(payment: Payment): Promise<"paid" | "closed"> {
  try {
    const intent = await provider().paymentIntents.retrieve(payment.paymentIntentId!);
    if (intent.status === "succeeded") {
      await syncTransfer(payment.id);
      return "paid";
    }
    if (intent.status !== "canceled") await provider().paymentIntents.cancel(intent.id, {}, { idempotencyKey: `transfer-cancel:${payment.id}` });
  } catch (err) {
    // The money may have completed the payment between the read and the cancellation.
    const again = await provider()
      .paymentIntents.retrieve(payment.paymentIntentId!)
      .catch(() => null);
    if (again?.status === "succeeded") {
      await syncTransfer(payment.id);
      return "paid";
    }
    if (again?.status !== "canceled") providerTrouble(err);
  }
  await db.update(schema.payments).set({ status: "expired", updatedAt: new Date() }).where(eq(schema.payments.id, payment.id));
  await syncTransfer(payment.id);
  return "closed";
}

/**
 * The order lapses when its transfer has not arrived in full by the pay-by date: the payment is closed (any part
 * payment goes back) and the order is cancelled by the platform. Nothing stays held.
 */
async function lapse(payment: Payment, order: Order) {
  if ((await closeTransfer(payment)) === "paid") return false;
  await db.transaction(async (tx) => {
    const locked = await lockOrder(tx, order.id);
    if (locked.state !== "awaiting_payment") return;
    await moveOrder(
      tx,
      locked,
      "cancelled",
      "system",
      null,
      "The bank transfer did not arrive in full before the quote's validity ended, so the order lapsed.",
    );
  });
  return true;
}

/** The transfer reminder: sent once, TRANSFER_REMIND_DAYS before the pay-by date, while the money is not all there. */
async function remind(payment: Payment, order: Order, payBy: Date) {
  return db.transaction(async (tx) => {
    const locked = await lockOrder(tx, order.id);
    const [row] = await tx.select().from(schema.payments).where(eq(schema.payments.id, payment.id)).for("update");
    if (locked.state !== "awaiting_payment" || row.status !== "open" || row.remindedAt) return false;
    const i = instructionsOf(row);
    const remaining = formatMoney(i?.amountRemainingMinor ?? row.amountMinor - row.receivedMinor, row.currency);
    const day = payBy.toLocaleDateString("en-GB", { day: "numeric", month: "long", year: "numeric", timeZone: "UTC" });
    const note = i
      ? `Still to transfer: ${remaining}, to ${i.accountHolderName}, IBAN ${i.iban}, BIC ${i.bic}, with the reference ${i.reference}, to arrive by ${day}.`
      : `Still to transfer: ${remaining}, to arrive by ${day}.`;
    await notify(tx, { kind: "transfer_reminder", order: locked, note });
    await tx.update(schema.payments).set({ remindedAt: new Date(), updatedAt: new Date() }).where(eq(schema.payments.id, payment.id));
    return true;
  });
}

/**
 * The periodic sweep of open transfers (the job worker's schedule): reminds before the pay-by date, lapses the
 * order after it, and closes transfers whose order was paid by card or cancelled meanwhile.
 */
export async function sweepBankTransfers(now = new Date()) {
  const counts = { reminded: 0, lapsed: 0, closed: 0 };
  for (const { payment, order, validUntil } of await openTransfers()) {
    try {
      if (order.state !== "awaiting_payment") {
        await closeTransfer(payment);
        counts.closed++;
        continue;
      }
      const payBy = payByOf(validUntil, payment.createdAt);
      if (payBy.getTime() <= now.getTime()) {
        if (await lapse(payment, order)) counts.lapsed++;
      } else if (payBy.getTime() - TRANSFER_REMIND_DAYS * DAY_MS <= now.getTime() && !payment.remindedAt) {
        if (await remind(payment, order, payBy)) counts.reminded++;
      }
    } catch (err) {
      if (!(err instanceof PaymentProblem)) throw err;
      console.warn(`bank transfers: order ${order.number} not swept yet: ${err.message}`);
    }
  }
  return counts;
}

/** Closes an order's open transfer right away (the client cancelled the order, or paid it by card). */
export async function closeOpenTransfers(orderId: string) {
  const open = await db
    .select()
    .from(schema.payments)
    .where(and(eq(schema.payments.orderId, orderId), eq(schema.payments.method, "bank_transfer"), eq(schema.payments.status, "open")));
  for (const p of open) await closeTransfer(p);
}

/** What the client's order page shows of a bank transfer: bank details, reference, amounts and the pay-by date. */
export async function transferViewOf(orderId: string) {
  const [row] = await db
    .select({ payment: schema.payments, validUntil: schema.quotes.validUntil })
    .from(schema.payments)
    .innerJoin(schema.orders, eq(schema.orders.id, schema.payments.orderId))
    .innerJoin(schema.quotes, eq(schema.quotes.id, schema.orders.quoteId))
    .where(and(eq(schema.payments.orderId, orderId), eq(schema.payments.method, "bank_transfer"), inArray(schema.payments.status, ["open", "paid", "expired"])))
    .orderBy(desc(schema.payments.createdAt))
    .limit(1);
  if (!row) return null;
  const p = row.payment;
  const i = instructionsOf(p);
  return {
    status: p.status,
    accountHolderName: i?.accountHolderName ?? "",
    iban: i?.iban ?? "",
    bic: i?.bic ?? "",
    reference: i?.reference ?? "",
    amountMinor: p.amountMinor,
    currency: p.currency,
    receivedMinor: p.receivedMinor,
    remainingMinor: p.status === "paid" ? 0 : (i?.amountRemainingMinor ?? p.amountMinor - p.receivedMinor),
    returnedMinor: i?.returnedMinor ?? 0,
    payBy: payByOf(row.validUntil, p.createdAt).toISOString(),
  };
}

export type TransferView = NonNullable<Awaited<ReturnType<typeof transferViewOf>>>;
