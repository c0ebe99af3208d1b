// The payment-provider fake: a stateful msw server on loopback, reached by the real SDK over plain HTTP.
import path from "node:path";
import type { Server } from "node:http";
import { createServer } from "@mswjs/http-middleware";
import { dataDir } from "../paths";
import { isMain } from "../process";
import { paymentHandlers } from "./handlers";
import { FakeState } from "./state";

export async function startPaymentFake(opts: { port: number; file?: string }) {
  const state = new FakeState(opts.file ?? path.join(dataDir, "payments", "state.json"));
  const app = createServer(...paymentHandlers(state));
  const server: Server = await new Promise((resolve) => {
    const s = app.listen(opts.port, "127.0.0.1", () => resolve(s));
  });
  return { state, close: () => new Promise<void>((r) => server.close(() => r())) };
}

if (isMain(import.meta.url)) {
  const port = Number(process.env.PAYMENTS_FAKE_PORT ?? 54332);
  await startPaymentFake({ port });
  console.log(`payment fake listening on 127.0.0.1:${port}`);
}
