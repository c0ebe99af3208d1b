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
