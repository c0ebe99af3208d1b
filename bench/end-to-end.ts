// End to end: a delivered scan, from "stored" to its check's verdict on the client's data room, on the real stack.
//
// Starts the services (on the ports of the environment), clones the test template into a fresh database, seeds the
// demo's people and organisations (app/demo/seed.server.ts, nothing else), then runs the production build's app
// server and one job worker as `npm run demo` does. Each case is an order of the demo client at the demo lab with one
// sample declaring its phase(s); a simulated scan is uploaded through the lab's upload API (start → presigned PUT
// straight to storage → complete, as an instrument computer with an API token does; docs/design.md), while the
// client, signed in, asks GET /api/checks/:id — what the data room's check badge asks — until the verdict is there.
//
// Timed per upload (median of BENCH_E2E_RUNS, default 10, after one warm-up upload per case):
// - total: from the last byte in storage (the PUT answered) to the first answer of /api/checks/:id with the
//   verdict; the client asks every BENCH_E2E_POLL_MS (default 50 ms: faster asking loads the two cores the worker
//   needs), so the figure is the stack's, not the browser's own asking interval (the badge asks every
//   CHECK_POLL_MS, app/components/check-status.tsx, which adds half of it on average);
// - its parts, from the database's clocks: complete (the app reads the object back, hashes and reads the scan,
//   records the file and queues the check) → pick-up (the job waits in the queue until the worker fetches it) →
//   run (storage read, parse, check, result stored) → visible (the next answer of the status API);
// - the CPU time the worker and the app server spent per upload (/proc/<pid>/stat), less noisy than wall clock;
// - parse and check alone, in this process (warm: after 5 runs; CPU time, median of 3), to split the worker's CPU time.
// On a shared machine the wall-clock parts stretch with the load average (printed beside each row); the CPU
// columns do not.
// Then the growth table: the single-phase scan at 1×, 4× and 16× the points.
//
// `npm run bench:e2e` (also the last part of `npm run bench`; it builds the app when there is no build). BENCH_E2E_RUNS, BENCH_E2E_ONLY=text (cases whose name
// contains it), BENCH_E2E_PORT (app port, default 3293).
import { type ChildProcess, execFileSync, spawn, spawnSync } from "node:child_process";
import { createHash, randomBytes } from "node:crypto";
import fs from "node:fs";
import { loadavg } from "node:os";
import path from "node:path";
import pg from "pg";
import { fetchPut, uploadFile } from "../app/components/order-upload";
import type { Cell } from "../app/diffraction/cell";
import { formatScanAsXy, mulberry32, poissonSampler, simulatePattern } from "../app/diffraction/simulate";
import { type CrystalStructure, STRUCTURES } from "../app/diffraction/structures";
import type { Radiation } from "../app/diffraction/wavelengths";
import { DEMO_PASSWORD } from "../app/demo/demo-secrets";
import { checkScanForStorage, declaredOf, readScanFile } from "../app/domain/lattice-check";
import { root } from "../services/paths";
import { waitForPort } from "../services/process";
import { buildTemplate, cloneTemplate } from "../services/test-db";
import { servicesUp } from "../services/up";

const PORT = Number(process.env.BENCH_E2E_PORT ?? 3293);
const BASE = `http://127.0.0.1:${PORT}`;
const RUNS = Number(process.env.BENCH_E2E_RUNS ?? 10);
const POLL_MS = Number(process.env.BENCH_E2E_POLL_MS ?? 50);
const ONLY = process.env.BENCH_E2E_ONLY;
const CU: Radiation = { kind: "anode", anode: "Cu", monochromation: "k_alpha_doublet" };
const TICK_MS = 1000 / 100; // USER_HZ: /proc stat times are in 1/100 s on Linux

interface Case {
  name: string;
  /** The declared phases: the first is the sample's own, the others its further expected phases. */
  phases: CrystalStructure[];
  weights: number[];
  step: number;
  /** Target on the median total, ms. */
  target?: number;
  growth?: string;
}

