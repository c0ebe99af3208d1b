// Checkout Sessions, the payment intents and charges behind them, refunds and balance transactions.
// Every function here runs synchronously from start to end, so two requests (a double click) can never
// interleave between "is it paid yet?" and "mark it paid".
import { type Body, arrayOf, currencyOf, formatAmount, invalid, metadataOf, missing, noSuch, now, paramError, positiveInt, requireStr, str } from "./api";
import { type CardError, type CardInput, checkCard } from "./cards";
import type { FakeState, ProviderObject } from "./state";
import type { Webhooks } from "./webhooks";

export interface Ctx {
  state: FakeState;
  hooks: Webhooks;
  baseUrl: () => string;
}

const DAY = 24 * 3600;

export function balanceTransaction(ctx: Ctx, type: string, amount: number, currency: string, source: string, description: string | null) {
  const t = now();
  return ctx.state.put({
    id: ctx.state.newId("txn"),
    object: "balance_transaction",
    amount,
    available_on: t,
    balance_type: "payments",
    created: t,
    currency,
    description,
    exchange_rate: null,
    fee: 0,
    fee_details: [],
    net: amount,
    reporting_category: type === "charge" ? "charge" : type,
    source,
    status: "available",
    type,
  }).id;
}

export function createPaymentIntent(
  ctx: Ctx,
  p: {
    amount: number;
    currency: string;
    customer: string | null;
    description: string | null;
    metadata: Record<string, string>;
    transfer_group: string | null;
    receipt_email: string | null;
  },
) {
  const id = ctx.state.newId("pi");
  return ctx.state.put({
    id,
    object: "payment_intent",
    allowed_payment_method_types: ["card"],
    amount: p.amount,
    amount_capturable: 0,
    amount_received: 0,
    application: null,
    application_fee_amount: null,
    automatic_payment_methods: null,
    canceled_at: null,
    cancellation_reason: null,
    capture_method: "automatic",
    client_secret: `${id}_secret_${ctx.state.newId("s").slice(2)}`,
    confirmation_method: "automatic",
    created: now(),
    currency: p.currency,
    customer: p.customer,
    customer_account: null,
    description: p.description,
    excluded_payment_method_types: null,
    last_payment_error: null,
    latest_charge: null,
    livemode: false,
    metadata: p.metadata,
    next_action: null,
    on_behalf_of: null,
    payment_method: null,
    payment_method_configuration_details: null,
    payment_method_options: { card: { request_three_d_secure: "automatic" } },
    payment_method_types: ["card"],
    processing: null,
    receipt_email: p.receipt_email,
    review: null,
    setup_future_usage: null,
    shipping: null,
    source: null,
    statement_descriptor: null,
    statement_descriptor_suffix: null,
    status: "requires_payment_method",
    transfer_data: null,
    transfer_group: p.transfer_group,
  });
}

interface LineItemInput {
  name: string;
  currency: string;
  unitAmount: number;
  quantity: number;
}

function lineItemsOf(body: Body) {
  const raw = arrayOf(body.line_items);
  if (raw.length === 0) throw missing("line_items");
  return raw.map((entry, i): LineItemInput => {
    const item = (entry ?? {}) as Body;
    if (item.price) throw paramError(`line_items[${i}][price]`, "This local test fake supports line items with `price_data` only.");
    const pd = item.price_data as Body | undefined;
    if (!pd || typeof pd !== "object") throw missing(`line_items[${i}][price_data]`);
    const product = pd.product_data as Body | undefined;
    const name = product && typeof product === "object" ? str(product, "name") : null;
    if (!name) throw missing(`line_items[${i}][price_data][product_data][name]`);
    return {
      name,
      currency: currencyOf(pd.currency, `line_items[${i}][price_data][currency]`),
      unitAmount: positiveInt(pd.unit_amount, `line_items[${i}][price_data][unit_amount]`, true),
      quantity: item.quantity === undefined ? 1 : positiveInt(item.quantity, `line_items[${i}][quantity]`),
    };
  });
}

