// The Express app around React Router: security headers, the methods it takes, the same-origin rule for writes,
// no caching of what a signed-in person is shown, the load context.
import "react-router";
import { createRequestHandler } from "@react-router/express";
import express from "express";
import type { NextFunction, Request, Response } from "express";
import { config } from "~/config.server";
import { publicCache } from "~/utils/public-cache.server";
import { sessionCookie } from "~/utils/session.server";
import { databaseGate } from "~/utils/database-gate.server";
import { limitBodies } from "~/utils/body-limit.server";
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

/** The request carries the session cookie (with a value), or an API token. */
function carriesCredentials(req: Request) {
  if (req.headers.authorization) return true;
  return (req.headers.cookie ?? "").split(";").some((pair) => {
    const at = pair.indexOf("=");
    return at > 0 && pair.slice(0, at).trim() === sessionCookie.name && pair.slice(at + 1).trim() !== "";
  });
}

const setsSessionCookie = (res: Response) =>
  ([] as unknown[]).concat(res.getHeader("set-cookie") ?? []).some((c) => String(c).startsWith(`${sessionCookie.name}=`));

/**
 * What a signed-in person is shown (or an answer that starts or ends a session) must not be kept by the browser's
 * cache or a shared one, where the next person at the computer or behind the proxy would see it:
 * `Cache-Control: private, no-store`, set as the headers go out, after the route has had its say. A route's own
 * no-store is kept, and so is an answer the route marked public (it promises to be the same for everyone, as the
 * directory API is; app/utils/public-cache.server.ts) unless it sets the session cookie.
 */
function privateWhenSignedIn(req: Request, res: Response, next: NextFunction) {
  const signedIn = carriesCredentials(req);
  const writeHead = res.writeHead;
  res.writeHead = function (this: Response, ...args: unknown[]) {
    if (signedIn || setsSessionCookie(res)) {
      const current = String(res.getHeader("cache-control") ?? "");
      const markedPublic = /(?:^|,)\s*public\s*(?:,|$)/i.test(current) && !setsSessionCookie(res);
      if (!/no-store/i.test(current) && !markedPublic) res.setHeader("Cache-Control", "private, no-store");
    }
    return (writeHead as (...a: unknown[]) => Response).apply(this, args);
  } as Response["writeHead"];
  next();
}
app.use(privateWhenSignedIn);

/**
 * The methods Diffractory answers. Others get a 405 here: TRACE would otherwise fail inside React Router as a 500
 * (a fetch Request cannot have it), and no screen or API uses any other.
 */
const METHODS = ["GET", "HEAD", "OPTIONS", "POST", "PUT", "PATCH", "DELETE"];
app.use((req: Request, res: Response, next: NextFunction) => {
  if (METHODS.includes(req.method)) return next();
  res
    .status(405)
    .set("Allow", METHODS.join(", "))
    .type("text/plain")
    .send(`Diffractory does not answer ${req.method} requests; it takes ${METHODS.join(", ")}.`);
});

const SAFE_METHODS = new Set(["GET", "HEAD", "OPTIONS"]);

/**
 * Writes from another site are refused before any action runs. Browsers send Origin on every POST;
 * clients without one (instrument computers with a token, provider webhooks) are not browsers.
 * An origin is scheme, host and port: https://host is another site than http://host. The request's own
 * origin comes from its scheme and Host, or from X-Forwarded-Proto/-Host behind TRUST_PROXY.
 */
export function originAllowed(req: Pick<Request, "method" | "headers" | "protocol" | "host">) {
  if (SAFE_METHODS.has(req.method)) return true;
  const origin = req.headers.origin;
  if (!origin) return req.headers["sec-fetch-site"] !== "cross-site";
  if (origin === "null") return false;
  try {
    const own = [new URL(config.appUrl).origin];
    if (req.host) own.push(new URL(`${req.protocol}://${req.host}`).origin);
    return own.includes(new URL(origin).origin);
  } catch {
    return false;
  }
}

app.use((req: Request, res: Response, next: NextFunction) => {
  if (originAllowed(req)) return next();
  res.status(403).type("text/plain").send("Refused: this request came from another site.");
});

// One body limit for every route before anything reads a body: a 413 at once for a declared length over it, and
// a chunked body cut off where it passes it (app/utils/body-limit.server.ts). No route buffers a large body.
app.use(limitBodies);

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
