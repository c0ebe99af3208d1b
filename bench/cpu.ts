// CPU time per view of every workspace list and detail page and the public directory, beside a bare handler
// running the same SQL: a figure that holds on a busy shared machine where requests per second do not. The
// server's own user+system CPU time comes from /proc/<pid>/stat over a fixed number of requests at a few
// connections, after a warm-up. The bare server (bench/bare-server.ts) runs, per page, the SQL the app logged
// for it (text and parameters unchanged) and answers with the rows in a plain table.
// `npx tsx bench/cpu.ts`; knobs: CPU_REQUESTS (views per page, default 400; CPU_PAGE_SECONDS caps a slow page), CPU_CONNECTIONS (default 2),
// CPU_PAGES=requests,orders,… (some pages, by name), CPU_BARE=0 skips the bare server, CPU_PROF=dir writes one
// --cpu-prof profile per page (a server per page; summarise with `npx tsx bench/cpu-profile.ts dir`),
// CPU_ENCODING=gzip|br asks for compressed answers, CPU_304=1 also measures a revisit that sends the ETag back,
// CPU_JSON=file writes the rows, CPU_ROOT runs the server of another checkout (its build/ must be current),
// BENCH_APP_PORT (default 3292) the port, LOAD_SCALE the data size (bench/seed-load.ts).
import { queryLogReader } from "./query-log";
import autocannon from "autocannon";
import { spawn, type ChildProcess } from "node:child_process";
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import pg from "pg";
import { root as repoRoot } from "../services/paths";
import { waitForPort } from "../services/process";
import { servicesUp } from "../services/up";
import type { CapturedQuery } from "./bare-server";
import { buildIfNeeded } from "./build";
import { ensureLoadDatabase, LOAD, LOAD_SCALE } from "./seed-load";

const ROOT = process.env.CPU_ROOT ?? repoRoot;
const PORT = Number(process.env.BENCH_APP_PORT ?? 3292);
const REQUESTS = Number(process.env.CPU_REQUESTS ?? 400);
const CONNECTIONS = Number(process.env.CPU_CONNECTIONS ?? 2);
const ONLY = process.env.CPU_PAGES?.split(",");
/** CPU_ENCODING=gzip (or br) asks for a compressed answer, as browsers do; autocannon asks for none by default. */
const ENCODING = process.env.CPU_ENCODING;
const BARE = process.env.CPU_BARE !== "0";
const PROF = process.env.CPU_PROF ? path.resolve(process.env.CPU_PROF) : null;
const TICK_MS = 1000 / 100; // USER_HZ is 100 on Linux
/** The budget of the performance issue: CPU per view of a workspace page. */
const BUDGET_MS = 3;
const logDir = path.join(repoRoot, ".data/logs");

type Who = "client" | "lab" | "admin" | "anyone";
interface Page {
  name: string;
  who: Who;
  path: string;
}

export interface CpuRow {
  page: string;
  path: string;
  appMs: number;
  bareMs: number | null;
  /** CPU per revisit answered 304 (CPU_304=1). */
  notModifiedMs: number | null;
  status: number;
  bytes: number;
  errors: number;
  load: number;
}

function cpuMs(pid: number) {
  // Fields 14 and 15 (utime, stime) after the command name in parentheses.
  const stat = fs.readFileSync(`/proc/${pid}/stat`, "utf8");
  const fields = stat.slice(stat.lastIndexOf(")") + 2).split(" ");
  return (Number(fields[11]) + Number(fields[12])) * TICK_MS;
}

async function start(label: string, args: string[], env: NodeJS.ProcessEnv, prof?: string, cwd = ROOT) {
  const logFile = path.join(logDir, `cpu-${label}.log`);
  const log = fs.openSync(logFile, "w");
  const child = spawn(process.execPath, [...(prof ? ["--cpu-prof", `--cpu-prof-dir=${prof}`] : []), "--import", "tsx", ...args], {
    cwd,
    env: { ...process.env, ...env, PORT: String(PORT) },
    stdio: ["ignore", log, log],
  });
  await waitForPort(PORT, label, 60_000);
  return { child, logFile };
}

async function stop(child: ChildProcess) {
  if (child.exitCode !== null) return;
  child.kill("SIGTERM");
  await new Promise((r) => child.once("exit", r));
}

