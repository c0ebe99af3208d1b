// msw handlers that answer the payment provider's REST API (form-encoded bodies, Idempotency-Key on
// POSTs, Stripe-Account for Connect) and serve the fake's hosted card and onboarding pages.
import { createHash } from "node:crypto";
import { http, HttpResponse } from "msw";
import qs from "qs";
import Stripe from "stripe";
import { type Body, ApiError, currencyOf, expand, expandParam, listObject, metadataOf, noSuch, now, positiveInt, str } from "./api";
import { balanceObject, createAccount, createAccountLink, createTransfer, finishOnboarding, onboardingLink, updateAccount, accountOrThrow } from "./connect";
import {
  type Ctx,
  type PayOutcome,
  createCheckoutSession,
  createPaymentIntent,
  createRefund,
  expireSession,
  getSession,
  lineItemsList,
  payCheckoutSession,
  sessionUrl,
} from "./payments";
import { cardPage, expiredPage, htmlResponse, notFoundPage, onboardingPage, paidPage, redirect, transferPage } from "./pages";
import {
  asksForBankTransfer,
  cancelPaymentIntent,
  cashBalanceObject,
  createBankTransferIntent,
  fundCashBalance,
  referenceOf,
  refundedToCashBalance,
  refundFromCashBalance,
} from "./bank-transfers";
import type { ProviderObject } from "./state";
import { requestContext } from "./webhooks";

const parse = (text: string) => qs.parse(text, { depth: 10, arrayLimit: 100 }) as Body;

interface Call {
  body: Body;
  query: Body;
  params: Record<string, string>;
  account: string | null;
}

type ApiHandler = (call: Call) => unknown;

type MswArgs = { request: Request; params: Record<string, string | readonly string[] | undefined> };

const IDEMPOTENCY_MISMATCH =
  "Keys for idempotent requests can only be used with the same parameters they were first used with. Try using a key other than '%KEY%' if you meant to execute a different request.";

function errorResponse(status: number, error: Record<string, unknown>, headers: Record<string, string>) {
  return HttpResponse.json({ error }, { status, headers });
}

/**
 * One API route: checks the API key, applies `expand[]`, and follows the provider's idempotency rules —
 * keys are scoped to the account (Stripe-Account) they were used with; the same key and body replay
 * the first answer; another body or another endpoint is refused. Everything after the body is read
 * runs synchronously, so concurrent duplicates (a double click) are serialised by the event loop.
 */
function api(ctx: Ctx, handler: ApiHandler, virtual?: (o: ProviderObject, field: string) => unknown) {
  return async ({ request, params }: MswArgs) => {
    const url = new URL(request.url);
    const raw = request.method === "POST" ? await request.text() : "";
    const requestId = ctx.state.newId("req");
    const headers: Record<string, string> = { "request-id": requestId, "stripe-version": request.headers.get("stripe-version") ?? Stripe.API_VERSION };

    const auth = request.headers.get("authorization") ?? "";
    const key = /^Bearer\s+(\S+)$/i.exec(auth)?.[1] ?? "";
    if (!key)
      return errorResponse(
        401,
        { type: "invalid_request_error", message: "You did not provide an API key. Provide it in the Authorization header as a Bearer token." },
        headers,
      );
    if (!/^(sk|rk)_test_/.test(key))
      return errorResponse(
        401,
        { type: "invalid_request_error", code: "api_key_invalid", message: "Invalid API Key provided: this local fake accepts test-mode secret keys only." },
        headers,
      );

    const account = request.headers.get("stripe-account");
    if (account && !ctx.state.get(account, "account")) {
      return errorResponse(
        403,
        {
          type: "invalid_request_error",
          code: "account_invalid",
          message: `The provided key does not have access to account '${account}' (or that account does not exist).`,
        },
        headers,
      );
    }

    const body = parse(raw);
    const query = parse(url.search.slice(1));
    const idemKey = request.method === "POST" ? request.headers.get("idempotency-key") : null;
    const scope = `${account ?? "platform"} ${idemKey}`;
    const endpoint = `${request.method} ${url.pathname}`;
    const bodyHash = createHash("sha256").update(raw).digest("hex");
    if (idemKey) {
      headers["idempotency-key"] = idemKey;
      const seen = ctx.state.idempotency.get(scope);
      if (seen) {
        if (`${seen.method} ${seen.path}` !== endpoint) {
          return errorResponse(
            400,
            {
              type: "idempotency_error",
              message: `Keys for idempotent requests can only be used for the same endpoint they were first used for ('${seen.method} ${seen.path}' vs '${endpoint}'). Try using a key other than '${idemKey}' if you meant to execute a different request.`,
            },
            headers,
          );
        }
        if (seen.bodyHash !== bodyHash)
          return errorResponse(400, { type: "idempotency_error", message: IDEMPOTENCY_MISMATCH.replace("%KEY%", idemKey) }, headers);
        return HttpResponse.json(seen.response as object, { status: seen.status, headers: { ...headers, "idempotent-replayed": "true" } });
      }
    }

    let status = 200;
    let response: unknown;
    let store = true;
    requestContext.id = requestId;
    requestContext.idempotencyKey = idemKey;
    try {
      const result = handler({ body, query, params: params as Record<string, string>, account });
      const paths = expandParam(request.method === "POST" ? body : query);
      response = expand(ctx.state, result, paths, virtual);
    } catch (err) {
      // A bug in the fake answers like a provider outage (not stored), rather than killing the request.
      const e =
        err instanceof ApiError ? err : new ApiError(500, { type: "api_error", message: `Local payment fake failed: ${(err as Error).message}` }, false);
      status = e.status;
      store = e.stored;
      response = { error: { ...e.body, request_log_url: null } };
    } finally {
      requestContext.id = null;
      requestContext.idempotencyKey = null;
    }
    if (idemKey && store) {
      ctx.state.idempotency.set(scope, { method: request.method, path: url.pathname, bodyHash, status, response });
      ctx.state.save();
    }
    return HttpResponse.json(response as object, { status, headers });
  };
}

