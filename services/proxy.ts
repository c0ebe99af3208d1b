// A round-robin reverse proxy on loopback in front of several app servers, as a load balancer would be.
// It keeps the Host header (so the app sees the proxy's public origin) and adds X-Forwarded-For/-Port/-Proto/-Host.
// Run: `npx tsx services/proxy.ts 8080 http://127.0.0.1:3001 http://127.0.0.1:3002`.
import http from "node:http";
import type { AddressInfo } from "node:net";
import httpProxy from "http-proxy";
import { isMain } from "./process";

export interface RoundRobinProxy {
  /** The public origin, e.g. `http://127.0.0.1:8080`. */
  url: string;
  port: number;
  upstreams: string[];
  /** Requests sent to each upstream, in the order of `upstreams`. */
  hits: number[];
  close(): Promise<void>;
}

export interface ProxyOptions {
  upstreams: string[];
  /** 0 (the default) picks a free port. */
  port?: number;
  host?: string;
}

/** Starts the proxy; each request goes to the next upstream in turn (no stickiness: the app servers share nothing). */
export async function startProxy({ upstreams, port = 0, host = "127.0.0.1" }: ProxyOptions): Promise<RoundRobinProxy> {
  if (upstreams.length === 0) throw new Error("The proxy needs at least one upstream.");
  const proxy = httpProxy.createProxyServer({ xfwd: true, changeOrigin: false, proxyTimeout: 120_000 });
  const hits = upstreams.map(() => 0);
  let next = 0;
  proxy.on("error", (err, _req, res) => {
    // An upstream that is down answers 502, as a load balancer would; the proxy itself keeps running.
    if (res instanceof http.ServerResponse && !res.headersSent) {
      res.writeHead(502, { "Content-Type": "text/plain" });
      res.end(`Bad gateway: ${err.message}`);
    } else {
      res.destroy();
    }
  });
  const server = http.createServer((req, res) => {
    const i = next;
    next = (next + 1) % upstreams.length;
    hits[i]++;
    res.setHeader("X-Upstream", String(i));
    proxy.web(req, res, { target: upstreams[i] });
  });
  await new Promise<void>((resolve, reject) => {
    server.once("error", reject);
    server.listen(port, host, () => resolve());
  });
  const bound = (server.address() as AddressInfo).port;
  return {
    url: `http://${host}:${bound}`,
    port: bound,
    upstreams,
    hits,
    close: () =>
      new Promise<void>((resolve) => {
        server.closeAllConnections();
        server.close(() => {
          proxy.close();
          resolve();
        });
      }),
  };
}

if (isMain(import.meta.url)) {
  const [portArg, ...upstreams] = process.argv.slice(2);
  if (!portArg || upstreams.length === 0) {
    console.error("usage: tsx services/proxy.ts <port> <upstream URL> [<upstream URL>…]");
    process.exit(2);
  }
  const p = await startProxy({ port: Number(portArg), upstreams });
  console.log(`round-robin proxy on ${p.url} → ${upstreams.join(", ")}`);
  for (const signal of ["SIGTERM", "SIGINT"] as const) process.on(signal, () => void p.close().then(() => process.exit(0)));
}
