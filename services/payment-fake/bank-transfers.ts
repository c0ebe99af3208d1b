// Bank transfers through a customer's cash balance, shaped as the provider's API reference describes them
// (Stripe API reference: "Customer balance" payment method, PaymentIntent `next_action.display_bank_transfer_instructions`,
// "Cash balance transactions", "Fund a test mode cash balance" test helper, "Create a refund" with `origin`):
// a PaymentIntent confirmed with `customer_balance` waits in `requires_action` with funding instructions and a
// reference; money that arrives with the reference is applied to it (partly or in full), the rest stays in the
// customer's cash balance; cancelling returns what was applied; a refund with `origin: customer_balance` sends
// cash-balance money back to the sender.
import { createHash } from "node:crypto";
import { type Body, arrayOf, currencyOf, formatAmount, invalid, metadataOf, noSuch, now, paramError, positiveInt, requireStr, str } from "./api";
import { type Ctx, balanceTransaction, createPaymentIntent } from "./payments";
import type { ProviderObject } from "./state";

/** The countries the provider offers EU bank transfers for (Stripe docs, "Bank transfers" — EU). */
const EU_COUNTRIES = new Set(["BE", "DE", "ES", "FR", "IE", "NL"]);

const cashKey = (customer: string) => `cash:${customer}`;

function cashOf(ctx: Ctx, customer: string): Record<string, number> {
  return { ...(ctx.state.getInternal<Record<string, number>>(cashKey(customer)) ?? {}) };
}

/** The customer's cash balance object (Stripe API reference, "The Cash balance object"). */
export function cashBalanceObject(ctx: Ctx, customer: string) {
  customerOrThrow(ctx, customer);
  return {
    object: "cash_balance",
    available: cashOf(ctx, customer),
    customer,
    customer_account: null,
    livemode: false,
    settings: { reconciliation_mode: "automatic", using_merchant_default: true },
  };
}

function customerOrThrow(ctx: Ctx, id: string) {
  const c = ctx.state.get(id, "customer");
  if (!c) throw noSuch("customer", id, "customer");
  return c;
}

/** A deterministic test IBAN per customer and country, with valid ISO 13616 check digits. */
export function virtualIban(customer: string, country: string) {
  const digits = BigInt(`0x${createHash("sha256").update(`${customer}:${country}`).digest("hex").slice(0, 14)}`)
    .toString()
    .padStart(18, "0")
    .slice(0, 18);
  const bban = `FAKE${digits}`;
  const numeric = `${bban}${country}00`.replace(/[A-Z]/g, (ch) => String(ch.charCodeAt(0) - 55));
  const check = String(98n - (BigInt(numeric) % 97n)).padStart(2, "0");
  return `${country}${check}${bban}`;
}

/** A reference of the kind the provider prints for a payment: letters and digits, no ambiguous characters. */
function newReference(ctx: Ctx) {
  const alphabet = "ABCDEFGHJKLMNPQRSTUVWXYZ23456789";
  const seed = createHash("sha256").update(ctx.state.newId("ref")).digest();
  return Array.from(seed.subarray(0, 12), (b) => alphabet[b % alphabet.length]).join("");
}

function cashTransaction(ctx: Ctx, customer: string, currency: string, net: number, type: string, detail: Record<string, unknown>) {
  const balance = cashOf(ctx, customer);
  balance[currency] = (balance[currency] ?? 0) + net;
  ctx.state.setInternal(cashKey(customer), balance);
  const txn = ctx.state.put({
    id: ctx.state.newId("ccsbtxn"),
    object: "customer_cash_balance_transaction",
    created: now(),
    currency,
    customer,
    customer_account: null,
    ending_balance: balance[currency],
    livemode: false,
    net_amount: net,
    type,
    [type]: detail,
  });
  ctx.hooks.emit("customer_cash_balance_transaction.created", txn);
  return txn;
}

/** Whether a `POST /v1/payment_intents` asks for a bank transfer (`customer_balance`). */
export const asksForBankTransfer = (body: Body) =>
  [...arrayOf(body.payment_method_types), ...arrayOf(body.allowed_payment_method_types)].includes("customer_balance");

