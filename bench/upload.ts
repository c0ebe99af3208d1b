// Upload benchmark: a 200 MB delivered file through the real flow (start → presigned multipart PUTs straight to
// storage → complete, where the server streams the stored object back once to verify type and SHA-256), while the
// app server's resident memory is sampled every 100 ms. Prints the peak RSS over the idle one and the throughput of
// each step: the target is flat memory (a few MB, not growing with the file). The file is of kind "other" (a long
// instrument log as text): a scan is read whole by the check and is limited to SCAN_MAX_BYTES (50 MiB), so no
// 200 MB file can be a scan. No upload path passes the bytes through the app (server/app.ts limits every body).
// Run with `npm run bench:upload` (the app must be built: `npm run build`); BENCH_UPLOAD_MB (default 200),
// BENCH_UPLOAD_PORT (default 3191).
import { spawn } from "node:child_process";
import { createHash, randomBytes } from "node:crypto";
import fs from "node:fs";
import os, { loadavg } from "node:os";
import path from "node:path";
import pg from "pg";
import { root } from "../services/paths";
import { waitForPort } from "../services/process";
import { buildTemplate, cloneTemplate } from "../services/test-db";
import { servicesUp } from "../services/up";
import { fetchPut, uploadFile } from "../app/components/order-upload";

const PORT = Number(process.env.BENCH_UPLOAD_PORT ?? 3191);
const BASE = `http://127.0.0.1:${PORT}`;
const SIZE = Number(process.env.BENCH_UPLOAD_MB ?? 200) * 1024 * 1024;

/** Resident memory of a process in MiB, from /proc (Linux). */
function rssMiB(pid: number) {
  const status = fs.readFileSync(`/proc/${pid}/status`, "utf8");
  const kb = Number(/VmRSS:\s+(\d+)\s+kB/.exec(status)?.[1] ?? 0);
  return kb / 1024;
}

/** A measuring order of the demo client at the demo lab with one sample, and an API token of that lab. */
async function prepare(url: string) {
  const c = new pg.Client({ connectionString: url });
  await c.connect();
  try {
    const one = async (sql: string, values: unknown[] = []) => (await c.query(sql, values)).rows[0];
    const client = await one("select id from organisations where slug = 'halvorsen-cathode-works'");
    const lab = await one("select id from organisations where slug = 'granite-ridge-characterisation'");
    const request = await one(
      "insert into requests (organisation_id, title, state, range_min, range_max) values ($1, 'Upload benchmark', 'awarded', 10, 90) returning id",
      [client.id],
    );
    const sample = await one(
      "insert into samples (request_id, label, formula, crystal_system, centering, cell_a) values ($1, 'Bench sample', 'Si', 'cubic', 'F', 5.431) returning id",
      [request.id],
    );
    const quote = await one(
      "insert into quotes (request_id, lab_id, state, line_items, total_minor, currency, valid_until, turnaround_days) values ($1, $2, 'accepted', '[]', 10000, 'EUR', now() + interval '7 days', 5) returning id",
      [request.id, lab.id],
    );
    const order = await one(
      "insert into orders (request_id, quote_id, client_organisation_id, lab_id, state, amount_minor, currency, number) values ($1, $2, $3, $4, 'measuring', 10000, 'EUR', 'BENCH-UPLOAD') returning id",
      [request.id, quote.id, client.id, lab.id],
    );
    const token = `dfy_${randomBytes(30).toString("base64url")}`;
    await c.query("insert into api_tokens (lab_id, name, token_hash, prefix) values ($1, 'Upload benchmark', $2, $3)", [
      lab.id,
      createHash("sha256").update(token).digest("hex"),
      token.slice(0, 10),
    ]);
    return { orderId: order.id as string, sampleId: sample.id as string, token };
  } finally {
    await c.end();
  }
}

/** A text file of `size` bytes: comment lines, then 2θ/intensity pairs (an instrument's long log). */
function writeScan(file: string, size: number) {
  const fd = fs.openSync(file, "w");
  const line = "# detector log: counts stable, generator 40 kV 40 mA, no interruptions during this step\n";
  const data =
    Array.from({ length: 3501 }, (_, i) => `${(20 + i * 0.02).toFixed(3)} ${Math.round(120 + 80 * Math.exp(-(((i % 500) - 250) ** 2) / 200))}`).join("\n") +
    "\n";
  const block = Buffer.from(line.repeat(Math.floor((1 << 20) / line.length)));
  let written = 0;
  while (written + block.length + data.length < size) written += fs.writeSync(fd, block);
  const rest = size - written - data.length;
  written += fs.writeSync(fd, Buffer.from(line.repeat(Math.ceil(rest / line.length)).slice(0, rest)));
  fs.writeSync(fd, data);
  fs.closeSync(fd);
}

