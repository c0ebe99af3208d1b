// The in-process cache of public answers: what it keeps, for how long, what it never keeps, and purging.
import express from "express";
import type { AddressInfo } from "node:net";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { publicCache, purgePublicCache } from "~/utils/public-cache.server";

let base: string;
let calls = 0;
let server: ReturnType<express.Express["listen"]>;

beforeAll(async () => {
  const app = express();
  app.use((_req, res, next) => {
    res.setHeader("X-Frame-Options", "DENY");
    next();
  });
  app.use(publicCache);
  app.get("/public", (_req, res) => {
    calls++;
    res
      .set({ "Cache-Control": "public, max-age=30", ETag: `"v${calls}"` })
      .type("application/json")
      .send(JSON.stringify({ calls }));
  });
  app.get("/private", (_req, res) => {
    calls++;
    res.set("Cache-Control", "private, max-age=30").send(String(calls));
  });
  app.get("/cookie", (_req, res) => {
    calls++;
    res.set("Cache-Control", "public, max-age=30").cookie("a", "b").send(String(calls));
  });
  app.get("/varies", (_req, res) => {
    calls++;
    res.set({ "Cache-Control": "public, max-age=30", Vary: "Cookie" }).send(String(calls));
  });
  await new Promise<void>((resolve) => {
    server = app.listen(0, "127.0.0.1", () => resolve());
  });
  base = `http://127.0.0.1:${(server.address() as AddressInfo).port}`;
});
afterAll(() => new Promise<void>((resolve) => server.close(() => resolve())));

const get = (path: string, headers: Record<string, string> = {}) => fetch(base + path, { headers });

describe("public answer cache", () => {
  it("answers a repeat of a public URL from memory with its headers, and 304 for its entity tag", async () => {
    purgePublicCache("/");
    const before = calls;
    const a = await get("/public?x=1");
    const b = await get("/public?x=1", { Cookie: "someone=else" });
    expect(await b.text()).toBe(await a.text());
    expect(calls).toBe(before + 1);
    expect(b.headers.get("etag")).toBe(a.headers.get("etag"));
    expect(b.headers.get("content-type")).toContain("application/json");
    // Security headers come from the middleware before the cache, on every answer.
    expect(b.headers.get("x-frame-options")).toBe("DENY");
    const c = await get("/public?x=1", { "If-None-Match": a.headers.get("etag")! });
    expect(c.status).toBe(304);
    // Another query string is another answer.
    await get("/public?x=2");
    expect(calls).toBe(before + 2);
  });

  it("asks again after a purge", async () => {
    const before = calls;
    await get("/public?y=1");
    purgePublicCache("/public");
    await get("/public?y=1");
    expect(calls).toBe(before + 2);
  });

  it("never keeps private answers, answers that set a cookie or vary by more than the encoding", async () => {
    for (const path of ["/private", "/cookie", "/varies"]) {
      const before = calls;
      await get(path);
      await get(path);
      expect(calls, path).toBe(before + 2);
    }
  });
});