/** `POST /v1/payment_intents` with `payment_method_types: ["customer_balance"]`. */
export function createBankTransferIntent(ctx: Ctx, body: Body) {
  // `allowed_payment_method_types` in the SDK's current API version, `payment_method_types` in earlier ones.
  const param = body.allowed_payment_method_types !== undefined ? "allowed_payment_method_types" : "payment_method_types";
  const types = arrayOf(body[param]).map(String);
  if (types.length !== 1 || types[0] !== "customer_balance") {
    throw paramError(param, "This local test fake combines `customer_balance` with no other payment method type.");
  }
  const customer = requireStr(body, "customer");
  customerOrThrow(ctx, customer);
  const options = ((body.payment_method_options as Body | undefined)?.customer_balance ?? {}) as Body;
  const bank = (options.bank_transfer ?? {}) as Body;
  if (str(options, "funding_type") !== "bank_transfer") throw paramError("payment_method_options[customer_balance][funding_type]", "Must be `bank_transfer`.");
  if (str(bank, "type") !== "eu_bank_transfer") {
    throw paramError("payment_method_options[customer_balance][bank_transfer][type]", "This local test fake offers `eu_bank_transfer` only.");
  }
  const country = String(((bank.eu_bank_transfer ?? {}) as Body).country ?? "").toUpperCase();
  if (!EU_COUNTRIES.has(country)) {
    throw paramError(
      "payment_method_options[customer_balance][bank_transfer][eu_bank_transfer][country]",
      `Country must be one of ${[...EU_COUNTRIES].join(", ")}.`,
    );
  }
  const currency = currencyOf(body.currency);
  if (currency !== "eur") throw paramError("currency", "EU bank transfers are in EUR only.");
  const pi = createPaymentIntent(ctx, {
    amount: positiveInt(body.amount, "amount"),
    currency,
    customer,
    description: str(body, "description"),
    metadata: metadataOf(body),
    transfer_group: str(body, "transfer_group"),
    receipt_email: str(body, "receipt_email"),
  });
  const pm = ctx.state.put({
    id: ctx.state.newId("pm"),
    object: "payment_method",
    allow_redisplay: "unspecified",
    billing_details: { address: null, email: null, name: null, phone: null },
    created: now(),
    customer,
    customer_balance: {},
    livemode: false,
    metadata: {},
    type: "customer_balance",
  });
  Object.assign(pi, {
    allowed_payment_method_types: ["customer_balance"],
    payment_method_types: ["customer_balance"],
    payment_method: pm.id,
    payment_method_options: {
      customer_balance: {
        bank_transfer: { eu_bank_transfer: { country }, requested_address_types: ["iban"], type: "eu_bank_transfer" },
        funding_type: "bank_transfer",
      },
    },
  });
  ctx.state.setInternal(`reference:${pi.id}`, newReference(ctx));
  ctx.state.put(pi);
  const confirm = body.confirm === true || body.confirm === "true";
  if (confirm) confirmBankTransfer(ctx, pi);
  return pi;
}

/** Confirming asks for the transfer: the instructions go into `next_action`, and cash already there is applied. */
function confirmBankTransfer(ctx: Ctx, pi: ProviderObject) {
  Object.assign(pi, { status: "requires_action", next_action: instructions(ctx, pi, Number(pi.amount)) });
  ctx.state.put(pi);
  ctx.hooks.emit("payment_intent.requires_action", pi);
  applyCash(ctx, pi);
}

function instructions(ctx: Ctx, pi: ProviderObject, remaining: number) {
  const country = String(
    ((pi.payment_method_options as Body).customer_balance as { bank_transfer: { eu_bank_transfer: { country: string } } }).bank_transfer.eu_bank_transfer
      .country,
  );
  const reference = ctx.state.getInternal<string>(`reference:${pi.id}`)!;
  return {
    type: "display_bank_transfer_instructions",
    display_bank_transfer_instructions: {
      amount_remaining: remaining,
      currency: pi.currency,
      financial_addresses: [
        {
          iban: {
            account_holder_address: { city: "Berlin", country: "DE", line1: "Teststraße 1", line2: null, postal_code: "10115", state: null },
            account_holder_name: "Local Payment Fake Test Account",
            bank_address: { city: "Berlin", country: "DE", line1: "Testbank-Allee 2", line2: null, postal_code: "10117", state: null },
            bic: "FAKEDEB1XXX",
            country,
            iban: virtualIban(String(pi.customer), country),
          },
          supported_networks: ["sepa"],
          type: "iban",
        },
      ],
      hosted_instructions_url: `${ctx.baseUrl()}/transfer/${pi.id}`,
      reference,
      type: "eu_bank_transfer",
    },
  };
}