if (!fs.existsSync(path.join(root, "build/server/index.js"))) {
  console.error("Build the app first: npm run build");
  process.exit(2);
}
await servicesUp({ quiet: true });
await buildTemplate();
const db = await cloneTemplate("diffractory_bench_upload");
const env = { ...process.env, DATABASE_URL: db.url, NODE_ENV: "production", DIFFRACTORY_LOCAL: "1", PORT: String(PORT), APP_URL: BASE };
const { execFileSync } = await import("node:child_process");
// The demo's people and organisations only (app/demo/seed.server.ts).
execFileSync(process.execPath, ["--import", "tsx", "-e", 'import("./app/demo/seed.server.ts").then((m) => m.seedDemo()).then(() => process.exit(0))'], {
  cwd: root,
  env,
  stdio: "ignore",
});
const { orderId, sampleId, token } = await prepare(db.url);

const dir = fs.mkdtempSync(path.join(os.tmpdir(), "diffractory-bench-upload-"));
const file = path.join(dir, "bench-long-run.xy");
writeScan(file, SIZE);
const small = path.join(dir, "bench-warm-up.xy");
writeScan(small, 1024 * 1024);

const log = fs.openSync(path.join(root, ".data/logs/bench-upload-app.log"), "w");
const server = spawn(process.execPath, ["--import", "tsx", "server/main.ts"], { cwd: root, env, stdio: ["ignore", log, log] });
try {
  await waitForPort(PORT, "the app under benchmark");
  const auth = { Authorization: `Bearer ${token}`, "Content-Type": "application/json" };
  /** One upload through the API: start, presigned PUTs straight to storage, complete (the app verifies). */
  const upload = async (name: string, size: number, onCompleting: () => void) => {
    let completeUrl = "";
    return uploadFile({
      file: await fs.openAsBlob(name),
      put: fetchPut,
      concurrency: 4,
      start: async () => {
        const res = await fetch(`${BASE}/api/v1/orders/${orderId}/files`, {
          method: "POST",
          headers: auth,
          // The benchmark hashes in the same pass as the upload, so the SHA-256 goes with `complete`.
          body: JSON.stringify({ name: path.basename(name), size, kind: "other", sampleId }),
        });
        const body = await res.json();
        if (res.status !== 201) throw new Error(`start: ${res.status} ${JSON.stringify(body)}`);
        completeUrl = body.completeUrl;
        return body;
      },
      onProgress: (p) => {
        if (p.phase === "completing") onCompleting();
      },
      complete: async (_fileId, body) => {
        const res = await fetch(completeUrl, { method: "POST", headers: auth, body: JSON.stringify(body) });
        return { status: res.status, body: await res.json() };
      },
    });
  };
  // A 1 MiB upload first, so the idle figure is of a server that has loaded the upload path's code and clients.
  const warm = await upload(small, 1024 * 1024, () => {});
  if (warm.status !== 200) throw new Error(`warm-up complete: ${warm.status} ${JSON.stringify(warm.body)}`);
  const idle = rssMiB(server.pid!);
  let peak = idle;
  const sampler = setInterval(() => (peak = Math.max(peak, rssMiB(server.pid!))), 100);
  const t0 = performance.now();
  let tUploaded = 0;
  const answer = await upload(file, SIZE, () => {
    tUploaded ||= performance.now();
  });
  const tDone = performance.now();
  clearInterval(sampler);
  peak = Math.max(peak, rssMiB(server.pid!));
  if (answer.status !== 200) throw new Error(`complete: ${answer.status} ${JSON.stringify(answer.body)}`);
  const mb = SIZE / 1e6;
  const s = (ms: number) => ms / 1000;
  console.log(
    `upload of ${SIZE / 1048576} MiB = ${mb.toFixed(0)} MB (${Math.ceil(SIZE / (8 * 1024 * 1024))} parts of 8 MiB, 4 at a time) through presigned URLs, then verified by the app:`,
  );
  console.log(`  parts PUT to storage: ${s(tUploaded - t0).toFixed(1)} s, ${(mb / s(tUploaded - t0)).toFixed(0)} MB/s (read, hashed and sent by the uploader)`);
  console.log(
    `  complete + verify:    ${s(tDone - tUploaded).toFixed(1)} s, ${(mb / s(tDone - tUploaded)).toFixed(0)} MB/s (the app streams the stored object once)`,
  );
  console.log(`  end to end:           ${s(tDone - t0).toFixed(1)} s, ${(mb / s(tDone - t0)).toFixed(0)} MB/s`);
  const grew = peak - idle;
  console.log(
    `  app server RSS: idle ${idle.toFixed(0)} MiB, peak ${peak.toFixed(0)} MiB: +${grew.toFixed(0)} MiB for a ${mb.toFixed(0)} MB file (${grew <= 32 ? "flat" : "NOT flat"}: a constant working set, not growing with the file; load ${loadavg()[0].toFixed(2)})`,
  );
} finally {
  server.kill("SIGTERM");
  await new Promise((r) => server.once("exit", r));
  fs.rmSync(dir, { recursive: true, force: true });
  await db.drop();
}