function getter(ctx: Ctx, object: string, what = object) {
  return api(ctx, ({ params }) => {
    const o = ctx.state.get(params.id, object);
    if (!o) throw noSuch(what, params.id);
    return o;
  });
}

/** A list route: `filters` are query parameters compared with the field of the same name. */
function lister(ctx: Ctx, object: string, path: string, filters: string[]) {
  return api(ctx, ({ query }) => {
    const items = ctx.state.list(object).filter((o) => filters.every((f) => query[f] === undefined || o[f] === query[f]));
    return listObject(items, query, `/v1/${path}`);
  });
}

function formOf(text: string) {
  return Object.fromEntries(new URLSearchParams(text)) as Record<string, string>;
}

export function paymentHandlers(ctx: Ctx) {
  const v1 = "*/v1";
  const { state } = ctx;
  const sessionVirtual = (o: ProviderObject, field: string) =>
    o.object === "checkout.session" && field === "line_items"
      ? listObject(lineItemsList(ctx, o.id), {}, `/v1/checkout/sessions/${o.id}/line_items`)
      : undefined;

  return [
    http.get(
      `${v1}/balance`,
      api(ctx, ({ account }) => balanceObject(ctx, account)),
    ),
    http.get(`${v1}/balance_transactions/:id`, getter(ctx, "balance_transaction")),
    http.get(`${v1}/balance_transactions`, lister(ctx, "balance_transaction", "balance_transactions", ["type", "source", "currency"])),

    http.get(
      `${v1}/account`,
      api(ctx, ({ account }) =>
        account
          ? accountOrThrow(ctx, account)
          : {
              id: "acct_local_platform",
              object: "account",
              charges_enabled: true,
              payouts_enabled: true,
              details_submitted: true,
              country: "DE",
              default_currency: "eur",
              email: null,
              type: "standard",
              metadata: {},
            },
      ),
    ),

    http.post(
      `${v1}/customers`,
      api(ctx, ({ body }) =>
        state.put({
          id: state.newId("cus"),
          object: "customer",
          address: null,
          balance: 0,
          created: now(),
          currency: null,
          default_source: null,
          delinquent: false,
          description: str(body, "description"),
          email: str(body, "email"),
          invoice_prefix: null,
          livemode: false,
          metadata: metadataOf(body),
          name: str(body, "name"),
          phone: null,
          preferred_locales: [],
          shipping: null,
          tax_exempt: "none",
        }),
      ),
    ),
    http.get(
      `${v1}/customers/:id/cash_balance`,
      api(ctx, ({ params }) => cashBalanceObject(ctx, params.id)),
    ),
    http.get(
      `${v1}/customers/:id/cash_balance_transactions/:txn`,
      api(ctx, ({ params }) => {
        const t = state.get(params.txn, "customer_cash_balance_transaction");
        if (!t || t.customer !== params.id) throw noSuch("customer_cash_balance_transaction", params.txn);
        return t;
      }),
    ),
    http.get(
      `${v1}/customers/:id/cash_balance_transactions`,
      api(ctx, ({ params, query }) => {
        cashBalanceObject(ctx, params.id);
        const items = state.list("customer_cash_balance_transaction").filter((t) => t.customer === params.id);
        return listObject(items, query, `/v1/customers/${params.id}/cash_balance_transactions`);
      }),
    ),
    http.post(
      `${v1}/test_helpers/customers/:id/fund_cash_balance`,
      api(ctx, ({ params, body }) => fundCashBalance(ctx, params.id, body)),
    ),
    http.get(`${v1}/customers/:id`, getter(ctx, "customer")),
    http.get(`${v1}/customers`, lister(ctx, "customer", "customers", ["email"])),

    http.post(
      `${v1}/payment_intents`,
      api(ctx, ({ body }) => {
        if (asksForBankTransfer(body)) return createBankTransferIntent(ctx, body);
        return createPaymentIntent(ctx, {
          amount: positiveInt(body.amount, "amount"),
          currency: currencyOf(body.currency),
          customer: str(body, "customer"),
          description: str(body, "description"),
          metadata: metadataOf(body),
          transfer_group: str(body, "transfer_group"),
          receipt_email: str(body, "receipt_email"),
        });
      }),
    ),
    http.post(
      `${v1}/payment_intents/:id/cancel`,
      api(ctx, ({ params, body }) => cancelPaymentIntent(ctx, params.id, body)),
    ),
    http.get(`${v1}/payment_intents/:id`, getter(ctx, "payment_intent")),
    http.get(`${v1}/payment_intents`, lister(ctx, "payment_intent", "payment_intents", ["customer"])),

    http.get(`${v1}/charges/:id`, getter(ctx, "charge")),
    http.get(`${v1}/charges`, lister(ctx, "charge", "charges", ["payment_intent", "customer", "transfer_group"])),

    http.post(
      `${v1}/checkout/sessions`,
      api(ctx, ({ body }) => createCheckoutSession(ctx, body), sessionVirtual),
    ),
    http.get(
      `${v1}/checkout/sessions/:id/line_items`,
      api(ctx, ({ params, query }) => {
        getSession(ctx, params.id);
        return listObject(lineItemsList(ctx, params.id), query, `/v1/checkout/sessions/${params.id}/line_items`);
      }),
    ),
    http.post(
      `${v1}/checkout/sessions/:id/expire`,
      api(ctx, ({ params }) => expireSession(ctx, params.id), sessionVirtual),
    ),
    http.get(
      `${v1}/checkout/sessions/:id`,
      api(ctx, ({ params }) => getSession(ctx, params.id), sessionVirtual),
    ),
    http.get(`${v1}/checkout/sessions`, lister(ctx, "checkout.session", "checkout/sessions", ["payment_intent", "customer", "status"])),

    http.post(
      `${v1}/refunds`,
      api(ctx, ({ body }) => {
        if (body.origin === "customer_balance") return refundFromCashBalance(ctx, body);
        const refund = createRefund(ctx, body);
        // A refund of a bank-transfer payment goes back into the customer's cash balance (Stripe docs, "Customer balance" refunds).
        const charge = state.get(String(refund.charge), "charge");
        if ((charge?.payment_method_details as { type?: string } | undefined)?.type === "customer_balance") {
          Object.assign(refund, { destination_details: { customer_cash_balance: {}, type: "customer_cash_balance" } });
          state.put(refund);
          refundedToCashBalance(ctx, charge!, refund);
        }
        return refund;
      }),
    ),
    http.get(`${v1}/refunds/:id`, getter(ctx, "refund")),
    http.get(`${v1}/refunds`, lister(ctx, "refund", "refunds", ["payment_intent", "charge"])),

    http.post(
      `${v1}/accounts`,
      api(ctx, ({ body }) => createAccount(ctx, body)),
    ),
    http.post(
      `${v1}/accounts/:id`,
      api(ctx, ({ params, body }) => updateAccount(ctx, params.id, body)),
    ),
    http.get(
      `${v1}/accounts/:id`,
      api(ctx, ({ params }) => accountOrThrow(ctx, params.id)),
    ),
    http.get(`${v1}/accounts`, lister(ctx, "account", "accounts", [])),
    http.post(
      `${v1}/account_links`,
      api(ctx, ({ body }) => createAccountLink(ctx, body)),
    ),

    http.post(
      `${v1}/transfers`,
      api(ctx, ({ body }) => createTransfer(ctx, body)),
    ),
    http.get(`${v1}/transfers/:id`, getter(ctx, "transfer")),
    http.get(`${v1}/transfers`, lister(ctx, "transfer", "transfers", ["transfer_group", "destination"])),

    http.get(`${v1}/events/:id`, getter(ctx, "event")),
    http.get(
      `${v1}/events`,
      api(ctx, ({ query }) => {
        const types = [str(query, "type"), ...(Array.isArray(query.types) ? query.types.map(String) : [])].filter(Boolean) as string[];
        const match = (t: string) => types.some((p) => (p.endsWith(".*") ? t.startsWith(p.slice(0, -1)) : t === p));
        const items = state.list("event").filter((e) => types.length === 0 || match(String(e.type)));
        return listObject(items, query, "/v1/events");
      }),
    ),

    http.all(`${v1}/*`, ({ request }) =>
      HttpResponse.json(
        {
          error: {
            type: "invalid_request_error",
            message: `Unrecognized request URL (${request.method}: ${new URL(request.url).pathname}). This local fake implements only part of the API.`,
          },
        },
        { status: 404 },
      ),
    ),

    // The hosted card page the Checkout Session's `url` points at.
    http.get("*/pay/:id", ({ params }) => {
      let s: ProviderObject;
      try {
        s = getSession(ctx, String(params.id));
      } catch {
        return htmlResponse(notFoundPage("checkout session"), 404);
      }
      if (s.status === "complete") return htmlResponse(paidPage(sessionUrl(s, "success_url")));
      if (s.status !== "open") return htmlResponse(expiredPage(sessionUrl(s, "cancel_url")));
      return htmlResponse(cardPage(s, lineItemsList(ctx, s.id)));
    }),
    http.post("*/pay/:id", async ({ request, params }) => {
      const form = formOf(await request.text());
      let result: PayOutcome;
      try {
        result = payCheckoutSession(ctx, String(params.id), { number: form.card ?? "", exp: form.exp, cvc: form.cvc, name: form.name });
      } catch {
        return htmlResponse(notFoundPage("checkout session"), 404);
      }
      if (result.outcome === "succeeded") return redirect(result.redirect!);
      if (result.outcome === "already_paid") return htmlResponse(paidPage(result.redirect));
      if (result.outcome === "expired") return htmlResponse(expiredPage(result.redirect));
      const { card: _omitNumber, ...keep } = form;
      return htmlResponse(cardPage(result.session, lineItemsList(ctx, result.session.id), { error: result.error.message, values: keep }), 402);
    }),

    // The bank-transfer instructions page a bank-transfer PaymentIntent's `hosted_instructions_url` points at,
    // with a local-test form that "receives" a transfer.
    http.get("*/transfer/:id", ({ params }) => {
      const pi = state.get(String(params.id), "payment_intent");
      if (!pi || !referenceOf(ctx, pi.id)) return htmlResponse(notFoundPage("bank transfer"), 404);
      return htmlResponse(transferPage(pi, referenceOf(ctx, pi.id)!));
    }),
    http.post("*/transfer/:id", async ({ request, params }) => {
      const pi = state.get(String(params.id), "payment_intent");
      if (!pi || !referenceOf(ctx, pi.id)) return htmlResponse(notFoundPage("bank transfer"), 404);
      const form = formOf(await request.text());
      const amount = Math.round(Number(String(form.amount ?? "").replace(",", ".")) * 100);
      if (!Number.isSafeInteger(amount) || amount <= 0) return htmlResponse(transferPage(pi, referenceOf(ctx, pi.id)!, "Give an amount above zero."), 400);
      fundCashBalance(ctx, String(pi.customer), {
        amount: String(amount),
        currency: String(pi.currency),
        reference: form.reference ?? referenceOf(ctx, pi.id)!,
      });
      return redirect(`/transfer/${pi.id}`);
    }),

    // The onboarding page an account link points at.
    http.get("*/connect/onboard/:token", ({ params }) => {
      const st = onboardingLink(ctx, String(params.token));
      if (st.kind === "unknown") return htmlResponse(notFoundPage("onboarding link"), 404);
      if (st.kind === "stale") return redirect(st.link.refresh_url);
      return htmlResponse(onboardingPage(String(params.token), st.account));
    }),
    http.post("*/connect/onboard/:token", async ({ request, params }) => {
      const form = formOf(await request.text());
      const st = finishOnboarding(ctx, String(params.token), form.action !== "leave");
      if (st.kind === "unknown") return htmlResponse(notFoundPage("onboarding link"), 404);
      if (st.kind === "stale") return redirect(st.link.refresh_url);
      return redirect(st.link.return_url);
    }),
  ];
}
