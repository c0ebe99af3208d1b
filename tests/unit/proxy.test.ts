// The loopback round-robin proxy: alternates between upstreams, keeps Host, adds X-Forwarded-*, answers 502 for a dead one.
import express from "express";
import type { Server } from "node:http";
import type { AddressInfo } from "node:net";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { startProxy, type RoundRobinProxy } from "../../services/proxy";

const servers: Server[] = [];
let proxy: RoundRobinProxy;

/** A stand-in app server that says who it is and what Express sees with `trust proxy` = loopback (as TRUST_PROXY=loopback). */
async function upstream(name: string) {
  const app = express();
  app.set("trust proxy", "loopback");
  app.all("/{*rest}", (req, res) => {
    res.json({
      name,
      host: req.headers.host,
      ip: req.ip,
      protocol: req.protocol,
      hostname: req.hostname,
      xff: req.headers["x-forwarded-for"] ?? null,
      xfh: req.headers["x-forwarded-host"] ?? null,
    });
  });
  const server = await new Promise<Server>((resolve) => {
    const s = app.listen(0, "127.0.0.1", () => resolve(s));
  });
  servers.push(server);
  return `http://127.0.0.1:${(server.address() as AddressInfo).port}`;
}

beforeAll(async () => {
  proxy = await startProxy({ upstreams: [await upstream("one"), await upstream("two")] });
});

afterAll(async () => {
  await proxy.close();
  for (const s of servers) await new Promise((r) => s.close(r));
});

describe("round-robin proxy", () => {
  it("alternates between the upstreams, one request each in turn", async () => {
    const names: string[] = [];
    for (let i = 0; i < 6; i++) names.push(((await (await fetch(`${proxy.url}/x`)).json()) as { name: string }).name);
    expect(names).toEqual(["one", "two", "one", "two", "one", "two"]);
    expect(proxy.hits).toEqual([3, 3]);
  });

  it("keeps the public Host and adds X-Forwarded-For and -Host, so the app sees the proxy's origin and the client's address", async () => {
    const res = await fetch(`${proxy.url}/y`, { headers: { "X-Forwarded-For": "203.0.113.7" } });
    const seen = (await res.json()) as Record<string, string>;
    const publicHost = new URL(proxy.url).host;
    expect(seen.host).toBe(publicHost);
    expect(seen.xfh).toBe(publicHost);
    // The client's own X-Forwarded-For is kept and the proxy appends the address it saw (RFC 7239 §5.2 order, common practice).
    expect(seen.xff).toMatch(/^203\.0\.113\.7,\s?(::ffff:)?127\.0\.0\.1$/);
    // With loopback trusted, Express takes the right-most untrusted address: the one the client claimed.
    expect(seen.ip).toBe("203.0.113.7");
    expect(seen.protocol).toBe("http");
    expect(res.headers.get("x-upstream")).toMatch(/^[01]$/);
  });

  it("answers 502 when an upstream is down, and keeps serving through the other", async () => {
    const dead = await upstream("dead");
    const deadServer = servers.pop()!;
    await new Promise((r) => deadServer.close(r));
    const p = await startProxy({ upstreams: [dead, proxy.upstreams[0]] });
    try {
      const a = await fetch(`${p.url}/z`);
      expect(a.status).toBe(502);
      await a.text();
      const b = await fetch(`${p.url}/z`);
      expect(b.status).toBe(200);
      expect(((await b.json()) as { name: string }).name).toBe("one");
    } finally {
      await p.close();
    }
  });
});
