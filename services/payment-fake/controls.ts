// Test controls under /_fake/ (not part of the provider's API): webhook endpoints, delivery modes,
// injected API faults, a state dump for ledger comparisons, reset, and browserless hosted-page actions.
import type { NextFunction, Request as ExpressRequest, Response as ExpressResponse } from "express";
import { http, HttpResponse } from "msw";
import { completeOnboarding, balances } from "./connect";
import { type Ctx, payCheckoutSession } from "./payments";
import { fundCashBalance, intentByReference } from "./bank-transfers";
import type { CardInput } from "./cards";
import type { DeliveryMode, ReleaseOrder } from "./webhooks";

export interface FaultConfig {
  mode: "none" | "error_500" | "timeout";
  count?: number;
  pathPrefix?: string;
  /** How long a "timeout" fault holds the request; longer than the SDK's timeout (80 s by default). */
  hangMs?: number;
}

const DEFAULT_HANG_MS = 90_000;

/**
 * Injected faults are answered before the request reaches the API handlers, so nothing is executed
 * and nothing is stored under the idempotency key — a retry with the same key runs for real.
 */
export class Faults {
  private config: Required<FaultConfig> = { mode: "none", count: 0, pathPrefix: "/v1/", hangMs: DEFAULT_HANG_MS };
  private timers = new Set<NodeJS.Timeout>();

  set(c: FaultConfig) {
    this.config = {
      mode: c.mode,
      count: c.mode === "none" ? 0 : Math.max(1, c.count ?? 1),
      pathPrefix: c.pathPrefix ?? "/v1/",
      hangMs: c.hangMs ?? DEFAULT_HANG_MS,
    };
    return this.get();
  }

  get() {
    return { ...this.config };
  }

  middleware() {
    return (req: ExpressRequest, res: ExpressResponse, next: NextFunction) => {
      const c = this.config;
      const path = req.path;
      if (c.mode === "none" || c.count <= 0 || !path.startsWith("/v1/") || !path.startsWith(c.pathPrefix)) return next();
      c.count -= 1;
      const mode = c.mode;
      if (c.count === 0) c.mode = "none";
      const answer = () => {
        if (res.headersSent || res.destroyed) return;
        res.status(500).json({ error: { type: "api_error", message: `An unknown error occurred (local test fault: ${mode}).` } });
      };
      if (mode === "error_500") return answer();
      const t = setTimeout(() => {
        this.timers.delete(t);
        answer();
      }, c.hangMs);
      this.timers.add(t);
      res.on("close", () => {
        clearTimeout(t);
        this.timers.delete(t);
      });
    };
  }

  close() {
    for (const t of this.timers) clearTimeout(t);
    this.timers.clear();
  }
}

export function createControls(ctx: Ctx, faults: Faults) {
  const { state, hooks } = ctx;
  return {
    webhookEndpoints: () => [...hooks.endpoints],
    addWebhookEndpoint(url: string) {
      new URL(url);
      hooks.endpoints.add(url);
      return [...hooks.endpoints];
    },
    removeWebhookEndpoint(url: string) {
      hooks.endpoints.delete(url);
      return [...hooks.endpoints];
    },
    setDelivery(mode: DeliveryMode) {
      hooks.delivery = mode.mode === "late" ? { mode: "late", lateMs: Math.max(0, Number(mode.lateMs ?? 1000)) } : ({ mode: mode.mode } as DeliveryMode);
      return hooks.delivery;
    },
    release: (order: ReleaseOrder = "as_created", seed = 1) => hooks.release(order, seed),
    setFaults: (c: FaultConfig) => faults.set(c),
    settle: (timeoutMs?: number) => hooks.settle(timeoutMs),
    events: () => hooks.eventsWithDeliveries(),
    pay: (sessionId: string, card: CardInput) => payCheckoutSession(ctx, sessionId, card),
    /**
     * A bank transfer arriving with a reference (as the provider's `fund_cash_balance` test helper does it, for
     * the customer the reference belongs to); null when no payment has this reference.
     */
    receiveTransfer(reference: string, amount: number, currency?: string) {
      const pi = intentByReference(ctx, reference);
      if (!pi || !Number.isSafeInteger(amount) || amount <= 0) return null;
      return fundCashBalance(ctx, String(pi.customer), { amount: String(amount), currency: currency ?? String(pi.currency), reference });
    },
    completeOnboarding(accountId: string) {
      const a = state.get(accountId, "account");
      return a ? completeOnboarding(ctx, a) : null;
    },
    reset() {
      state.reset();
      hooks.delivery = { mode: "normal" };
      faults.set({ mode: "none" });
    },
    /** Every object by type plus per-currency totals, for comparing the app's ledger with the provider's records. */
    snapshot() {
      const byType: Record<string, unknown[]> = {};
      for (const o of state.objects.values()) if (o.object !== "event") (byType[o.object] ??= []).push(o);
      const sum = (type: string, field: string, keep: (o: Record<string, unknown>) => boolean = () => true) => {
        const out: Record<string, number> = {};
        for (const o of state.list(type)) if (keep(o)) out[String(o.currency)] = (out[String(o.currency)] ?? 0) + Number(o[field]);
        return out;
      };
      const accounts: Record<string, Record<string, number>> = {};
      for (const a of state.list("account")) accounts[a.id] = Object.fromEntries(balances(ctx, a.id));
      return {
        objects: byType,
        totals: {
          charged: sum("charge", "amount", (c) => c.status === "succeeded"),
          refunded: sum("refund", "amount", (r) => r.status === "succeeded"),
          transferred: sum("transfer", "amount"),
        },
        balance: { platform: Object.fromEntries(balances(ctx, null)), accounts },
      };
    },
  };
}

