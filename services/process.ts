// Small helpers for the service scripts: "run when executed directly", waiting for a port, pid files.
import net from "node:net";
import { fileURLToPath } from "node:url";
import path from "node:path";

export function isMain(metaUrl: string) {
  return process.argv[1] !== undefined && path.resolve(process.argv[1]) === fileURLToPath(metaUrl);
}

export function portOpen(port: number, host = "127.0.0.1", timeoutMs = 500): Promise<boolean> {
  return new Promise((resolve) => {
    const socket = net.connect({ port, host });
    const done = (ok: boolean) => {
      socket.destroy();
      resolve(ok);
    };
    socket.setTimeout(timeoutMs, () => done(false));
    socket.once("connect", () => done(true));
    socket.once("error", () => done(false));
  });
}

export async function waitForPort(port: number, what: string, timeoutMs = 30_000) {
  const until = Date.now() + timeoutMs;
  while (Date.now() < until) {
    if (await portOpen(port)) return;
    await new Promise((r) => setTimeout(r, 100));
  }
  throw new Error(`${what} did not start listening on 127.0.0.1:${port} within ${timeoutMs / 1000} s`);
}
