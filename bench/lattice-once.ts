// One lattice check in a fresh process: the cold figure of `npm run bench` (bench/run.ts starts this once per
// case and run). `node --import tsx bench/lattice-once.ts FILE OPTIONS_JSON` prints one JSON line
// {"ms", "cpuMs", "mainThreadMs", "checkMs", "verdict", "peaks", "cell"}: cpuMs is the process's CPU time over the
// same span, all its threads (the optimising compiler's included); mainThreadMs the JavaScript thread's alone (from
// /proc, in 10 ms ticks; null where there is no /proc) — about what the wall clock shows on an idle machine, where
// the compiler runs on another core. The time runs from before the parse to after the check, so it is the engine's
// first run on unoptimised code; starting Node and tsx, loading the modules and reading the file are outside it.

import { readFileSync } from "node:fs";
import type { LatticeCheckOptions } from "../app/diffraction/check";
import { analyseBytes } from "./lattice-analysis";

/** CPU time of this process's main thread so far, ms (utime + stime of /proc/self/task/PID/stat), or null. */
function mainThreadCpuMs(): number | null {
  try {
    const stat = readFileSync(`/proc/self/task/${process.pid}/stat`, "utf8");
    // Fields after the command name in parentheses; utime and stime are the 14th and 15th of the line.
    const fields = stat.slice(stat.lastIndexOf(")") + 2).split(" ");
    return ((Number(fields[11]) + Number(fields[12])) * 1000) / 100;
  } catch {
    return null;
  }
}

const [file, optionsJson] = process.argv.slice(2);
const options = JSON.parse(optionsJson) as LatticeCheckOptions;
const bytes = new Uint8Array(readFileSync(file));
const main0 = mainThreadCpuMs();
const cpu0 = process.cpuUsage();
const started = performance.now();
const result = analyseBytes(bytes, options);
const ms = performance.now() - started;
const cpu = process.cpuUsage(cpu0);
const main1 = mainThreadCpuMs();
const cpuMs = (cpu.user + cpu.system) / 1000;
const mainThreadMs = main0 === null || main1 === null ? null : main1 - main0;
process.stdout.write(
  `${JSON.stringify({ ms, cpuMs, mainThreadMs, checkMs: result.elapsedMs, verdict: result.verdict, peaks: result.peaks.length, cell: result.cell })}\n`,
);
