// Calls a route module's loader or action in-process, as React Router would, and normalises the answer.
import type { AppLoadContext } from "react-router";

export interface RouteAnswer {
  status: number;
  headers: Headers;
  body: unknown;
}

// biome-ignore lint/suspicious/noExplicitAny: route functions take their generated argument types; tests pass what React Router would
type RouteFn = (args: any) => unknown;

const ORIGIN = "http://127.0.0.1:3000";

export function formRequest(path: string, fields: Record<string, string>, cookie?: string) {
  return new Request(`${ORIGIN}${path}`, {
    method: "POST",
    body: new URLSearchParams(fields),
    headers: { "Content-Type": "application/x-www-form-urlencoded", Origin: ORIGIN, ...(cookie ? { Cookie: cookie } : {}) },
  });
}

/** A POST with a JSON body, as the upload client and instrument computers send it. */
export function jsonRequest(path: string, body: unknown, headers: Record<string, string> = {}) {
  return new Request(`${ORIGIN}${path}`, {
    method: "POST",
    body: JSON.stringify(body),
    headers: { "Content-Type": "application/json", Origin: ORIGIN, ...headers },
  });
}

export function getRequest(path: string, cookie?: string) {
  return new Request(`${ORIGIN}${path}`, { headers: cookie ? { Cookie: cookie } : {} });
}

async function normalise(value: unknown): Promise<RouteAnswer> {
  if (value instanceof Response) {
    const type = value.headers.get("content-type") ?? "";
    const body = type.includes("json") ? await value.json() : await value.text();
    return { status: value.status, headers: value.headers, body };
  }
  // data() results carry their init beside the data.
  if (value && typeof value === "object" && "type" in value && (value as { type: string }).type === "DataWithResponseInit") {
    const d = value as unknown as { data: unknown; init: ResponseInit | null };
    return { status: d.init?.status ?? 200, headers: new Headers(d.init?.headers), body: d.data };
  }
  return { status: 200, headers: new Headers(), body: value };
}

/** Runs the function; thrown responses (redirects, 403, 404) are answers too. */
export async function callRoute(fn: RouteFn, request: Request, params: Record<string, string> = {}, clientAddress = "192.0.2.10") {
  try {
    const context: AppLoadContext = { clientAddress };
    const url = new URL(request.url);
    return await normalise(await fn({ request, params, context, url, pattern: url.pathname }));
  } catch (thrown) {
    if (thrown instanceof Response) return normalise(thrown);
    if (thrown && typeof thrown === "object" && "type" in thrown) return normalise(thrown);
    throw thrown;
  }
}

/** The cookie pair (name=value) a Set-Cookie header sets, for the next request. */
export function cookieFrom(answer: RouteAnswer, name = "diffractory_session") {
  const all = answer.headers.getSetCookie?.() ?? [answer.headers.get("set-cookie") ?? ""];
  const line = all.find((c) => c.startsWith(`${name}=`));
  return line ? line.split(";")[0] : undefined;
}

const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));

/**
 * A 6-digit code for the person's second factor that the server has not seen yet: the current time step,
 * or the next one when the current was used (the server accepts ±1 step), or — when both were — the code
 * after waiting for the clock. A used step is refused (RFC 6238 §5.2), so fast repeated sign-ins need this.
 */
export async function freshTotpCode(secret: string, lastUsedStep: number | null) {
  const { timeStep, totpCodeAt, TOTP_PERIOD } = await import("~/models/accounts/totp.server");
  const step = Math.max(timeStep(), (lastUsedStep ?? -1) + 1);
  // The server takes step s while its clock is in s-1, s or s+1.
  const opensAt = (step - 1) * TOTP_PERIOD * 1000;
  if (Date.now() < opensAt) await sleep(opensAt - Date.now() + 50);
  return { step, code: totpCodeAt(secret, step) };
}

/**
 * Signs in through the real sign-in action and, for someone with a second factor, the code screen with a
 * code computed from their key (read from the test database); returns the last answer and the session cookie.
 */
export async function signInAs(email: string, { password = "diffractory-demo", address = "192.0.2.10" } = {}) {
  const { action: signIn } = await import("~/routes/public/sign-in");
  const first = await callRoute(signIn, formRequest("/sign-in", { email, password }), {}, address);
  const waiting = cookieFrom(first);
  if (!(first.headers.get("location") ?? "").startsWith("/sign-in/code") || !waiting) return { answer: first, cookie: waiting };
  const { db, schema } = await import("~/db/client.server");
  const { sql } = await import("drizzle-orm");
  const [user] = await db.select().from(schema.users).where(sql`lower(${schema.users.email}) = lower(${email})`);
  const { code } = await freshTotpCode(user.totpSecret!, user.totpLastStep);
  const { action: enterCode } = await import("~/routes/public/sign-in-code");
  const second = await callRoute(enterCode, formRequest("/sign-in/code", { intent: "verify", code }, waiting), {}, address);
  return { answer: second, cookie: cookieFrom(second) };
}

/** The session cookie of a full sign-in (password, and the code when the person has a second factor). */
export async function sessionCookieFor(email: string, options: { password?: string; address?: string } = {}) {
  const { cookie } = await signInAs(email, options);
  if (!cookie) throw new Error(`${email} could not sign in`);
  return cookie;
}

/** sessionCookieFor remembered per person: `const as = sessionCookies();` then `await as(email)` signs each in once. */
export function sessionCookies() {
  const cookies = new Map<string, Promise<string>>();
  return (email: string) => {
    let cookie = cookies.get(email);
    if (!cookie) {
      cookie = sessionCookieFor(email);
      cookies.set(email, cookie);
    }
    return cookie;
  };
}
