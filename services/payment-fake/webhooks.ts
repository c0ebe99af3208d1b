// Events and their signed delivery to the app's webhook endpoints, with test modes that deliver twice,
// late or held back (then released in or out of order), and retries with growing delays.
import Stripe from "stripe";
// The seeded generator the simulations use, so a shuffled release is reproducible from its seed.
import { mulberry32 } from "../../app/diffraction/simulate";
import { now } from "./api";
import type { DeliveryRecord, FakeState, ProviderObject } from "./state";

export type DeliveryMode = { mode: "normal" } | { mode: "twice" } | { mode: "late"; lateMs: number } | { mode: "hold" };
export type ReleaseOrder = "as_created" | "reversed" | "shuffled";

export interface WebhookOptions {
  urls: string[];
  secret: string;
  /** Delay before each retry of a failed delivery; the number of entries is the number of retries. */
  retryDelaysMs: number[];
  /** How long one delivery attempt may take before it counts as failed. */
  attemptTimeoutMs: number;
}

/** Which request caused the events being created now (set synchronously around each API call). */
export const requestContext: { id: string | null; idempotencyKey: string | null } = { id: null, idempotencyKey: null };

export class Webhooks {
  endpoints: Set<string>;
  delivery: DeliveryMode = { mode: "normal" };
  private timers = new Set<NodeJS.Timeout>();
  private inFlight = new Set<Promise<void>>();
  private closed = false;
  // Aborts deliveries under way when the fake closes, so close() does not wait for a slow receiver.
  private closing = new AbortController();

  constructor(
    private state: FakeState,
    private opts: WebhookOptions,
  ) {
    this.endpoints = new Set(opts.urls);
    // Deliveries that were under way when the process stopped are tried again; held ones stay held.
    for (const d of state.deliveries.values()) {
      if (d.status === "pending" || d.status === "delivering") this.schedule(d, 0);
    }
  }

  /** Records an event for a state change and queues its delivery to every endpoint. */
  emit(type: string, object: ProviderObject, extra: { previous?: Record<string, unknown>; account?: string } = {}) {
    const event: ProviderObject = {
      id: this.state.newId("evt"),
      object: "event",
      ...(extra.account ? { account: extra.account } : {}),
      api_version: Stripe.API_VERSION,
      created: now(),
      data: { object: structuredClone(object), ...(extra.previous ? { previous_attributes: extra.previous } : {}) },
      livemode: false,
      pending_webhooks: this.endpoints.size,
      request: { id: requestContext.id, idempotency_key: requestContext.idempotencyKey },
      type,
    };
    this.state.put(event);
    const copies = this.delivery.mode === "twice" ? 2 : 1;
    for (const url of this.endpoints) {
      for (let i = 0; i < copies; i++) {
        const d: DeliveryRecord = {
          id: this.state.newId("whd"),
          seq: this.state.nextSeq(),
          eventId: event.id,
          url,
          status: this.delivery.mode === "hold" ? "held" : "pending",
          attempts: 0,
          lastStatusCode: null,
          lastError: null,
          deliveredAt: null,
        };
        this.state.deliveries.set(d.id, d);
        // Never inline: the API answer goes out first, as with the real provider.
        if (d.status === "pending") this.schedule(d, this.delivery.mode === "late" ? this.delivery.lateMs : 0);
      }
    }
    this.state.save();
    return event;
  }

  private schedule(d: DeliveryRecord, delayMs: number) {
    if (this.closed) return;
    const t = setTimeout(() => {
      this.timers.delete(t);
      void this.track(this.attempt(d));
    }, delayMs);
    this.timers.add(t);
  }

  private track(p: Promise<void>) {
    this.inFlight.add(p);
    return p.finally(() => this.inFlight.delete(p));
  }

  /** The signed request body exactly as the app's `constructEvent` must see it. */
  signedPayload(event: ProviderObject) {
    const payload = JSON.stringify(event, null, 2);
    const signature = Stripe.webhooks.generateTestHeaderString({ payload, secret: this.opts.secret });
    return { payload, signature };
  }

