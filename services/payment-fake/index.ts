// The payment-provider fake: a stateful msw server on loopback, reached by the real SDK over plain HTTP.
// Standalone (`npx tsx services/payment-fake/index.ts`) it keeps its state in .data/payments/state.json;
// in-process (tests) it keeps state in memory unless given a file.
import path from "node:path";
import type { Server } from "node:http";
import type { AddressInfo } from "node:net";
import express from "express";
import { createMiddleware } from "@mswjs/http-middleware";
import { dataDir } from "../paths";
import { isMain } from "../process";
import { controlHandlers, createControls, Faults } from "./controls";
import { paymentHandlers } from "./handlers";
import type { Ctx } from "./payments";
import { FakeState } from "./state";
import { Webhooks } from "./webhooks";

export const DEFAULT_WEBHOOK_URLS = ["http://127.0.0.1:3000/api/webhooks/payments", "http://127.0.0.1:3100/api/webhooks/payments"];
export const DEFAULT_WEBHOOK_SECRET = "whsec_local_fake";

export interface PaymentFakeOptions {
  /** 0 picks a free port; the hosted-page URLs use the port actually bound. */
  port: number;
  file?: string;
  webhookUrls?: string[];
  webhookSecret?: string;
  /** Delays before the retries of a failed webhook delivery (default 0.5 s, 2 s, 8 s, 30 s). */
  retryDelaysMs?: number[];
  deliveryTimeoutMs?: number;
}

export async function startPaymentFake(opts: PaymentFakeOptions) {
  const state = new FakeState(opts.file);
  let baseUrl = `http://127.0.0.1:${opts.port}`;
  const hooks = new Webhooks(state, {
    urls: opts.webhookUrls ?? DEFAULT_WEBHOOK_URLS,
    secret: opts.webhookSecret ?? DEFAULT_WEBHOOK_SECRET,
    retryDelaysMs: opts.retryDelaysMs ?? [500, 2000, 8000, 30_000],
    attemptTimeoutMs: opts.deliveryTimeoutMs ?? 10_000,
  });
  const ctx: Ctx = { state, hooks, baseUrl: () => baseUrl };
  const faults = new Faults();
  const controls = createControls(ctx, faults);

  const app = express();
  app.disable("x-powered-by");
  app.use(faults.middleware());
  app.use(createMiddleware(...controlHandlers(controls), ...paymentHandlers(ctx)));
  app.use((_req, res) => {
    res.status(404).json({ error: { type: "invalid_request_error", message: "Not found in the local payment fake." } });
  });

  const server: Server = await new Promise((resolve, reject) => {
    const s = app.listen(opts.port, "127.0.0.1", (err?: Error) => (err ? reject(err) : resolve(s)));
  });
  const port = (server.address() as AddressInfo).port;
  baseUrl = `http://127.0.0.1:${port}`;

  async function close() {
    faults.close();
    await hooks.close();
    state.flush();
    server.closeAllConnections();
    await new Promise<void>((r) => server.close(() => r()));
  }
  return { state, controls, close, port, url: baseUrl };
}

export type PaymentFake = Awaited<ReturnType<typeof startPaymentFake>>;

if (isMain(import.meta.url)) {
  const port = Number(process.env.PAYMENTS_FAKE_PORT ?? 54332);
  const fake = await startPaymentFake({
    port,
    file: process.env.PAYMENTS_FAKE_STATE_FILE || path.join(dataDir, "payments", "state.json"),
    webhookUrls: process.env.PAYMENTS_WEBHOOK_URLS?.split(",")
      .map((u) => u.trim())
      .filter(Boolean),
    webhookSecret: process.env.STRIPE_WEBHOOK_SECRET || undefined,
  });
  // Pending writes reach the disk before the process goes, so a restart keeps every object.
  const stop = () => {
    void fake.close().finally(() => process.exit(0));
  };
  process.on("SIGTERM", stop);
  process.on("SIGINT", stop);
  console.log(`payment fake listening on ${fake.url}`);
}