export function createCheckoutSession(ctx: Ctx, body: Body) {
  const mode = requireStr(body, "mode");
  if (mode !== "payment") throw paramError("mode", `This local test fake supports mode \`payment\` only, not \`${mode}\`.`);
  const successUrl = requireStr(body, "success_url");
  const items = lineItemsOf(body);
  const currency = items[0].currency;
  if (items.some((i) => i.currency !== currency)) throw paramError("line_items", "All line items must use the same currency.");
  const total = items.reduce((s, i) => s + i.unitAmount * i.quantity, 0);
  if (total <= 0) throw paramError("line_items", "The Checkout Session's total amount due must be greater than zero.");
  const customer = str(body, "customer");
  if (customer && !ctx.state.get(customer, "customer")) throw noSuch("customer", customer, "customer");
  const customerEmail = str(body, "customer_email");
  if (customer && customerEmail) throw invalid("You may only specify one of these parameters: customer, customer_email.");
  const expiresAt = body.expires_at === undefined ? now() + DAY : positiveInt(body.expires_at, "expires_at");
  const pid = (body.payment_intent_data ?? {}) as Body;

  const pi = createPaymentIntent(ctx, {
    amount: total,
    currency,
    customer,
    description: str(pid, "description"),
    metadata: metadataOf(pid),
    transfer_group: str(pid, "transfer_group"),
    receipt_email: str(pid, "receipt_email"),
  });
  const id = ctx.state.newId("cs_test");
  const lineItems = items.map((i) => ({
    id: ctx.state.newId("li"),
    object: "item",
    amount_discount: 0,
    amount_subtotal: i.unitAmount * i.quantity,
    amount_tax: 0,
    amount_total: i.unitAmount * i.quantity,
    currency: i.currency,
    description: i.name,
    metadata: {},
    price: {
      id: ctx.state.newId("price"),
      object: "price",
      active: false,
      billing_scheme: "per_unit",
      created: now(),
      currency: i.currency,
      livemode: false,
      lookup_key: null,
      metadata: {},
      nickname: null,
      product: ctx.state.newId("prod"),
      recurring: null,
      tax_behavior: "unspecified",
      tiers_mode: null,
      transform_quantity: null,
      type: "one_time",
      unit_amount: i.unitAmount,
      unit_amount_decimal: String(i.unitAmount),
    },
    quantity: i.quantity,
  }));
  ctx.state.setInternal(`line_items:${id}`, lineItems);
  return ctx.state.put({
    id,
    object: "checkout.session",
    adaptive_pricing: null,
    after_expiration: null,
    allow_promotion_codes: null,
    amount_subtotal: total,
    amount_total: total,
    automatic_tax: { enabled: false, liability: null, status: null },
    billing_address_collection: null,
    cancel_url: str(body, "cancel_url"),
    client_reference_id: str(body, "client_reference_id"),
    client_secret: null,
    consent: null,
    consent_collection: null,
    created: now(),
    currency,
    custom_fields: [],
    custom_text: { after_submit: null, shipping_address: null, submit: null, terms_of_service_acceptance: null },
    customer,
    customer_creation: customer ? null : "if_required",
    customer_details: customerEmail ? { email: customerEmail, address: null, name: null, phone: null, tax_exempt: "none", tax_ids: [] } : null,
    customer_email: customerEmail,
    expires_at: expiresAt,
    invoice: null,
    livemode: false,
    locale: null,
    metadata: metadataOf(body),
    mode,
    payment_intent: pi.id,
    payment_link: null,
    payment_method_collection: "if_required",
    payment_method_options: {},
    payment_method_types: ["card"],
    payment_status: "unpaid",
    recovered_from: null,
    setup_intent: null,
    shipping_address_collection: null,
    shipping_cost: null,
    shipping_options: [],
    status: "open",
    submit_type: null,
    subscription: null,
    success_url: successUrl,
    total_details: { amount_discount: 0, amount_shipping: 0, amount_tax: 0 },
    ui_mode: "hosted",
    url: `${ctx.baseUrl()}/pay/${id}`,
  });
}

export function lineItemsList(ctx: Ctx, sessionId: string) {
  return ctx.state.getInternal<ProviderObject[]>(`line_items:${sessionId}`) ?? [];
}

export function getSession(ctx: Ctx, id: string) {
  const s = ctx.state.get(id, "checkout.session");
  if (!s) throw noSuch("checkout.session", id);
  if (s.status === "open" && Number(s.expires_at) <= now()) expireSession(ctx, id);
  return s;
}

export function expireSession(ctx: Ctx, id: string) {
  const s = ctx.state.get(id, "checkout.session");
  if (!s) throw noSuch("checkout.session", id);
  if (s.status !== "open") throw invalid(`Only Checkout Sessions with a status in ["open"] can be expired. This session has status \`${s.status}\`.`);
  const pi = ctx.state.get(String(s.payment_intent), "payment_intent");
  Object.assign(s, { status: "expired", url: null });
  ctx.state.put(s);
  if (pi) {
    Object.assign(pi, { status: "canceled", canceled_at: now(), cancellation_reason: "abandoned" });
    ctx.state.put(pi);
    ctx.hooks.emit("payment_intent.canceled", pi);
  }
  ctx.hooks.emit("checkout.session.expired", s);
  return s;
}