const remainingOf = (pi: ProviderObject) =>
  Number(
    (pi.next_action as { display_bank_transfer_instructions?: { amount_remaining: number } } | null)?.display_bank_transfer_instructions?.amount_remaining ??
      pi.amount,
  );

/**
 * Applies the customer's cash to an intent waiting for it, up to what is still owed: in full → a charge and
 * `succeeded`; in part → `amount_remaining` lower and `payment_intent.partially_funded`.
 */
function applyCash(ctx: Ctx, pi: ProviderObject) {
  if (pi.status !== "requires_action") return;
  const customer = String(pi.customer);
  const currency = String(pi.currency);
  const available = cashOf(ctx, customer)[currency] ?? 0;
  const remaining = remainingOf(pi);
  const applied = Math.min(available, remaining);
  if (applied <= 0) return;
  cashTransaction(ctx, customer, currency, -applied, "applied_to_payment", { payment_intent: pi.id });
  const left = remaining - applied;
  if (left > 0) {
    Object.assign(pi, { next_action: instructions(ctx, pi, left) });
    ctx.state.put(pi);
    ctx.hooks.emit("payment_intent.partially_funded", pi);
    return;
  }
  const chargeId = ctx.state.newId("ch");
  const charge = ctx.state.put({
    id: chargeId,
    object: "charge",
    amount: pi.amount,
    amount_captured: pi.amount,
    amount_refunded: 0,
    balance_transaction: balanceTransaction(ctx, "charge", Number(pi.amount), currency, chargeId, pi.description as string | null),
    billing_details: { address: null, email: null, name: null, phone: null },
    captured: true,
    created: now(),
    currency,
    customer,
    description: pi.description,
    disputed: false,
    livemode: false,
    metadata: pi.metadata,
    outcome: { network_status: "approved_by_network", reason: null, risk_level: "normal", seller_message: "Payment complete.", type: "authorized" },
    paid: true,
    payment_intent: pi.id,
    payment_method: pi.payment_method,
    payment_method_details: { type: "customer_balance", customer_balance: {} },
    receipt_email: pi.receipt_email,
    refunded: false,
    status: "succeeded",
    transfer_group: pi.transfer_group,
  });
  Object.assign(pi, { status: "succeeded", amount_received: pi.amount, latest_charge: chargeId, next_action: null });
  ctx.state.put(pi);
  ctx.hooks.emit("charge.succeeded", charge);
  ctx.hooks.emit("payment_intent.succeeded", pi);
}

/**
 * `POST /v1/test_helpers/customers/:id/fund_cash_balance`: an incoming transfer. With a reference of an intent
 * of this customer that waits for money, the money goes to that intent first; what is left stays in the
 * cash balance (automatic reconciliation, Stripe docs "Reconciliation of customer balance payments").
 */
export function fundCashBalance(ctx: Ctx, customer: string, body: Body) {
  customerOrThrow(ctx, customer);
  const amount = positiveInt(body.amount, "amount");
  const currency = currencyOf(body.currency);
  const reference = str(body, "reference");
  const funded = cashTransaction(ctx, customer, currency, amount, "funded", {
    bank_transfer: {
      eu_bank_transfer: { bic: "FAKESNDRXXX", iban_last4: "0000", sender_name: "Local test sender" },
      reference,
      type: "eu_bank_transfer",
    },
  });
  const waiting = ctx.state.list("payment_intent").filter((pi) => pi.customer === customer && pi.status === "requires_action" && pi.currency === currency);
  const byReference = reference ? waiting.find((pi) => ctx.state.getInternal(`reference:${pi.id}`) === reference.trim().toUpperCase()) : undefined;
  // Without a matching reference, the oldest intent waiting for exactly this amount takes it, as the provider's automatic matching does.
  const target = byReference ?? waiting.find((pi) => remainingOf(pi) === amount);
  if (target) applyCash(ctx, target);
  return ctx.state.get(funded.id, "customer_cash_balance_transaction")!;
}