async function run(url: string, headers: Record<string, string>, amount: number) {
  const statuses: number[] = [];
  const instance = autocannon({
    url,
    headers: { ...headers, ...(ENCODING ? { "Accept-Encoding": ENCODING } : {}) },
    connections: Math.min(CONNECTIONS, amount),
    amount,
    timeout: 120,
  });
  instance.on("response", (_client: unknown, status: number) => {
    statuses.push(status);
  });
  const r = await instance;
  return {
    status: statuses[0] ?? 0,
    allSame: statuses.every((s) => s === statuses[0]),
    errors: r.errors + r.timeouts,
    bytes: Math.round(r.throughput.total / Math.max(1, statuses.length)),
  };
}

/** A page far over budget is viewed fewer times: about CPU_PAGE_SECONDS (default 6) of server CPU, at least 10 views. */
const PAGE_SECONDS = Number(process.env.CPU_PAGE_SECONDS ?? 6);

/** Waits until the server has finished what it was doing (its CPU time stops rising), so no page's work spills into the next's figure. */
async function settle(pid: number) {
  let last = cpuMs(pid);
  for (let i = 0; i < 600; i++) {
    await new Promise((r) => setTimeout(r, 250));
    const now = cpuMs(pid);
    if (now - last < 2 * TICK_MS) return;
    last = now;
  }
}

/** CPU ms per view of one URL on a running server: a warm-up, then REQUESTS views (fewer for a slow page). */
async function measure(child: ChildProcess, url: string, headers: Record<string, string>) {
  await settle(child.pid!);
  const c0 = cpuMs(child.pid!);
  await run(url, headers, 1);
  // A slow page gets a shorter warm-up (JIT, pool connections): about 1.5 s of CPU, 2 to 20 views.
  const warmUp = Math.max(2, Math.min(20, Math.floor(1500 / Math.max(cpuMs(child.pid!) - c0, 1))));
  const c1 = cpuMs(child.pid!);
  await run(url, headers, warmUp);
  const perView = (cpuMs(child.pid!) - c1) / warmUp;
  const views = Math.max(10, Math.min(REQUESTS, Math.floor((PAGE_SECONDS * 1000) / Math.max(perView, 0.01))));
  const before = cpuMs(child.pid!);
  const load = os.loadavg()[0];
  const r = await run(url, headers, views);
  return { ms: (cpuMs(child.pid!) - before) / views, load, views, warmUp: warmUp + 1, ...r };
}

/** The records the detail pages show: the first client's request with most quotes, its delivered order from the first lab, its first material. */
async function pickRecords(dbUrl: string) {
  const c = new pg.Client({ connectionString: dbUrl });
  await c.connect();
  try {
    const one = async (q: string, params: unknown[] = []) => {
      const r = await c.query<{ id: string }>(q, params);
      if (!r.rows[0]) throw new Error(`no record for ${q}`);
      return r.rows[0].id;
    };
    const clientOrg = await one(`select id from organisations where slug = 'load-client-1'`);
    return {
      request: await one(
        `select r.id from requests r join quotes q on q.request_id = r.id where r.organisation_id = $1 and r.state = 'open' group by r.id order by count(*) desc, r.id limit 1`,
        [clientOrg],
      ),
      order: await one(
        `select o.id from orders o join memberships m on m.organisation_id = o.lab_id join users u on u.id = m.user_id and u.email = $2
         where o.client_organisation_id = $1 and o.state = 'data_delivered' order by o.created_at desc limit 1`,
        [clientOrg, LOAD.labOwnerEmail],
      ),
      material: await one(`select id from materials where organisation_id = $1 order by product_code limit 1`, [clientOrg]),
    };
  } finally {
    await c.end();
  }
}

function pagesFor(ids: Awaited<ReturnType<typeof pickRecords>>): Page[] {
  const pages: Page[] = [
    { name: "requests", who: "client", path: "/client/requests" },
    { name: "a request", who: "client", path: `/client/requests/${ids.request}` },
    { name: "orders", who: "client", path: "/client/orders" },
    { name: "an order", who: "client", path: `/client/orders/${ids.order}` },
    { name: "data room", who: "client", path: "/client/data-room" },
    { name: "materials", who: "client", path: "/client/materials" },
    { name: "a material", who: "client", path: `/client/materials/${ids.material}` },
    { name: "payments", who: "client", path: "/client/payments" },
    { name: "agreements", who: "client", path: "/client/agreements" },
    { name: "lab inbox", who: "lab", path: "/lab/inbox" },
    { name: "lab quotes", who: "lab", path: "/lab/quotes" },
    { name: "work queue", who: "lab", path: "/lab/work-queue" },
    { name: "lab order", who: "lab", path: `/lab/orders/${ids.order}` },
    { name: "payouts", who: "lab", path: "/lab/payouts" },
    { name: "statements", who: "lab", path: "/lab/statements" },
    { name: "admin users", who: "admin", path: "/admin/users" },
    { name: "ledger", who: "admin", path: "/admin/ledger" },
    { name: "disputes", who: "admin", path: "/admin/disputes" },
    { name: "invoices", who: "admin", path: "/admin/invoices" },
    { name: "audit log", who: "admin", path: "/admin/audit-log" },
    { name: "directory", who: "anyone", path: "/labs" },
    { name: "directory API", who: "anyone", path: "/api/labs?technique=powder_reflection&source=Cu&maxPrice=200" },
  ];
  return pages.filter((p) => !ONLY || ONLY.includes(p.name));
}

