// Growth: the CPU per view of every page (bench/cpu.ts) at several data sizes, one load database per size
// (bench/seed-load.ts LOAD_SCALE), printed as a table per page with the growth exponent between the smallest
// and the largest size: ms ∝ rows^k, so k ≈ 0 is a page that reads a fixed amount, k ≈ 1 grows with the data
// and k > 1 grows faster than the data. `npx tsx bench/cpu-growth.ts`; LOAD_SCALES (default 0.0625,0.25,1 —
// 1/16×, 1/4× and 1× of the load bench's data: 4× and 16× take too long to seed and measure on a 2-core
// machine; LOAD_SCALES=1,4,16 runs those), and every knob of bench/cpu.ts (CPU_BARE=0 is the default here).
import { execFileSync } from "node:child_process";
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import { root } from "../services/paths";
import type { CpuRow } from "./cpu";

const SCALES = (process.env.LOAD_SCALES ?? "0.0625,0.25,1").split(",").map(Number);
const results: { scale: number; rows: CpuRow[] }[] = [];
for (const scale of SCALES) {
  const out = path.join(os.tmpdir(), `diffractory-cpu-growth-${process.pid}-${scale}.json`);
  console.log(`\n── data ×${scale} ──`);
  execFileSync(process.execPath, ["--import", "tsx", "bench/cpu.ts"], {
    cwd: root,
    stdio: "inherit",
    env: { CPU_BARE: "0", ...process.env, LOAD_SCALE: String(scale), CPU_JSON: out },
  });
  results.push({ scale, rows: (JSON.parse(fs.readFileSync(out, "utf8")) as { rows: CpuRow[] }).rows });
  fs.rmSync(out, { force: true });
}

const label = (s: number) => `×${s < 1 ? `1/${Math.round(1 / s)}` : s}`;
const first = SCALES[0];
const last = SCALES[SCALES.length - 1];
console.log(`\nCPU ms per view by data size (rows ${SCALES.map(label).join(", ")} of 5,000 labs / 50,000 requests / 20,000 orders)`);
console.log(`${"page".padEnd(14)} ${SCALES.map((s) => label(s).padStart(9)).join(" ")}  ${"exponent".padStart(8)}  growth`);
for (const page of results[0].rows.map((r) => r.page)) {
  const ms = results.map((r) => r.rows.find((x) => x.page === page)?.appMs ?? NaN);
  const k = Math.log(ms[ms.length - 1] / ms[0]) / Math.log(last / first);
  const verdict = k > 1.1 ? "FASTER THAN LINEAR" : k > 0.5 ? "about linear" : k > 0.15 ? "sublinear" : "flat";
  console.log(`${page.padEnd(14)} ${ms.map((m) => m.toFixed(2).padStart(9)).join(" ")}  ${k.toFixed(2).padStart(8)}  ${verdict}`);
}
console.log("exponent k: ms ∝ rows^k between the smallest and the largest size (CPU per view of the server process, as bench/cpu.ts).");
