// CPU time per request of the signed-in client's requests page (and the bare yardstick), a figure that holds
// on a busy shared machine where requests per second do not: the server's own user+system CPU time from
// /proc/<pid>/stat over a fixed number of requests at a few connections, after a warm-up.
// `npx tsx bench/cpu.ts`; CPU_REQUESTS (default 2000), CPU_CONNECTIONS (default 2), CPU_PATH (default
// /client/requests), CPU_BARE=1 also measures bench/bare-server.ts, CPU_PROF=dir writes a --cpu-prof profile,
// CPU_ENCODING=gzip|br asks for compressed answers, CPU_ROOT runs the server of another checkout (its build/
// must be current). Needs `npm run bench:load` once (the load database and the SQL the bare server runs).
import autocannon from "autocannon";
import { spawn, type ChildProcess } from "node:child_process";
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import { root as repoRoot } from "../services/paths";
import { waitForPort } from "../services/process";
import { servicesUp } from "../services/up";
import { ensureLoadDatabase, LOAD } from "./seed-load";

const ROOT = process.env.CPU_ROOT ?? repoRoot;
const PORT = 3292;
const REQUESTS = Number(process.env.CPU_REQUESTS ?? 2000);
const CONNECTIONS = Number(process.env.CPU_CONNECTIONS ?? 2);
const PAGE = process.env.CPU_PATH ?? "/client/requests";
/** CPU_ENCODING=gzip (or br) asks for a compressed answer, as browsers do; autocannon asks for none by default. */
const ENCODING = process.env.CPU_ENCODING;
const TICK_MS = 1000 / 100; // USER_HZ is 100 on Linux

function cpuMs(pid: number) {
  // Fields 14 and 15 (utime, stime) after the command name in parentheses.
  const stat = fs.readFileSync(`/proc/${pid}/stat`, "utf8");
  const fields = stat.slice(stat.lastIndexOf(")") + 2).split(" ");
  return (Number(fields[11]) + Number(fields[12])) * TICK_MS;
}

async function start(args: string[], env: NodeJS.ProcessEnv) {
  const log = fs.openSync(path.join(repoRoot, ".data/logs/cpu-server.log"), "w");
  const child = spawn(
    process.execPath,
    [...(process.env.CPU_PROF ? ["--cpu-prof", `--cpu-prof-dir=${process.env.CPU_PROF}`] : []), "--import", "tsx", ...args],
    {
      cwd: ROOT,
      env: { ...process.env, ...env, PORT: String(PORT) },
      stdio: ["ignore", log, log],
    },
  );
  await waitForPort(PORT, "server", 60_000);
  return child;
}

async function stop(child: ChildProcess) {
  if (child.exitCode !== null) return;
  child.kill("SIGTERM");
  await new Promise((r) => child.once("exit", r));
}

async function run(url: string, cookie: string, amount: number) {
  const times: number[] = [];
  const instance = autocannon({ url, headers: { Cookie: cookie, ...(ENCODING ? { "Accept-Encoding": ENCODING } : {}) }, connections: CONNECTIONS, amount });
  instance.on("response", (_c: unknown, _s: number, _b: number, ms: number) => times.push(ms));
  const r = await instance;
  times.sort((a, b) => a - b);
  const pct = (p: number) => times[Math.min(times.length - 1, Math.floor((p / 100) * times.length))];
  return {
    rps: r.requests.average,
    medianMs: pct(50),
    p95Ms: pct(95),
    non2xx: r.non2xx,
    errors: r.errors,
    bytes: Math.round(r.throughput.total / Math.max(1, times.length)),
  };
}

async function measure(label: string, child: ChildProcess, url: string, cookie: string) {
  await run(url, cookie, 300); // warm-up: JIT, pool connections
  const before = cpuMs(child.pid!);
  const load0 = os.loadavg()[0];
  const t0 = performance.now();
  const r = await run(url, cookie, REQUESTS);
  const wall = performance.now() - t0;
  const cpu = cpuMs(child.pid!) - before;
  console.log(
    `${label.padEnd(5)} ${(cpu / REQUESTS).toFixed(2).padStart(6)} ms CPU/request  ${(REQUESTS / (wall / 1000)).toFixed(0).padStart(5)} req/s at ${CONNECTIONS} conn  median ${r.medianMs.toFixed(1)} ms  p95 ${r.p95Ms.toFixed(1)} ms  ${r.bytes} B/response  non-2xx ${r.non2xx}  errors ${r.errors}  load ${load0.toFixed(1)}`,
  );
}

await servicesUp({ quiet: true });
const dbUrl = await ensureLoadDatabase({ log: () => {} });
const env = { DATABASE_URL: dbUrl, NODE_ENV: "production", DIFFRACTORY_LOCAL: "1", APP_URL: `http://127.0.0.1:${PORT}` };
{
  const child = await start(["server/main.ts"], env);
  try {
    const base = `http://127.0.0.1:${PORT}`;
    const body = new URLSearchParams({ email: LOAD.ownerEmail(1), password: LOAD.password }).toString();
    const res = await fetch(`${base}/sign-in`, {
      method: "POST",
      redirect: "manual",
      headers: { "Content-Type": "application/x-www-form-urlencoded", Origin: base },
      body,
    });
    const cookie = res.headers.get("set-cookie")?.split(";")[0];
    if (!cookie) throw new Error(`sign-in answered ${res.status} without a cookie`);
    await measure("app", child, base + PAGE, cookie);
  } finally {
    await stop(child);
  }
}
if (process.env.CPU_BARE) {
  const child = await start(["bench/bare-server.ts"], { DATABASE_URL: dbUrl, BARE_SQL: path.join(repoRoot, ".data/logs/load-sql.json") });
  try {
    await measure("bare", child, `http://127.0.0.1:${PORT}${PAGE}`, "diffractory_session=bare");
  } finally {
    await stop(child);
  }
}
