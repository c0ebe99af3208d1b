// Directory API latency: median and p95 of GET /api/labs over HTTP, with the demo data and with 5,000 labs.
// Run with `npm run bench:directory` (the app must be built: `npm run build`).
import { spawn } from "node:child_process";
import fs from "node:fs";
import path from "node:path";
import pg from "pg";
import { root } from "../services/paths";
import { waitForPort } from "../services/process";
import { servicesUp } from "../services/up";
import { buildTemplate, cloneTemplate } from "../services/test-db";
import { seedSyntheticLabs } from "./seed-load";

const PORT = 3190;
const QUERIES = [
  "",
  "?source=Mo",
  "?temperatureK=1300",
  "?dMin=0.5",
  "?hazard=GHS06&hazard=nanomaterial",
  "?technique=powder_reflection&maxPrice=200",
  "?q=lab",
  "?page=3",
];

async function measure(label: string, rounds = 60, concurrency = 8) {
  const times: number[] = [];
  // Warm-up, then timed rounds over the query mix.
  for (const q of QUERIES) await fetch(`http://127.0.0.1:${PORT}/api/labs${q}`).then((r) => r.arrayBuffer());
  const jobs = Array.from({ length: rounds * QUERIES.length }, (_, i) => QUERIES[i % QUERIES.length]);
  let errors = 0;
  async function worker() {
    for (let q = jobs.shift(); q !== undefined; q = jobs.shift()) {
      const t0 = performance.now();
      const res = await fetch(`http://127.0.0.1:${PORT}/api/labs${q}`);
      await res.arrayBuffer();
      if (!res.ok) errors++;
      times.push(performance.now() - t0);
    }
  }
  await Promise.all(Array.from({ length: concurrency }, worker));
  times.sort((a, b) => a - b);
  const pct = (p: number) => times[Math.min(times.length - 1, Math.floor((p / 100) * times.length))];
  console.log(
    `${label.padEnd(28)} ${String(times.length).padStart(5)} requests, ${concurrency} at a time: median ${pct(50).toFixed(1)} ms, p95 ${pct(95).toFixed(1)} ms, errors ${errors}`,
  );
}

async function withServer(dbUrl: string, fn: () => Promise<void>) {
  const log = fs.openSync(path.join(root, ".data/logs/bench-app.log"), "w");
  const server = spawn(process.execPath, ["--import", "tsx", "server/main.ts"], {
    cwd: root,
    env: { ...process.env, DATABASE_URL: dbUrl, NODE_ENV: "production", DIFFRACTORY_LOCAL: "1", PORT: String(PORT) },
    stdio: ["ignore", log, log],
  });
  try {
    await waitForPort(PORT, "the app under benchmark");
    await fn();
  } finally {
    server.kill("SIGTERM");
  }
}

if (!fs.existsSync(path.join(root, "build/server/index.js"))) {
  console.error("Build the app first: npm run build");
  process.exit(2);
}
await servicesUp({ quiet: true });
await buildTemplate();
const demo = await cloneTemplate("diffractory_bench");
const env = { ...process.env, DATABASE_URL: demo.url };
const { execFileSync } = await import("node:child_process");
execFileSync(process.execPath, ["--import", "tsx", "scripts/seed-demo.ts"], { cwd: root, env, stdio: "ignore" });
await withServer(demo.url, () => measure("demo data (2 approved labs)"));
{
  const c = new pg.Client({ connectionString: demo.url });
  await c.connect();
  await seedSyntheticLabs(c, 5000, { someApplied: true });
  await c.query("analyze");
  await c.end();
}
await withServer(demo.url, () => measure("5,000 seeded labs"));
await demo.drop();
