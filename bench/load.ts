// Load run: autocannon, 100 connections for 30 s each, on the directory API, a signed-in client's requests
// page and the sign-in action, against the production build on a database with 5,000 labs, 50,000 requests
// and 20,000 orders (bench/seed-load.ts); then the same against a bare node:http server running the SQL
// the app ran (bench/bare-server.ts). Prints a table and writes JSON to bench/results/.
// `npm run bench:load`; LOAD_SECONDS shortens the runs, LOAD_ONLY=directory,requests,sign-in picks some,
// LOAD_SKIP_BARE=1 skips the bare server, WEB_CONCURRENCY=n runs n app processes (server/cluster.ts),
// BENCH_APP_PORT / BENCH_BARE_PORT (default 3290 / 3291) the ports. Then the CPU-per-view table of every page
// (bench/cpu.ts) and its growth with the data (bench/cpu-growth.ts) follow, from `npm run bench:load`.
import { queryLogReader } from "./query-log";
import autocannon from "autocannon";
import { spawn, type ChildProcess } from "node:child_process";
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import { root } from "../services/paths";
import { waitForPort } from "../services/process";
import { servicesUp } from "../services/up";
import type { BareSql } from "./bare-server";
import { buildIfNeeded } from "./build";
import { ensureLoadDatabase, LOAD } from "./seed-load";
import { config } from "../app/config.server";
import pg from "pg";

const APP_PORT = Number(process.env.BENCH_APP_PORT ?? 3290);
const BARE_PORT = Number(process.env.BENCH_BARE_PORT ?? 3291);
/** The targets at 100 connections: p95 in ms, and no errors. */
const P95_TARGET_MS: Record<string, number> = { requests: 150, directory: 50 };
const SECONDS = Number(process.env.LOAD_SECONDS ?? 30);
const CONNECTIONS = Number(process.env.LOAD_CONNECTIONS ?? 100);
const ONLY = process.env.LOAD_ONLY?.split(",");
// One below the limit, for the warm-up too; and one more spare, for an attempt still being marked a success when the next is counted.
const SIGN_IN_CONNECTIONS = Math.min(CONNECTIONS, config.signIn.maxFailures - 2);
const DIRECTORY_QUERY = "?technique=powder_reflection&source=Cu&maxPrice=200";
const SIGN_IN_BODY = new URLSearchParams({ email: LOAD.ownerEmail(1), password: LOAD.password }).toString();
const logDir = path.join(root, ".data/logs");

interface Endpoint {
  name: string;
  path: string;
  method: "GET" | "POST";
  expect: number;
  headers?: Record<string, string>;
  body?: string;
  /** Connections for this endpoint, when not CONNECTIONS. */
  connections?: number;
}

async function start(label: string, args: string[], env: NodeJS.ProcessEnv, port: number) {
  const logFile = path.join(logDir, `load-${label}.log`);
  const log = fs.openSync(logFile, "w");
  const child = spawn(process.execPath, ["--import", "tsx", ...args], {
    cwd: root,
    env: { ...process.env, ...env, PORT: String(port) },
    stdio: ["ignore", log, log],
  });
  await waitForPort(port, label, 60_000);
  return { child, logFile };
}

async function stop(child: ChildProcess) {
  if (child.exitCode !== null) return;
  child.kill("SIGTERM");
  await new Promise((r) => child.once("exit", r));
}

const appEnv = (dbUrl: string, extra: NodeJS.ProcessEnv = {}) => ({
  DATABASE_URL: dbUrl,
  NODE_ENV: "production",
  DIFFRACTORY_LOCAL: "1",
  APP_URL: `http://127.0.0.1:${APP_PORT}`,
  ...extra,
});

async function signIn(base: string) {
  const res = await fetch(`${base}/sign-in`, {
    method: "POST",
    redirect: "manual",
    headers: { "Content-Type": "application/x-www-form-urlencoded", Origin: base },
    body: SIGN_IN_BODY,
  });
  const cookie = res.headers.get("set-cookie")?.split(";")[0];
  if (res.status !== 302 || !cookie) throw new Error(`sign-in answered ${res.status} without a session cookie`);
  return cookie;
}

