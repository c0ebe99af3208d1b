// The Express app around React Router: security headers, the same-origin rule for writes, the load context.
import "react-router";
import { createRequestHandler } from "@react-router/express";
import express from "express";
import type { NextFunction, Request, Response } from "express";
import { publicCache } from "~/utils/public-cache.server";
import { databaseGate } from "~/utils/database-gate.server";
import { contentSecurityPolicy, newNonce } from "~/utils/csp.server";
import { withRequestScope } from "~/utils/request-scope.server";

export const app = express();
app.disable("x-powered-by");
// Behind a proxy (production, or the two-server setup) the client address, scheme and host come from the
// X-Forwarded-* headers; without it every client would share the proxy's address (and its sign-in limit).
if (process.env.TRUST_PROXY) app.set("trust proxy", trustProxySetting(process.env.TRUST_PROXY));

/** `TRUST_PROXY`: `true`, a hop count (`1`), or addresses/subnets/names Express knows (`loopback`, `10.0.0.0/8`). */
export function trustProxySetting(value: string): boolean | number | string {
  if (value === "true") return true;
  if (/^\d+$/.test(value)) return Number(value);
  return value;
}

const local = process.env.NODE_ENV !== "production" || process.env.DIFFRACTORY_LOCAL === "1";
const development = process.env.NODE_ENV !== "production";

app.use((_req: Request, res: Response, next: NextFunction) => {
  // A fresh nonce per response; React Router's own inline scripts carry it (app/entry.server.tsx, root.tsx).
  const nonce = newNonce();
  res.locals.cspNonce = nonce;
  res.setHeader("Content-Security-Policy", contentSecurityPolicy(nonce, { development }));
  res.setHeader("X-Content-Type-Options", "nosniff");
  res.setHeader("Referrer-Policy", "strict-origin-when-cross-origin");
  res.setHeader("X-Frame-Options", "DENY");
  if (!local) res.setHeader("Strict-Transport-Security", "max-age=31536000; includeSubDomains");
  next();
});

const SAFE_METHODS = new Set(["GET", "HEAD", "OPTIONS"]);

/**
 * Writes from another site are refused before any action runs. Browsers send Origin on every POST;
 * clients without one (instrument computers with a token, provider webhooks) are not browsers.
 */
export function originAllowed(req: Pick<Request, "method" | "headers">) {
  if (SAFE_METHODS.has(req.method)) return true;
  const origin = req.headers.origin;
  if (!origin) return req.headers["sec-fetch-site"] !== "cross-site";
  if (origin === "null") return false;
  try {
    const allowed = new Set([req.headers.host, process.env.APP_URL && new URL(process.env.APP_URL).host].filter(Boolean));
    return allowed.has(new URL(origin).host);
  } catch {
    return false;
  }
}

app.use((req: Request, res: Response, next: NextFunction) => {
  if (originAllowed(req)) return next();
  res.status(403).type("text/plain").send("Refused: this request came from another site.");
});

// While PostgreSQL is unreachable, a clear 503 page or JSON instead of an error from deep inside a loader.
app.use(databaseGate);

// Answers marked public (the directory API) are served from memory for a few seconds.
app.use(publicCache);

const handleRequest = createRequestHandler({
  // Built once in production; in development Vite hands over the current build on every request.
  build: process.env.NODE_ENV === "production" ? await import("virtual:react-router/server-build") : () => import("virtual:react-router/server-build"),
  getLoadContext(req, res) {
    return { clientAddress: req.ip ?? req.socket.remoteAddress ?? "unknown", cspNonce: String(res.locals.cspNonce ?? "") };
  },
});
// The loaders of one GET request share their session lookup (app/utils/request-scope.server.ts); requests
// that run an action do not, so a loader after it reads what the action changed.
app.use((req: Request, res: Response, next: NextFunction) =>
  SAFE_METHODS.has(req.method) ? withRequestScope(() => handleRequest(req, res, next)) : handleRequest(req, res, next),
);