// 10–150° 2θ: steps of 0.032°, 0.008° and 0.002° give 4.4k, 17.5k and 70k points (1×, 4×, 16×). The three-phase
// sample is the whole-pattern bench's mixture (bench/whole-pattern.ts): corundum with zincite and rutile, 7k points.
const CASES: Case[] = [
  { name: "cubic Si, 4.4k points", phases: [STRUCTURES.silicon], weights: [1], step: 0.032, growth: "1×" },
  { name: "cubic Si, 17.5k points", phases: [STRUCTURES.silicon], weights: [1], step: 0.008, growth: "4×" },
  { name: "cubic Si, 70k points", phases: [STRUCTURES.silicon], weights: [1], step: 0.002, target: 1000, growth: "16×" },
  {
    name: "three phases Al2O3 + ZnO + TiO2, 7k points",
    phases: [STRUCTURES.corundum, STRUCTURES.zincite, STRUCTURES.rutile],
    weights: [1, 0.6, 0.4],
    step: 0.02,
    target: 2000,
  },
].filter((c) => !ONLY || c.name.includes(ONLY));

/** The phases simulated without noise, summed over a background at their weights, then counted (seeded). */
function simulate(c: Case, seed: number) {
  const sims = c.phases.map((structure, k) =>
    simulatePattern({ structure, radiation: CU, twoThetaMin: 10, twoThetaMax: 150, step: c.step, zeroShift: 0.02, scale: 10_000 * c.weights[k] }),
  );
  const x = sims[0].twoTheta;
  const poisson = poissonSampler(mulberry32(seed));
  const y = Float64Array.from(x, (t, i) => poisson(sims.reduce((s, sim) => s + sim.intensity[i], 0) + 150 + 60 * Math.exp(-(((t - 25) / 8) ** 2))));
  return { twoTheta: x, intensity: y };
}

const median = (xs: number[]) => {
  const s = [...xs].sort((a, b) => a - b);
  const m = s.length >> 1;
  return s.length % 2 ? s[m] : (s[m - 1] + s[m]) / 2;
};
const load = () => loadavg()[0].toFixed(2);

/** user + system CPU time of a process, ms (Linux /proc). */
function cpuMs(pid: number) {
  const stat = fs.readFileSync(`/proc/${pid}/stat`, "utf8");
  const fields = stat.slice(stat.lastIndexOf(")") + 2).split(" ");
  return (Number(fields[11]) + Number(fields[12])) * TICK_MS;
}

const one = async (c: pg.Client, sql: string, values: unknown[] = []) => (await c.query(sql, values)).rows[0];

/** An order of the demo client at the demo lab in measuring, with one sample declaring the case's phases. */
async function prepareOrder(c: pg.Client, kase: Case, ids: { client: string; lab: string }) {
  const [main, ...others] = kase.phases;
  const cell = (x: Cell) => [x.a, x.b, x.c, x.alpha, x.beta, x.gamma];
  const request = await one(c, "insert into requests (organisation_id, title, state, range_min, range_max) values ($1, $2, 'awarded', 10, 150) returning id", [
    ids.client,
    `End-to-end benchmark: ${kase.name}`,
  ]);
  const sample = await one(
    c,
    `insert into samples (request_id, label, formula, expected_phase, crystal_system, centering, cell_a, cell_b, cell_c, cell_alpha, cell_beta, cell_gamma)
     values ($1, 'Bench sample', $2, $3, $4, $5, $6, $7, $8, $9, $10, $11) returning *`,
    [request.id, main.name, main.name, main.system, main.centering, ...cell(main.cell)],
  );
  const phases = [];
  for (const [i, p] of others.entries()) {
    phases.push(
      await one(
        c,
        `insert into sample_phases (sample_id, position, role, name, crystal_system, centering, cell_a, cell_b, cell_c, cell_alpha, cell_beta, cell_gamma)
         values ($1, $2, 'expected', $3, $4, $5, $6, $7, $8, $9, $10, $11) returning *`,
        [sample.id, i, p.name, p.system, p.centering, ...cell(p.cell)],
      ),
    );
  }
  const quote = await one(
    c,
    "insert into quotes (request_id, lab_id, state, line_items, total_minor, currency, valid_until, turnaround_days) values ($1, $2, 'accepted', '[]', 10000, 'EUR', now() + interval '7 days', 5) returning id",
    [request.id, ids.lab],
  );
  const order = await one(
    c,
    "insert into orders (request_id, quote_id, client_organisation_id, lab_id, state, amount_minor, currency, number) values ($1, $2, $3, $4, 'measuring', 10000, 'EUR', $5) returning id",
    [request.id, quote.id, ids.client, ids.lab, `BENCH-${randomBytes(4).toString("hex")}`],
  );
  return { orderId: order.id as string, sample, phases };
}