/** `POST /v1/payment_intents/:id/cancel`: what was applied from the cash balance goes back to it. */
export function cancelPaymentIntent(ctx: Ctx, id: string, body: Body) {
  const pi = ctx.state.get(id, "payment_intent");
  if (!pi) throw noSuch("payment_intent", id);
  const cancellable = ["requires_payment_method", "requires_capture", "requires_confirmation", "requires_action", "processing"];
  if (!cancellable.includes(String(pi.status))) {
    throw invalid(
      `You cannot cancel this PaymentIntent because it has a status of ${pi.status}. Only a PaymentIntent with one of the following statuses may be canceled: ${cancellable.join(", ")}.`,
      { code: "payment_intent_unexpected_state" },
    );
  }
  const applied = pi.status === "requires_action" ? Number(pi.amount) - remainingOf(pi) : 0;
  const reason = str(body, "cancellation_reason");
  const reasons = ["duplicate", "fraudulent", "requested_by_customer", "abandoned"];
  if (reason && !reasons.includes(reason)) throw paramError("cancellation_reason", `Invalid cancellation_reason: must be one of ${reasons.join(", ")}`);
  Object.assign(pi, { status: "canceled", canceled_at: now(), cancellation_reason: reason, next_action: null });
  ctx.state.put(pi);
  if (applied > 0) cashTransaction(ctx, String(pi.customer), String(pi.currency), applied, "unapplied_from_payment", { payment_intent: pi.id });
  ctx.hooks.emit("payment_intent.canceled", pi);
  return pi;
}

/** A refund of a customer-balance payment: the money goes back into the customer's cash balance. */
export function refundedToCashBalance(ctx: Ctx, charge: ProviderObject, refund: ProviderObject) {
  cashTransaction(ctx, String(charge.customer), String(charge.currency), Number(refund.amount), "refunded_from_payment", { refund: refund.id });
}

/** `POST /v1/refunds` with `origin: customer_balance`: cash-balance money back to the sender's bank account. */
export function refundFromCashBalance(ctx: Ctx, body: Body) {
  const customer = requireStr(body, "customer");
  customerOrThrow(ctx, customer);
  const currency = currencyOf(body.currency);
  const amount = positiveInt(body.amount, "amount");
  const available = cashOf(ctx, customer)[currency] ?? 0;
  if (amount > available) {
    throw invalid(`The refund amount (${formatAmount(amount, currency)}) is more than the customer's cash balance (${formatAmount(available, currency)}).`, {
      param: "amount",
      code: "amount_too_large",
    });
  }
  const refundId = ctx.state.newId("re");
  const refund = ctx.state.put({
    id: refundId,
    object: "refund",
    amount,
    balance_transaction: null,
    charge: null,
    created: now(),
    currency,
    customer,
    destination_details: { eu_bank_transfer: { reference: null, reference_status: "available" }, type: "eu_bank_transfer" },
    instructions_email: str(body, "instructions_email"),
    metadata: metadataOf(body),
    origin: "customer_balance",
    payment_intent: null,
    reason: null,
    status: "succeeded",
  });
  cashTransaction(ctx, customer, currency, -amount, "return_initiated", { refund: refundId });
  ctx.hooks.emit("refund.created", refund);
  return refund;
}

/** The waiting intent a reference belongs to (for the fake's control and its instructions page). */
export function intentByReference(ctx: Ctx, reference: string) {
  const wanted = reference.trim().toUpperCase();
  return ctx.state.list("payment_intent").find((pi) => ctx.state.getInternal(`reference:${pi.id}`) === wanted);
}

export function referenceOf(ctx: Ctx, piId: string) {
  return ctx.state.getInternal<string>(`reference:${piId}`) ?? null;
}