async function signIn(base: string, email: string) {
  const res = await fetch(`${base}/sign-in`, {
    method: "POST",
    redirect: "manual",
    headers: { "Content-Type": "application/x-www-form-urlencoded", Origin: base },
    body: new URLSearchParams({ email, password: LOAD.password }).toString(),
  });
  const cookie = res.headers.get("set-cookie")?.split(";")[0];
  if (!cookie) throw new Error(`sign-in of ${email} answered ${res.status} without a cookie`);
  return cookie;
}

/**
 * A cookie per kind of person. Admin screens need a second factor: the admin signs in without one, then the
 * session is given one in the database (the session row is already past the password, as after a code).
 */
async function cookies(base: string, dbUrl: string): Promise<Record<Who, string>> {
  const c = new pg.Client({ connectionString: dbUrl });
  await c.connect();
  try {
    await c.query(`update users set totp_enabled_at = null, totp_secret = null where email = $1`, [LOAD.adminEmail]);
    const admin = await signIn(base, LOAD.adminEmail);
    await c.query(`update users set totp_enabled_at = now(), totp_secret = 'JBSWY3DPEHPK3PXP' where email = $1`, [LOAD.adminEmail]);
    return { client: await signIn(base, LOAD.ownerEmail(1)), lab: await signIn(base, LOAD.labOwnerEmail), admin, anyone: "" };
  } finally {
    await c.end();
  }
}

/** Each page viewed once by an app that logs its SQL: the queries each page ran, once each, for the bare server. */
async function captureSql(env: NodeJS.ProcessEnv, dbUrl: string, pages: Page[]) {
  const { child, logFile } = await start("capture", ["server/main.ts"], { ...env, DIFFRACTORY_LOG_SQL: "1" });
  const base = `http://127.0.0.1:${PORT}`;
  const queriesSince = queryLogReader(logFile);
  try {
    const jar = await cookies(base, dbUrl);
    await new Promise((r) => setTimeout(r, 200));
    queriesSince();
    const out: Record<string, CapturedQuery[]> = {};
    for (const p of pages) {
      const res = await fetch(base + p.path, { headers: jar[p.who] ? { Cookie: jar[p.who] } : {}, redirect: "manual" });
      await res.arrayBuffer();
      await new Promise((r) => setTimeout(r, 150));
      const seen = new Set<string>();
      out[p.path.split("?")[0]] = queriesSince().filter((q) => {
        const key = JSON.stringify(q).replace(/\d{4}-\d\d-\d\dT[\d:.]+Z/g, "t");
        if (seen.has(key)) return false;
        seen.add(key);
        return true;
      });
    }
    return out;
  } finally {
    await stop(child);
  }
}

const fmt = (n: number | null, digits = 2) => (n === null || Number.isNaN(n) ? "–" : n.toFixed(digits));

function printTable(rows: CpuRow[]) {
  const with304 = rows.some((r) => r.notModifiedMs !== null);
  console.log(
    `\n${"page".padEnd(14)} ${"app ms".padStart(7)} ${"bare ms".padStart(8)} ${"app/bare".padStart(9)}  ${`≤ ${BUDGET_MS} ms`.padEnd(7)}${with304 ? ` ${"304 ms".padStart(7)}` : ""} ${"status".padStart(6)} ${"bytes".padStart(8)}  load  path`,
  );
  for (const r of rows) {
    const ratio = r.bareMs ? r.appMs / r.bareMs : null;
    console.log(
      `${r.page.padEnd(14)} ${fmt(r.appMs).padStart(7)} ${fmt(r.bareMs).padStart(8)} ${fmt(ratio, 1).padStart(9)}  ${(r.appMs <= BUDGET_MS ? "met" : "MISSED").padEnd(7)}${with304 ? ` ${fmt(r.notModifiedMs).padStart(7)}` : ""} ${String(r.status).padStart(6)} ${String(r.bytes).padStart(8)}  ${r.load.toFixed(1).padStart(4)}  ${r.path.length > 60 ? `${r.path.slice(0, 57)}…` : r.path}`,
    );
  }
  const met = rows.filter((r) => r.appMs <= BUDGET_MS).length;
  console.log(
    `CPU ms per view of the server process (/proc utime+stime, up to ${REQUESTS} views, about ${PAGE_SECONDS} s of CPU, at ${CONNECTIONS} connections after a warm-up); bare: the same SQL in a plain node:http handler; ${met}/${rows.length} pages within ${BUDGET_MS} ms; load = 1-minute load average on ${os.cpus().length} cores.`,
  );
}