/** A sample row as the model reads it (camelCase), for the in-process parse and check. */
function camel(row: Record<string, unknown>) {
  return Object.fromEntries(Object.entries(row).map(([k, v]) => [k.replace(/_(\w)/g, (_, ch: string) => ch.toUpperCase()), v]));
}

async function signIn(email: string) {
  const res = await fetch(`${BASE}/sign-in`, {
    method: "POST",
    redirect: "manual",
    headers: { "Content-Type": "application/x-www-form-urlencoded", Origin: BASE },
    body: new URLSearchParams({ email, password: DEMO_PASSWORD }).toString(),
  });
  const cookie = res.headers.get("set-cookie")?.split(";")[0];
  if (res.status !== 302 || !cookie) throw new Error(`sign-in of ${email} answered ${res.status} without a session cookie`);
  return cookie;
}

function startProcess(name: string, script: string, env: NodeJS.ProcessEnv) {
  const log = fs.openSync(path.join(root, `.data/logs/bench-e2e-${name}.log`), "w");
  return spawn(process.execPath, ["--import", "tsx", script], { cwd: root, env, stdio: ["ignore", log, log] });
}

interface Timing {
  total: number;
  complete: number;
  pickUp: number;
  run: number;
  visible: number;
  workerCpu: number;
  appCpu: number;
}

// The production build, as `npm run demo` serves it; made here on a clean clone.
if (!fs.existsSync(path.join(root, "build/server/index.js"))) {
  const built = spawnSync("npx", ["react-router", "build"], { cwd: root, stdio: ["ignore", "ignore", "inherit"] });
  if (built.status !== 0) process.exit(built.status ?? 1);
}
await servicesUp({ quiet: true });
await buildTemplate();
const db = await cloneTemplate("diffractory_bench_e2e");
const env = { ...process.env, DATABASE_URL: db.url, NODE_ENV: "production", DIFFRACTORY_LOCAL: "1", PORT: String(PORT), APP_URL: BASE };
// The demo's people and organisations only (no orders, scans or records).
execFileSync(process.execPath, ["--import", "tsx", "-e", 'import("./app/demo/seed.server.ts").then((m) => m.seedDemo()).then(() => process.exit(0))'], {
  cwd: root,
  env,
  stdio: "ignore",
});
const sql = new pg.Client({ connectionString: db.url });
await sql.connect();
const ids = {
  client: (await one(sql, "select id from organisations where slug = 'halvorsen-cathode-works'")).id as string,
  lab: (await one(sql, "select id from organisations where slug = 'granite-ridge-characterisation'")).id as string,
};
/** A new API token of the lab: one per case, as the upload API allows 60 requests a minute per token. */
async function newToken() {
  const token = `dfy_${randomBytes(30).toString("base64url")}`;
  await sql.query("insert into api_tokens (lab_id, name, token_hash, prefix) values ($1, 'End-to-end benchmark', $2, $3)", [
    ids.lab,
    createHash("sha256").update(token).digest("hex"),
    token.slice(0, 10),
  ]);
  return token;
}

