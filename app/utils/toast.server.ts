// One-time messages shown after a redirect ("Signed out", "Saved"), carried in a short-lived cookie.
import { createCookieSessionStorage, redirect } from "react-router";
import { config } from "~/config.server";

export interface Toast {
  kind: "success" | "info" | "error";
  message: string;
}

const storage = createCookieSessionStorage<Record<string, never>, { toast: Toast }>({
  cookie: {
    name: "diffractory_toast",
    httpOnly: true,
    sameSite: "lax",
    path: "/",
    secure: config.isProduction,
    secrets: [config.sessionSecret],
  },
});

export async function readToast(request: Request) {
  const session = await storage.getSession(request.headers.get("Cookie"));
  const toast = (session.get("toast") as Toast | undefined) ?? null;
  return { toast, headers: toast ? { "Set-Cookie": await storage.destroySession(session) } : undefined };
}

/** Redirects with a toast; extra Set-Cookie headers (e.g. a new session) are kept. */
export async function redirectWithToast(url: string, toast: Toast, init: { headers?: [string, string][] } = {}) {
  const session = await storage.getSession();
  session.flash("toast", toast);
  const headers = new Headers();
  for (const [k, v] of init.headers ?? []) headers.append(k, v);
  headers.append("Set-Cookie", await storage.commitSession(session));
  return redirect(url, { headers });
}