await servicesUp({ quiet: true });
const dbUrl = await ensureLoadDatabase({ log: (m) => console.log(m) });
buildIfNeeded(ROOT);
const env = { DATABASE_URL: dbUrl, NODE_ENV: "production", DIFFRACTORY_LOCAL: "1", APP_URL: `http://127.0.0.1:${PORT}` };
const ids = await pickRecords(dbUrl);
const pages = pagesFor(ids);
console.log(`cpu bench: ${pages.length} pages at LOAD_SCALE ${LOAD_SCALE} (${LOAD.labs} labs, ${LOAD.requests} requests, ${LOAD.orders} orders)`);
const sql = BARE ? await captureSql(env, dbUrl, pages) : {};
const rows: CpuRow[] = [];

/** Measures the given pages on one app process (one per page when profiling, so each profile holds one page). */
async function measureApp(group: Page[]) {
  const profDir = PROF ? path.join(PROF, group[0].name.replace(/\s+/g, "-")) : undefined;
  if (profDir) {
    fs.rmSync(profDir, { recursive: true, force: true });
    fs.mkdirSync(profDir, { recursive: true });
  }
  const { child } = await start("app", ["server/main.ts"], env, profDir);
  try {
    const base = `http://127.0.0.1:${PORT}`;
    const jar = await cookies(base, dbUrl);
    for (const p of group) {
      const headers = jar[p.who] ? { Cookie: jar[p.who] } : ({} as Record<string, string>);
      // The profile's clock (monotonic, µs) around the measured views, for bench/cpu-profile.ts.
      const from = Number(process.hrtime.bigint() / 1000n);
      const r = await measure(child, base + p.path, headers);
      if (profDir)
        fs.writeFileSync(
          path.join(profDir, "window.json"),
          JSON.stringify({ from, to: Number(process.hrtime.bigint() / 1000n), views: r.views + Math.min(20, REQUESTS) }),
        );
      let notModifiedMs: number | null = null;
      if (process.env.CPU_304) {
        const etag = (await fetch(base + p.path, { headers })).headers.get("etag");
        if (etag) notModifiedMs = (await measure(child, base + p.path, { ...headers, "If-None-Match": etag })).ms;
      }
      rows.push({
        page: p.name,
        path: p.path,
        appMs: r.ms,
        bareMs: null,
        notModifiedMs,
        status: r.allSame ? r.status : -1,
        bytes: r.bytes,
        errors: r.errors,
        load: r.load,
      });
      console.log(
        `  app  ${p.name.padEnd(14)} ${r.ms.toFixed(2)} ms CPU/view  status ${r.allSame ? r.status : "mixed"}  ${r.bytes} B  load ${r.load.toFixed(1)}`,
      );
    }
  } finally {
    await stop(child);
  }
}

if (PROF) for (const p of pages) await measureApp([p]);
else await measureApp(pages);

if (BARE) {
  const sqlFile = path.join(logDir, "cpu-sql.json");
  fs.writeFileSync(sqlFile, JSON.stringify({ pages: sql }));
  const { child } = await start("bare", ["bench/bare-server.ts"], { DATABASE_URL: dbUrl, BARE_PAGES: sqlFile }, undefined, repoRoot);
  try {
    for (const p of pages) {
      const r = await measure(child, `http://127.0.0.1:${PORT}${p.path}`, { Cookie: "diffractory_session=bare" });
      const row = rows.find((x) => x.path === p.path)!;
      row.bareMs = r.ms;
      console.log(`  bare ${p.name.padEnd(14)} ${r.ms.toFixed(2)} ms CPU/view  (${sql[p.path.split("?")[0]]?.length ?? 0} queries)`);
    }
  } finally {
    await stop(child);
  }
}

printTable(rows);
if (process.env.CPU_JSON) fs.writeFileSync(process.env.CPU_JSON, JSON.stringify({ scale: LOAD_SCALE, at: new Date().toISOString(), rows }, null, 2));