  private async attempt(d: DeliveryRecord): Promise<void> {
    const event = this.state.get(d.eventId, "event");
    if (!event || this.closed) return;
    d.status = "delivering";
    d.attempts += 1;
    const { payload, signature } = this.signedPayload(event);
    try {
      const res = await fetch(d.url, {
        method: "POST",
        headers: { "content-type": "application/json; charset=utf-8", "stripe-signature": signature, "user-agent": "payment-fake/1.0" },
        body: payload,
        signal: AbortSignal.any([AbortSignal.timeout(this.opts.attemptTimeoutMs), this.closing.signal]),
      });
      await res.arrayBuffer().catch(() => undefined);
      d.lastStatusCode = res.status;
      d.lastError = res.ok ? null : `HTTP ${res.status}`;
    } catch (err) {
      d.lastStatusCode = null;
      const cause = (err as { cause?: { code?: string; message?: string } }).cause;
      d.lastError = cause?.code ?? cause?.message ?? (err as Error).message ?? String(err);
    }
    if (this.closed) return;
    if (d.lastError === null) {
      d.status = "delivered";
      d.deliveredAt = now();
    } else if (d.attempts <= this.opts.retryDelaysMs.length) {
      d.status = "pending";
      this.schedule(d, this.opts.retryDelaysMs[d.attempts - 1]);
    } else {
      d.status = "failed";
    }
    this.state.save();
  }

  /**
   * Delivers every held event, one after the other (each first attempt awaited, so the receiver sees
   * them in exactly this order); failures go on to the normal retries.
   */
  async release(order: ReleaseOrder = "as_created", seed = 1) {
    const held = [...this.state.deliveries.values()].filter((d) => d.status === "held").sort((a, b) => a.seq - b.seq);
    if (order === "reversed") held.reverse();
    if (order === "shuffled") {
      const rnd = mulberry32(seed);
      for (let i = held.length - 1; i > 0; i--) {
        const j = Math.floor(rnd() * (i + 1));
        [held[i], held[j]] = [held[j], held[i]];
      }
    }
    for (const d of held) d.status = "pending";
    for (const d of held) await this.track(this.attempt(d));
    return held.map((d) => ({
      delivery: d.id,
      event: d.eventId,
      type: this.state.get(d.eventId, "event")?.type,
      url: d.url,
      status: d.status,
      statusCode: d.lastStatusCode,
    }));
  }

  /** Waits until no delivery is pending or under way (held ones do not count), or the time is up. */
  async settle(timeoutMs = 5000) {
    const until = Date.now() + timeoutMs;
    const busy = () => [...this.state.deliveries.values()].filter((d) => d.status === "pending" || d.status === "delivering").length;
    while (busy() > 0 && Date.now() < until) await new Promise((r) => setTimeout(r, 10));
    return { settled: busy() === 0, pending: busy() };
  }

  eventsWithDeliveries() {
    const byEvent = new Map<string, DeliveryRecord[]>();
    for (const d of this.state.deliveries.values()) {
      const list = byEvent.get(d.eventId) ?? [];
      list.push(d);
      byEvent.set(d.eventId, list);
    }
    return this.state.list("event").map((e) => ({
      id: e.id,
      type: e.type,
      created: e.created,
      object_id: (e.data as { object: { id: string } }).object.id,
      deliveries: (byEvent.get(e.id) ?? []).map(({ id, url, status, attempts, lastStatusCode, lastError, deliveredAt }) => ({
        id,
        url,
        status,
        attempts,
        lastStatusCode,
        lastError,
        deliveredAt,
      })),
    }));
  }

  async close() {
    this.closed = true;
    this.closing.abort();
    for (const t of this.timers) clearTimeout(t);
    this.timers.clear();
    await Promise.allSettled([...this.inFlight]);
  }
}
