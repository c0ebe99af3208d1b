// While PostgreSQL cannot be reached (a restart, a failover), requests get a clear 503 instead of a generic
// error page: the pool's connection failures raise a suspicion, and while it stands each request first asks
// the database (one shared probe at a time); the first answer clears it, without restarting anything.
import type { NextFunction, Request, Response } from "express";
import type pg from "pg";
import { db } from "~/db/client.server";

export const DATABASE_UNAVAILABLE =
  "The database cannot be reached just now (it may be restarting), so nothing was read or saved. Please try again in a minute.";

// Connection-level failures: refused, reset, timed out, or the server ending sessions (SQLSTATE class 08 and 57P0x).
const CONNECTION_CODES = new Set(["ECONNREFUSED", "ECONNRESET", "ETIMEDOUT", "EPIPE", "ENOTFOUND", "57P01", "57P02", "57P03"]);

export function isConnectionFailure(err: unknown): boolean {
  for (let e = err as { code?: string; message?: string; cause?: unknown } | undefined, depth = 0; e && depth < 4; e = e.cause as typeof e, depth++) {
    if (e.code && (CONNECTION_CODES.has(e.code) || e.code.startsWith("08"))) return true;
    if (/Connection terminated|connection timeout|Client has encountered a connection error/i.test(e.message ?? "")) return true;
  }
  return false;
}

const g = globalThis as unknown as { __diffractoryDbGate?: { suspectSince: number | null; probe: Promise<boolean> | null } };
const state = (g.__diffractoryDbGate ??= { suspectSince: null, probe: null });

function suspect(err: unknown) {
  if (isConnectionFailure(err)) state.suspectSince ??= Date.now();
}

/** Watches the app's pool: an idle client's error and a failed query or checkout raise the suspicion. */
function watch(pool: pg.Pool & { __gateWatched?: boolean }) {
  if (pool.__gateWatched) return;
  pool.__gateWatched = true;
  pool.on("error", suspect);
  const query = pool.query.bind(pool) as (...args: unknown[]) => unknown;
  (pool as { query: unknown }).query = (...args: unknown[]) => {
    const out = query(...args);
    if (out && typeof (out as Promise<unknown>).catch === "function") (out as Promise<unknown>).catch(suspect);
    return out;
  };
  const connect = pool.connect.bind(pool) as (...args: unknown[]) => unknown;
  (pool as { connect: unknown }).connect = (...args: unknown[]) => {
    const out = connect(...args);
    if (out && typeof (out as Promise<unknown>).catch === "function") (out as Promise<unknown>).catch(suspect);
    return out;
  };
}
watch(db.$client);

/** Asks the database once (shared by concurrent requests); true when it answered within the time. */
function probe(): Promise<boolean> {
  state.probe ??= (async () => {
    let timer: NodeJS.Timeout | undefined;
    try {
      await Promise.race([db.$client.query("select 1"), new Promise((_, reject) => (timer = setTimeout(() => reject(new Error("no answer")), 1500)))]);
      state.suspectSince = null;
      return true;
    } catch {
      return false;
    } finally {
      clearTimeout(timer);
      state.probe = null;
    }
  })();
  return state.probe;
}

function wantsJson(req: Request) {
  return req.path.startsWith("/api/") || (req.get("accept") ?? "").includes("application/json") || req.path.endsWith(".data");
}

const PAGE = `<!doctype html><html lang="en"><head><meta charset="utf-8"><meta name="viewport" content="width=device-width, initial-scale=1"><title>Briefly unavailable · Diffractory</title></head><body><main data-status="503"><p>Error 503</p><h1>Diffractory is briefly unavailable</h1><p>${DATABASE_UNAVAILABLE}</p><p><a href="">Try again</a></p></main></body></html>`;

function unavailableBody(req: Request, res: Response) {
  res.status(503);
  res.removeHeader("Content-Length");
  res.removeHeader("ETag");
  res.setHeader("Retry-After", "30");
  res.setHeader("Cache-Control", "no-store");
  res.setHeader("Content-Type", wantsJson(req) ? "application/json; charset=utf-8" : "text/html; charset=utf-8");
  return wantsJson(req) ? JSON.stringify({ error: DATABASE_UNAVAILABLE }) : PAGE;
}

/**
 * The request that runs into the outage first finds no suspicion yet and fails inside a loader (500);
 * when its failure raised the suspicion, its generic error page is swapped for the 503 before anything is sent.
 */
function swapFailureFor503(req: Request, res: Response) {
  const write = res.write.bind(res) as (...args: unknown[]) => boolean;
  const end = res.end.bind(res) as (...args: unknown[]) => Response;
  let swap: boolean | null = null;
  const decide = () => (swap ??= res.statusCode === 500 && state.suspectSince !== null && !res.headersSent);
  (res as { write: unknown }).write = (...args: unknown[]) => (decide() ? true : write(...args));
  (res as { end: unknown }).end = (...args: unknown[]) => (decide() ? end(unavailableBody(req, res)) : end(...args));
}

/** Express middleware before the app: a 503 page or JSON while the database is known to be unreachable. */
export async function databaseGate(req: Request, res: Response, next: NextFunction) {
  // The health check reports the database itself; everything else waits for the probe only under suspicion.
  if (req.path === "/api/health") return next();
  if (state.suspectSince === null || (await probe())) {
    swapFailureFor503(req, res);
    return next();
  }
  res.end(unavailableBody(req, res));
}