/** Where the browser goes next, with the session id filled in as the provider does. */
export function sessionUrl(s: ProviderObject, which: "success_url" | "cancel_url") {
  const url = s[which];
  return typeof url === "string" ? url.replaceAll("{CHECKOUT_SESSION_ID}", s.id) : null;
}

export type PayOutcome =
  | { outcome: "succeeded"; session: ProviderObject; payment_intent: ProviderObject; charge: ProviderObject; redirect: string | null; error: null }
  | { outcome: "already_paid"; session: ProviderObject; payment_intent: ProviderObject; charge: ProviderObject; redirect: string | null; error: null }
  | { outcome: "declined"; session: ProviderObject; payment_intent: ProviderObject; charge: null; redirect: null; error: CardError }
  | { outcome: "expired"; session: ProviderObject; payment_intent: ProviderObject | null; charge: null; redirect: string | null; error: null };

/** What the hosted card form does with one submission. */
export function payCheckoutSession(ctx: Ctx, sessionId: string, card: CardInput): PayOutcome {
  const s = getSession(ctx, sessionId);
  const pi = ctx.state.get(String(s.payment_intent), "payment_intent")!;
  if (s.status === "complete") {
    const charge = ctx.state.get(String(pi.latest_charge), "charge")!;
    return { outcome: "already_paid", session: s, payment_intent: pi, charge, redirect: sessionUrl(s, "success_url"), error: null };
  }
  if (s.status !== "open") return { outcome: "expired", session: s, payment_intent: pi, charge: null, redirect: sessionUrl(s, "cancel_url"), error: null };

  const verdict = checkCard(card);
  const pm = ctx.state.put({
    id: ctx.state.newId("pm"),
    object: "payment_method",
    allow_redisplay: "unspecified",
    billing_details: { address: null, email: null, name: card.name?.trim() || null, phone: null },
    card: {
      brand: verdict.brand,
      checks: { address_line1_check: null, address_postal_code_check: null, cvc_check: verdict.ok ? "pass" : null },
      country: "US",
      exp_month: verdict.expMonth,
      exp_year: verdict.expYear,
      funding: verdict.funding,
      last4: verdict.last4,
    },
    created: now(),
    customer: s.customer ?? null,
    livemode: false,
    metadata: {},
    type: "card",
  });
  if (!verdict.ok) {
    const error = verdict.error!;
    Object.assign(pi, {
      status: "requires_payment_method",
      payment_method: null,
      last_payment_error: { ...error, payment_method: structuredClone(pm), doc_url: null },
    });
    ctx.state.put(pi);
    ctx.hooks.emit("payment_intent.payment_failed", pi);
    return { outcome: "declined", session: s, payment_intent: pi, charge: null, redirect: null, error };
  }

  const chargeId = ctx.state.newId("ch");
  const txn = balanceTransaction(ctx, "charge", Number(pi.amount), String(pi.currency), chargeId, pi.description as string | null);
  const email = (s.customer_details as { email?: string } | null)?.email ?? (s.customer_email as string | null) ?? null;
  const charge = ctx.state.put({
    id: chargeId,
    object: "charge",
    amount: pi.amount,
    amount_captured: pi.amount,
    amount_refunded: 0,
    application: null,
    application_fee: null,
    application_fee_amount: null,
    balance_transaction: txn,
    billing_details: { address: null, email, name: card.name?.trim() || null, phone: null },
    calculated_statement_descriptor: "LOCAL TEST",
    captured: true,
    created: now(),
    currency: pi.currency,
    customer: pi.customer,
    description: pi.description,
    disputed: false,
    failure_balance_transaction: null,
    failure_code: null,
    failure_message: null,
    fraud_details: {},
    livemode: false,
    metadata: pi.metadata,
    on_behalf_of: null,
    outcome: {
      network_status: "approved_by_network",
      reason: null,
      risk_level: "normal",
      risk_score: 20,
      seller_message: "Payment complete.",
      type: "authorized",
    },
    paid: true,
    payment_intent: pi.id,
    payment_method: pm.id,
    payment_method_details: {
      type: "card",
      card: {
        brand: verdict.brand,
        country: "US",
        exp_month: verdict.expMonth,
        exp_year: verdict.expYear,
        funding: verdict.funding,
        last4: verdict.last4,
        network: verdict.brand,
      },
    },
    receipt_email: pi.receipt_email,
    receipt_number: null,
    receipt_url: null,
    refunded: false,
    review: null,
    shipping: null,
    source: null,
    source_transfer: null,
    statement_descriptor: null,
    statement_descriptor_suffix: null,
    status: "succeeded",
    transfer_data: null,
    transfer_group: pi.transfer_group,
  });
  Object.assign(pi, { status: "succeeded", amount_received: pi.amount, latest_charge: chargeId, payment_method: pm.id, last_payment_error: null });
  ctx.state.put(pi);
  Object.assign(s, {
    status: "complete",
    payment_status: "paid",
    url: null,
    customer_details: { address: null, email, name: card.name?.trim() || null, phone: null, tax_exempt: "none", tax_ids: [] },
  });
  ctx.state.put(s);
  ctx.hooks.emit("charge.succeeded", charge);
  ctx.hooks.emit("payment_intent.succeeded", pi);
  ctx.hooks.emit("checkout.session.completed", s);
  return { outcome: "succeeded", session: s, payment_intent: pi, charge, redirect: sessionUrl(s, "success_url"), error: null };
}