/** Runs each request once against an app that logs its SQL, and returns the queries each one ran. */
async function captureSql(dbUrl: string): Promise<{ sql: BareSql; cookie: string }> {
  const { child, logFile } = await start("capture", ["server/main.ts"], appEnv(dbUrl, { DIFFRACTORY_LOG_SQL: "1" }), APP_PORT);
  const base = `http://127.0.0.1:${APP_PORT}`;
  const queriesSince = queryLogReader(logFile);
  try {
    queriesSince();
    const cookie = await signIn(base);
    await new Promise((r) => setTimeout(r, 200));
    const signInQueries = queriesSince();
    const res1 = await fetch(`${base}/api/labs${DIRECTORY_QUERY}`);
    if (!res1.ok) throw new Error(`directory answered ${res1.status}`);
    await res1.arrayBuffer();
    await new Promise((r) => setTimeout(r, 200));
    const directory = queriesSince();
    const res2 = await fetch(`${base}/client/requests`, { headers: { Cookie: cookie } });
    if (!res2.ok) throw new Error(`requests page answered ${res2.status}`);
    await res2.arrayBuffer();
    await new Promise((r) => setTimeout(r, 200));
    // The same query with the same parameters runs once in the bare handler.
    const seen = new Set<string>();
    const requestsPage = queriesSince().filter((q) => {
      // Timestamps (the session's "not expired yet" bound) differ by a millisecond between the two lookups.
      const key = JSON.stringify(q).replace(/\d{4}-\d\d-\d\dT[\d:.]+Z/g, "t");
      return seen.has(key) ? false : (seen.add(key), true);
    });
    const userLookup = signInQueries.find((q) => /from "users" where lower\(/.test(q.query));
    const sessionInsert = signInQueries.find((q) => /^insert into "sessions"/.test(q.query));
    if (!userLookup || !sessionInsert) throw new Error("the sign-in queries were not found in the app's SQL log");
    const sql: BareSql = { directory, requestsPage, userLookup, sessionInsert };
    fs.writeFileSync(path.join(logDir, "load-sql.json"), JSON.stringify(sql, null, 2));
    return { sql, cookie };
  } finally {
    await stop(child);
  }
}

interface Row {
  target: "app" | "bare";
  endpoint: string;
  connections: number;
  requests: number;
  rps: number;
  medianMs: number;
  p95Ms: number;
  p97_5Ms: number;
  p99Ms: number;
  errors: number;
  timeouts: number;
  non2xx: number;
  unexpectedStatus: number;
  statusCodes: Record<string, number>;
  bytesPerResponse: number;
  /** The 1-minute load average before and after the run (2 would be both cores busy). */
  loadAverage: [number, number];
}

async function hammer(base: string, e: Endpoint, seconds: number, connections: number, record = true) {
  const times: number[] = [];
  const instance = autocannon({
    url: base + e.path,
    method: e.method,
    headers: e.headers,
    body: e.body,
    connections,
    duration: seconds,
  });
  if (record) instance.on("response", (_c: unknown, _status: number, _bytes: number, ms: number) => times.push(ms));
  const result = await instance;
  times.sort((a, b) => a - b);
  const pct = (p: number) => (times.length ? times[Math.min(times.length - 1, Math.floor((p / 100) * times.length))] : NaN);
  const statusCodes = Object.fromEntries(Object.entries(result.statusCodeStats ?? {}).map(([k, v]) => [k, (v as { count: number }).count]));
  const total = Object.values(statusCodes).reduce((a, b) => a + b, 0);
  return {
    requests: total,
    rps: total / seconds,
    medianMs: pct(50),
    p95Ms: pct(95),
    p97_5Ms: result.latency.p97_5,
    p99Ms: result.latency.p99,
    errors: result.errors,
    timeouts: result.timeouts,
    non2xx: result.non2xx,
    unexpectedStatus: total - (statusCodes[String(e.expect)] ?? 0),
    statusCodes,
    bytesPerResponse: total ? Math.round(result.throughput.total / total) : 0,
  };
}

async function runAll(target: "app" | "bare", base: string, endpoints: Endpoint[]): Promise<Row[]> {
  const rows: Row[] = [];
  for (const e of endpoints) {
    await hammer(base, e, 3, Math.min(10, e.connections ?? CONNECTIONS), false); // warm-up, at no more connections than the run
    // Other work on the machine skews the figures: the 1-minute load average is kept beside each run.
    const loadBefore = os.loadavg()[0];
    const r = await hammer(base, e, SECONDS, e.connections ?? CONNECTIONS);
    const row = { target, endpoint: e.name, connections: e.connections ?? CONNECTIONS, ...r, loadAverage: [loadBefore, os.loadavg()[0]] as [number, number] };
    rows.push(row);
    console.log(
      `  ${target.padEnd(4)} ${e.name.padEnd(16)} ${String(row.connections).padStart(3)} conn ${r.rps.toFixed(0).padStart(6)} req/s  median ${r.medianMs.toFixed(1)} ms  p95 ${r.p95Ms.toFixed(1)} ms  errors ${r.errors + r.timeouts}  unexpected status ${r.unexpectedStatus}  load ${row.loadAverage.map((l) => l.toFixed(1)).join("→")}`,
    );
  }
  return rows;
}

await servicesUp({ quiet: true });
const dbUrl = await ensureLoadDatabase();
{
  // Attempts an earlier run left counted as failures (a run stopped mid-way) would refuse this run's sign-ins.
  const c = new pg.Client({ connectionString: dbUrl });
  await c.connect();
  await c.query("delete from sign_in_attempts");
  await c.end();
}
buildIfNeeded();
const { sql } = await captureSql(dbUrl);

const endpointsFor = (base: string, cookie: string) =>
  (
    [
      { name: "directory", path: `/api/labs${DIRECTORY_QUERY}`, method: "GET", expect: 200 },
      { name: "requests", path: "/client/requests", method: "GET", expect: 200, headers: { Cookie: cookie } },
      {
        // Sign-in reserves each attempt as a failure until its password check ends and refuses a sixth at once
        // from one e-mail or address (app/models/accounts/sign-in-limit.server.ts): at 100 connections from one
        // address the bench would measure that refusal, so sign-in runs at fewer connections than the limit.
        name: "sign-in",
        path: "/sign-in",
        method: "POST",
        expect: 302,
        headers: { "Content-Type": "application/x-www-form-urlencoded", Origin: base },
        body: SIGN_IN_BODY,
        connections: SIGN_IN_CONNECTIONS,
      },
    ] satisfies Endpoint[] as Endpoint[]
  ).filter((e) => !ONLY || ONLY.includes(e.name));

const rows: Row[] = [];
const workers = Number(process.env.WEB_CONCURRENCY ?? 1);
console.log(`app: ${workers} process(es), ${CONNECTIONS} connections × ${SECONDS} s per endpoint, on ${os.cpus().length} cores`);
{
  const { child } = await start("app", [workers > 1 ? "server/cluster.ts" : "server/main.ts"], appEnv(dbUrl, { WEB_CONCURRENCY: String(workers) }), APP_PORT);
  try {
    const base = `http://127.0.0.1:${APP_PORT}`;
    const cookie = await signIn(base);
    rows.push(...(await runAll("app", base, endpointsFor(base, cookie))));
  } finally {
    await stop(child);
  }
}
if (!process.env.LOAD_SKIP_BARE) {
  const sqlFile = path.join(logDir, "load-sql.json");
  fs.writeFileSync(sqlFile, JSON.stringify(sql));
  const { child } = await start("bare", ["bench/bare-server.ts"], { DATABASE_URL: dbUrl, BARE_SQL: sqlFile }, BARE_PORT);
  try {
    const base = `http://127.0.0.1:${BARE_PORT}`;
    rows.push(...(await runAll("bare", base, endpointsFor(base, "diffractory_session=bare"))));
  } finally {
    await stop(child);
  }
}

console.log(
  `\nendpoint          target  conn    req/s  median ms  p95 ms  p97.5 ms  p99 ms  errors  non-2xx  unexpected  app/bare req/s  app/bare p95  p95 target`,
);
for (const r of rows) {
  const bare = rows.find((b) => b.target === "bare" && b.endpoint === r.endpoint);
  const ratio = r.target === "app" && bare ? (r.rps / bare.rps).toFixed(2) : "";
  const p95Ratio = r.target === "app" && bare ? (r.p95Ms / bare.p95Ms).toFixed(2) : "";
  const target = P95_TARGET_MS[r.endpoint];
  const check =
    r.target === "app" && target !== undefined
      ? `≤ ${target} ms ${r.p95Ms <= target && r.errors + r.timeouts === 0 && r.unexpectedStatus === 0 ? "met" : "MISSED"}`
      : "";
  console.log(
    `${r.endpoint.padEnd(17)} ${r.target.padEnd(6)} ${String(r.connections).padStart(5)} ${r.rps.toFixed(0).padStart(7)} ${r.medianMs.toFixed(1).padStart(10)} ${r.p95Ms.toFixed(1).padStart(7)} ${r.p97_5Ms.toFixed(1).padStart(9)} ${r.p99Ms.toFixed(1).padStart(7)} ${String(r.errors + r.timeouts).padStart(7)} ${String(r.non2xx).padStart(8)} ${String(r.unexpectedStatus).padStart(11)} ${ratio.padStart(15)} ${p95Ratio.padStart(13)}  ${check}`,
  );
}
console.log(
  "median and p95: from every response time autocannon reported; p97.5 and p99: autocannon's own histogram. 'unexpected' counts answers other than 200 (302 for sign-in).",
);
const out = path.join(root, "bench/results", `load-${new Date().toISOString().replace(/[:.]/g, "-")}.json`);
fs.mkdirSync(path.dirname(out), { recursive: true });
fs.writeFileSync(
  out,
  JSON.stringify(
    {
      at: new Date().toISOString(),
      cores: os.cpus().length,
      appProcesses: workers,
      connections: CONNECTIONS,
      seconds: SECONDS,
      directoryQuery: DIRECTORY_QUERY,
      seeded: LOAD,
      rows,
    },
    null,
    2,
  ),
);
console.log(`written to ${path.relative(root, out)}`);
