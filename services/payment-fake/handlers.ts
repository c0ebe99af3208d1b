// msw handlers that answer the payment provider's REST API (form-encoded bodies, Idempotency-Key on POSTs).
import { createHash } from "node:crypto";
import { http, HttpResponse } from "msw";
import qs from "qs";
import type { FakeState, ProviderObject } from "./state";

const now = () => Math.floor(Date.now() / 1000);

function providerError(status: number, type: string, message: string, extra: Record<string, unknown> = {}) {
  return HttpResponse.json({ error: { type, message, ...extra } }, { status });
}

async function formBody(request: Request): Promise<Record<string, unknown>> {
  const text = await request.text();
  return qs.parse(text, { depth: 10, arrayLimit: 100 }) as Record<string, unknown>;
}

type Handler = (body: Record<string, unknown>, params: Record<string, string>, request: Request) => Response | Promise<Response>;

/**
 * Wraps a POST handler with the provider's idempotency rules: the same key and body replay the first
 * answer; the same key with another body is refused.
 */
function idempotent(state: FakeState, handler: Handler) {
  return async ({ request, params }: { request: Request; params: Record<string, string | readonly string[] | undefined> }) => {
    const raw = await request.clone().text();
    const body = qs.parse(raw, { depth: 10, arrayLimit: 100 }) as Record<string, unknown>;
    const key = request.headers.get("idempotency-key");
    const scope = `${request.method} ${new URL(request.url).pathname} ${key}`;
    const bodyHash = createHash("sha256").update(raw).digest("hex");
    if (key) {
      const seen = state.idempotency.get(scope);
      if (seen) {
        if (seen.bodyHash !== bodyHash) {
          return providerError(400, "idempotency_error",
            "Keys for idempotent requests can only be used with the same parameters they were first used with.");
        }
        return HttpResponse.json(seen.response as object, { status: seen.status, headers: { "idempotent-replayed": "true" } });
      }
    }
    const response = await handler(body, params as Record<string, string>, request);
    if (key && response.status < 500) {
      state.idempotency.set(scope, { bodyHash, status: response.status, response: await response.clone().json() });
      state.save();
    }
    return response;
  };
}

function metadataOf(body: Record<string, unknown>) {
  return (body.metadata as Record<string, string> | undefined) ?? {};
}

export function paymentHandlers(state: FakeState) {
  const base = "*/v1";
  return [
    http.get(`${base}/balance`, () =>
      HttpResponse.json({ object: "balance", livemode: false, available: [{ amount: 0, currency: "eur" }], pending: [] })),

    http.post(`${base}/customers`, idempotent(state, (body) => {
      const c = state.put({ id: state.newId("cus"), object: "customer", created: now(), livemode: false,
        email: body.email ?? null, name: body.name ?? null, metadata: metadataOf(body) });
      return HttpResponse.json(c);
    })),
    http.get(`${base}/customers/:id`, ({ params }) => {
      const c = state.get(String(params.id), "customer");
      return c ? HttpResponse.json(c) : providerError(404, "invalid_request_error", `No such customer: '${params.id}'`, { code: "resource_missing" });
    }),

    http.post(`${base}/payment_intents`, idempotent(state, (body) => {
      const amount = Number(body.amount);
      if (!Number.isInteger(amount) || amount <= 0) return providerError(400, "invalid_request_error", "Invalid positive integer", { param: "amount" });
      if (typeof body.currency !== "string" || !/^[a-z]{3}$/.test(body.currency)) {
        return providerError(400, "invalid_request_error", "Invalid currency", { param: "currency" });
      }
      const pi: ProviderObject = { id: state.newId("pi"), object: "payment_intent", created: now(), livemode: false,
        amount, currency: body.currency, customer: body.customer ?? null, status: "requires_payment_method",
        amount_received: 0, latest_charge: null, transfer_group: body.transfer_group ?? null, metadata: metadataOf(body) };
      pi.client_secret = `${pi.id}_secret_${state.newId("s")}`;
      return HttpResponse.json(state.put(pi));
    })),
    http.get(`${base}/payment_intents/:id`, ({ params }) => {
      const pi = state.get(String(params.id), "payment_intent");
      return pi ? HttpResponse.json(pi) : providerError(404, "invalid_request_error", `No such payment_intent: '${params.id}'`, { code: "resource_missing" });
    }),
  ];
}

export { formBody };
