// The running app over HTTP: health, /api/me, the same-origin rule for writes, headers, loopback only.
import { execFileSync } from "node:child_process";
import { describe, expect, it } from "vitest";
import { BASE_URL } from "./harness";

describe("HTTP surface", () => {
  it("reports every service healthy", async () => {
    const res = await fetch(`${BASE_URL}/api/health`);
    expect(res.status).toBe(200);
    expect(await res.json()).toEqual({ status: "ok", checks: { database: "ok", storage: "ok", mail: "ok", payments: "ok" } });
  });

  it("answers /api/me with 401 when signed out", async () => {
    const res = await fetch(`${BASE_URL}/api/me`);
    expect(res.status).toBe(401);
  });

  it("refuses a POST that comes from another site with 403 and changes nothing", async () => {
    const body = new URLSearchParams({ email: "owner@halvorsen.example", password: "diffractory-demo" });
    const foreign = await fetch(`${BASE_URL}/sign-in`, {
      method: "POST",
      body,
      redirect: "manual",
      headers: { Origin: "https://evil.example", "Content-Type": "application/x-www-form-urlencoded" },
    });
    expect(foreign.status).toBe(403);
    expect(foreign.headers.get("set-cookie")).toBeNull();
    const same = await fetch(`${BASE_URL}/sign-in`, {
      method: "POST",
      body,
      redirect: "manual",
      headers: { Origin: BASE_URL, "Content-Type": "application/x-www-form-urlencoded" },
    });
    expect(same.status).toBe(302);
    expect(same.headers.get("set-cookie")).toContain("diffractory_session=");
  });

  it("sets the security headers", async () => {
    const res = await fetch(`${BASE_URL}/`);
    expect(res.headers.get("x-content-type-options")).toBe("nosniff");
    expect(res.headers.get("referrer-policy")).toBe("strict-origin-when-cross-origin");
    expect(res.headers.get("x-frame-options")).toBe("DENY");
    // Local runs (DIFFRACTORY_LOCAL=1) are plain HTTP: no HSTS, which would pin the browser to HTTPS here.
    expect(res.headers.get("strict-transport-security")).toBeNull();
  });

  it("sends a Content-Security-Policy whose per-response nonce is on every script tag, and no inline script without it", async () => {
    const policyOf = (res: Response) =>
      Object.fromEntries(
        (res.headers.get("content-security-policy") ?? "")
          .split(";")
          .map((d) => d.trim().split(/\s+/))
          .map(([name, ...values]) => [name, values]),
      );
    const pages = await Promise.all(["/", "/sign-in", "/labs"].map((p) => fetch(`${BASE_URL}${p}`)));
    const nonces = new Set<string>();
    for (const res of pages) {
      const policy = policyOf(res);
      expect(policy["default-src"]).toEqual(["'self'"]);
      expect(policy["frame-ancestors"]).toEqual(["'none'"]);
      expect(policy["object-src"]).toEqual(["'none'"]);
      expect(policy["base-uri"]).toEqual(["'self'"]);
      expect(policy["form-action"]).toEqual(["'self'"]);
      expect(policy["img-src"]).toEqual(["'self'", "data:", "blob:"]);
      // Uploads go from the browser straight to the object store (the S3 fake here).
      expect(policy["connect-src"]).toEqual(["'self'", "http://127.0.0.1:54330"]);
      expect(policy["style-src-elem"]).toEqual(["'self'"]);
      const scriptSrc = policy["script-src"];
      expect(scriptSrc).not.toContain("'unsafe-inline'");
      expect(scriptSrc).not.toContain("'unsafe-eval'");
      const nonce = scriptSrc.find((v: string) => v.startsWith("'nonce-"))?.slice(7, -1);
      expect(nonce).toMatch(/^[A-Za-z0-9+/]{24}$/);
      nonces.add(nonce!);
      const html = await res.text();
      const scripts = [...html.matchAll(/<script\b[^>]*>/g)].map((m) => m[0]);
      expect(scripts.length).toBeGreaterThan(0);
      for (const tag of scripts) expect(tag, tag).toContain(`nonce="${nonce}"`);
      expect(html).not.toMatch(/\son[a-z]+="/);
    }
    expect(nonces.size).toBe(pages.length);
    // JSON and resource answers carry the policy too.
    expect(policyOf(await fetch(`${BASE_URL}/api/health`))["frame-ancestors"]).toEqual(["'none'"]);
  });

  it("serves the shipped DM Sans font from the app's own assets", async () => {
    const html = await (await fetch(`${BASE_URL}/`)).text();
    const css = html.match(/href="(\/assets\/[^"]+\.css)"/)?.[1];
    expect(css).toBeTruthy();
    const sheet = await (await fetch(`${BASE_URL}${css}`)).text();
    const font = sheet.match(/url\((\/assets\/dm-sans[^)]+\.woff2)\)/)?.[1];
    expect(font).toBeTruthy();
    const res = await fetch(`${BASE_URL}${font}`);
    expect(res.status).toBe(200);
  });

  it("listens on loopback addresses only (ss -ltn)", () => {
    const out = execFileSync("ss", ["-ltnH"]).toString();
    const ours = [3100, 54329, 54330, 54331, 54332];
    for (const line of out.split("\n").filter(Boolean)) {
      const local = line.trim().split(/\s+/)[3];
      const port = Number(local.slice(local.lastIndexOf(":") + 1));
      if (ours.includes(port)) expect(local, line).toMatch(/^(127\.0\.0\.1|\[::1\]):/);
    }
  });
});