const children: ChildProcess[] = [];
const stopAll = async () => {
  for (const child of children) if (child.exitCode === null) child.kill("SIGTERM");
  await Promise.all(children.map((child) => (child.exitCode === null ? new Promise((r) => child.once("exit", r)) : null)));
};
process.on("SIGINT", () => void stopAll().then(() => process.exit(130)));
try {
  const app = startProcess("app", "server/main.ts", env);
  const worker = startProcess("worker", "server/worker.ts", env);
  children.push(app, worker);
  await waitForPort(PORT, "the app under benchmark", 60_000);
  // The worker prints its line once every queue handler is registered.
  const workerLog = path.join(root, ".data/logs/bench-e2e-worker.log");
  for (let i = 0; !fs.readFileSync(workerLog, "utf8").includes("worker is running"); i++) {
    if (i > 600 || worker.exitCode !== null) throw new Error(`the worker did not start; see ${workerLog}`);
    await new Promise((r) => setTimeout(r, 100));
  }
  const clientCookie = await signIn("owner@halvorsen.example");

  /** One upload of `bytes` to the order's sample and the client's wait for the verdict. */
  async function once(token: string, orderId: string, sampleId: string, name: string, bytes: Uint8Array<ArrayBuffer>): Promise<Timing> {
    const auth = { Authorization: `Bearer ${token}`, "Content-Type": "application/json" };
    let completeUrl = "";
    let tStored = 0;
    let cpu0 = { worker: 0, app: 0 };
    const answer = await uploadFile({
      file: new Blob([bytes]),
      put: fetchPut,
      start: async () => {
        const res = await fetch(`${BASE}/api/v1/orders/${orderId}/files`, {
          method: "POST",
          headers: auth,
          body: JSON.stringify({ name, size: bytes.length, kind: "scan", sampleId }),
        });
        const body = await res.json();
        if (res.status !== 201) throw new Error(`start: ${res.status} ${JSON.stringify(body)}`);
        completeUrl = body.completeUrl;
        return body;
      },
      onProgress: (p) => {
        if (p.phase === "completing" && !tStored) {
          tStored = Date.now();
          cpu0 = { worker: cpuMs(worker.pid!), app: cpuMs(app.pid!) };
        }
      },
      complete: async (_fileId, body) => {
        const res = await fetch(completeUrl, { method: "POST", headers: auth, body: JSON.stringify(body) });
        return { status: res.status, body: await res.json() };
      },
    });
    if (answer.status !== 200) throw new Error(`complete: ${answer.status} ${JSON.stringify(answer.body)}`);
    const fileId = answer.body.fileId as string;
    // The data room lists the file with its check as soon as `complete` has answered; its badge asks the status API.
    const { id: checkId } = await one(sql, "select id from scan_checks where file_id = $1", [fileId]);
    let tVisible = 0;
    for (;;) {
      const res = await fetch(`${BASE}/api/checks/${checkId}`, { headers: { Cookie: clientCookie, Accept: "application/json" } });
      const status = await res.json();
      if (res.status !== 200) throw new Error(`check status: ${res.status} ${JSON.stringify(status)}`);
      if (status.status === "failed") throw new Error(`the check failed: ${status.error}`);
      if (status.status === "done") {
        tVisible = Date.now();
        if (status.verdict !== "consistent") console.warn(`  (verdict ${status.verdict}, not consistent)`);
        break;
      }
      await new Promise((r) => setTimeout(r, POLL_MS));
    }
    const cpu1 = { worker: cpuMs(worker.pid!), app: cpuMs(app.pid!) };
    const t = await one(
      sql,
      `select extract(epoch from j.created_on) * 1000 as queued, extract(epoch from j.started_on) * 1000 as picked,
              extract(epoch from c.finished_at) * 1000 as finished
         from scan_checks c join pgboss.job j on j.name = 'scan-check' and j.data ->> 'fileId' = c.file_id::text
        where c.file_id = $1 order by j.created_on desc limit 1`,
      [fileId],
    );
    const [queued, picked, finished] = [Number(t.queued), Number(t.picked), Number(t.finished)];
    return {
      total: tVisible - tStored,
      complete: queued - tStored,
      pickUp: picked - queued,
      run: finished - picked,
      visible: tVisible - finished,
      workerCpu: cpu1.worker - cpu0.worker,
      appCpu: cpu1.app - cpu0.app,
    };
  }

  const rows: { kase: Case; points: number; m: Timing; parse: number; check: number; load: string }[] = [];
  for (const [k, kase] of CASES.entries()) {
    const { orderId, sample, phases } = await prepareOrder(sql, kase, ids);
    const text = formatScanAsXy(simulate(kase, 11 + k), `simulated scan: ${kase.name}`);
    const points = text.split("\n").filter((l) => l && !l.startsWith("#")).length;
    const timings: Timing[] = [];
    const token = await newToken();
    for (let run = 0; run <= RUNS; run++) {
      // Each upload is a new version with its own bytes (a comment line), so nothing is served from a cache.
      const bytes = new TextEncoder().encode(`# upload ${run}\n${text}`);
      const timing = await once(token, orderId, sample.id, "bench-scan.xy", bytes);
      if (run > 0) timings.push(timing); // the first upload of a case warms the worker's code for its size
    }
    const m = Object.fromEntries(Object.keys(timings[0]).map((key) => [key, median(timings.map((t) => t[key as keyof Timing]))])) as unknown as Timing;
    // Parse and check alone, as the worker runs them, warm, in this process (after the uploads, so they don't compete).
    const declared = declaredOf(camel(sample) as never, phases.map(camel) as never);
    const context = {
      radiation: null,
      declared,
      warnings: [],
      declaredFrom: { sampleLabel: "Bench sample", expectedPhase: kase.phases[0].name, instrumentName: null },
    };
    const parse: number[] = [];
    const check: number[] = [];
    const cpuNow = () => {
      const u = process.cpuUsage();
      return (u.user + u.system) / 1000;
    };
    for (let i = 0; i < 8; i++) {
      const t0 = cpuNow();
      readScanFile(text, "bench-scan.xy");
      const t1 = cpuNow();
      checkScanForStorage(text, context);
      const t2 = cpuNow();
      // checkScanForStorage reads the file itself: its check part is its time less one parse.
      if (i >= 5) {
        parse.push(t1 - t0);
        check.push(t2 - t1 - (t1 - t0));
      }
    }
    rows.push({ kase, points, m, parse: median(parse), check: median(check), load: load() });
    console.log(`  ${kase.name}: median total ${m.total.toFixed(0)} ms (load ${load()})`);
  }

  const f = (ms: number) => ms.toFixed(0).padStart(6);
  console.log(`\nEnd to end, stored → verdict on the client's data room (median of ${RUNS} uploads, ms; parts from the database's clocks; CPU per upload):`);
  console.log(`${"case".padEnd(44)}  total complete pick-up    run visible | parse  check (CPU, here) | worker CPU app CPU | target load`);
  for (const r of rows) {
    const target = r.kase.target ? `${r.m.total <= r.kase.target ? "met" : "MISSED"} ≤ ${r.kase.target}` : "";
    console.log(
      `${r.kase.name.padEnd(44)} ${f(r.m.total)} ${f(r.m.complete)}  ${f(r.m.pickUp)} ${f(r.m.run)} ${f(r.m.visible)} | ${f(r.parse)} ${f(r.check).padStart(18)} | ${f(r.m.workerCpu).padStart(10)} ${f(r.m.appCpu).padStart(7)} | ${target.padEnd(11)} ${r.load}`,
    );
  }
  const growth = rows.filter((r) => r.kase.growth);
  if (growth.length > 1) {
    console.log("\nGrowth: the single-phase scan at 1×, 4× and 16× the points (medians; ratios to 1×):");
    console.log(`${"points".padStart(8)} ${"scale".padStart(5)}  total ms  ratio  run ms  ratio  worker CPU ms  load`);
    const base = growth[0];
    for (const r of growth) {
      console.log(
        `${String(r.points).padStart(8)} ${r.kase.growth!.padStart(5)} ${f(r.m.total).padStart(9)} ${(r.m.total / base.m.total).toFixed(1).padStart(6)} ${f(r.m.run).padStart(7)} ${(r.m.run / base.m.run).toFixed(1).padStart(6)} ${f(r.m.workerCpu).padStart(14)}  ${r.load}`,
      );
    }
  }
} finally {
  await sql.end();
  await stopAll();
  await db.drop();
}