const REFUND_REASONS = new Set(["duplicate", "fraudulent", "requested_by_customer"]);

export function createRefund(ctx: Ctx, body: Body) {
  const piId = str(body, "payment_intent");
  const chargeId = str(body, "charge");
  if (!piId && !chargeId)
    throw invalid("One of the following params should be provided for this request: payment_intent or charge.", { code: "parameter_missing" });
  let charge: ProviderObject | undefined;
  if (piId) {
    const pi = ctx.state.get(piId, "payment_intent");
    if (!pi) throw noSuch("payment_intent", piId, "payment_intent");
    charge = pi.latest_charge ? ctx.state.get(String(pi.latest_charge), "charge") : undefined;
    if (!charge || pi.status !== "succeeded")
      throw invalid(`This PaymentIntent (${piId}) does not have a successful charge to refund.`, { param: "payment_intent" });
    if (chargeId && chargeId !== charge.id) throw invalid(`Charge ${chargeId} does not belong to PaymentIntent ${piId}.`, { param: "charge" });
  } else {
    charge = ctx.state.get(chargeId!, "charge");
    if (!charge) throw noSuch("charge", chargeId!, "charge");
  }
  const remaining = Number(charge.amount) - Number(charge.amount_refunded);
  const currency = String(charge.currency);
  if (remaining <= 0) throw invalid(`Charge ${charge.id} has already been refunded.`, { code: "charge_already_refunded" });
  const amount = body.amount === undefined ? remaining : positiveInt(body.amount, "amount");
  if (amount > remaining) {
    throw invalid(`Refund amount (${formatAmount(amount, currency)}) is greater than unrefunded amount on charge (${formatAmount(remaining, currency)}).`, {
      param: "amount",
      code: "amount_too_large",
    });
  }
  const reason = str(body, "reason");
  if (reason && !REFUND_REASONS.has(reason)) throw paramError("reason", `Invalid reason: must be one of ${[...REFUND_REASONS].join(", ")}`);
  const refundId = ctx.state.newId("re");
  const refund = ctx.state.put({
    id: refundId,
    object: "refund",
    amount,
    balance_transaction: balanceTransaction(ctx, "refund", -amount, currency, refundId, null),
    charge: charge.id,
    created: now(),
    currency,
    customer: charge.customer ?? null,
    customer_account: null,
    destination_details: { card: { reference_status: "pending", reference_type: "acquirer_reference_number", type: "refund" }, type: "card" },
    metadata: metadataOf(body),
    payment_intent: charge.payment_intent,
    payment_method: charge.payment_method,
    reason,
    receipt_number: null,
    source_transfer_reversal: null,
    status: "succeeded",
    transfer_reversal: null,
  });
  const previous = { amount_refunded: charge.amount_refunded, refunded: charge.refunded };
  charge.amount_refunded = Number(charge.amount_refunded) + amount;
  charge.refunded = charge.amount_refunded === charge.amount;
  ctx.state.put(charge);
  ctx.hooks.emit("refund.created", refund);
  ctx.hooks.emit("charge.refunded", charge, { previous });
  return refund;
}
