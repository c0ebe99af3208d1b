// Calls a route module's loader or action in-process, as React Router would, and normalises the answer.
import type { AppLoadContext } from "react-router";

export interface RouteAnswer {
  status: number;
  headers: Headers;
  body: unknown;
}

// Route functions take their generated argument types; tests pass what React Router would.
// eslint-disable-next-line @typescript-eslint/no-explicit-any
type RouteFn = (args: any) => unknown;

const ORIGIN = "http://127.0.0.1:3000";

export function formRequest(path: string, fields: Record<string, string>, cookie?: string) {
  return new Request(`${ORIGIN}${path}`, {
    method: "POST",
    body: new URLSearchParams(fields),
    headers: { "Content-Type": "application/x-www-form-urlencoded", Origin: ORIGIN, ...(cookie ? { Cookie: cookie } : {}) },
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