export type Controls = ReturnType<typeof createControls>;

async function json(request: Request): Promise<Record<string, unknown>> {
  const text = await request.text();
  if (!text) return {};
  try {
    return JSON.parse(text);
  } catch {
    return Object.fromEntries(new URLSearchParams(text));
  }
}

const bad = (message: string) => HttpResponse.json({ error: { type: "invalid_request_error", message } }, { status: 400 });

export function controlHandlers(controls: Controls) {
  const base = "*/_fake";
  return [
    http.get(`${base}/webhook-endpoints`, () => HttpResponse.json({ endpoints: controls.webhookEndpoints() })),
    http.post(`${base}/webhook-endpoints`, async ({ request }) => {
      const { url } = await json(request);
      try {
        return HttpResponse.json({ endpoints: controls.addWebhookEndpoint(String(url)) });
      } catch {
        return bad("`url` must be an absolute URL");
      }
    }),
    http.delete(`${base}/webhook-endpoints`, async ({ request }) => {
      const url = new URL(request.url).searchParams.get("url") ?? (await json(request)).url;
      return HttpResponse.json({ endpoints: controls.removeWebhookEndpoint(String(url)) });
    }),
    http.post(`${base}/delivery`, async ({ request }) => {
      const b = await json(request);
      if (!["normal", "twice", "late", "hold"].includes(String(b.mode))) return bad("`mode` must be one of normal, twice, late, hold");
      return HttpResponse.json({ delivery: controls.setDelivery(b as unknown as DeliveryMode) });
    }),
    http.post(`${base}/release`, async ({ request }) => {
      const b = await json(request);
      const order = String(b.order ?? "as_created");
      if (!["as_created", "reversed", "shuffled"].includes(order)) return bad("`order` must be one of as_created, reversed, shuffled");
      const released = await controls.release(order as ReleaseOrder, Number(b.seed ?? 1));
      return HttpResponse.json({ released: released.length, deliveries: released });
    }),
    http.post(`${base}/settle`, async ({ request }) => HttpResponse.json(await controls.settle(Number((await json(request)).timeoutMs ?? 5000)))),
    http.post(`${base}/faults`, async ({ request }) => {
      const b = await json(request);
      if (!["none", "error_500", "timeout"].includes(String(b.mode))) return bad("`mode` must be one of none, error_500, timeout");
      return HttpResponse.json({
        faults: controls.setFaults({
          mode: b.mode as FaultConfig["mode"],
          count: b.count === undefined ? undefined : Number(b.count),
          pathPrefix: b.pathPrefix === undefined ? undefined : String(b.pathPrefix),
          hangMs: b.hangMs === undefined ? undefined : Number(b.hangMs),
        }),
      });
    }),
    http.get(`${base}/state`, () => HttpResponse.json(controls.snapshot())),
    http.post(`${base}/reset`, () => {
      controls.reset();
      return HttpResponse.json({ reset: true });
    }),
    http.get(`${base}/events`, () => HttpResponse.json({ events: controls.events() })),
    http.post(`${base}/pay/:sessionId`, async ({ request, params }) => {
      const b = await json(request);
      try {
        const r = controls.pay(String(params.sessionId), {
          number: String(b.card ?? ""),
          exp: b.exp as string | undefined,
          cvc: b.cvc as string | undefined,
          name: b.name as string | undefined,
        });
        return HttpResponse.json(r);
      } catch {
        return HttpResponse.json({ error: { type: "invalid_request_error", message: `No such checkout.session: '${params.sessionId}'` } }, { status: 404 });
      }
    }),
    http.post(`${base}/transfers`, async ({ request }) => {
      const b = await json(request);
      const r = controls.receiveTransfer(String(b.reference ?? ""), Number(b.amount), b.currency === undefined ? undefined : String(b.currency));
      return r ? HttpResponse.json(r) : bad("`reference` must name a bank-transfer payment and `amount` be a positive whole number of minor units");
    }),
    http.post(`${base}/accounts/:id/complete-onboarding`, ({ params }) => {
      const a = controls.completeOnboarding(String(params.id));
      return a
        ? HttpResponse.json(a)
        : HttpResponse.json({ error: { type: "invalid_request_error", message: `No such account: '${params.id}'` } }, { status: 404 });
    }),
  ];
}
