// Analysis time and memory of the lattice check on simulated scans of 4k–130k points, one thread.
//
// Each case is one scan simulated and written to a file, then timed two ways:
// - cold: a fresh Node process (bench/lattice-once.ts) parses and checks the file once — what the first upload
//   after a worker starts costs; the median of BENCH_COLD_RUNS (default 3) processes, each timed inside the child
//   from before the parse to after the check (Node/tsx start-up and module loading excluded);
// - warm: in this process, three warm-up runs, then the median of N runs of the same parse + check of the file's
//   bytes (the file is read once, outside the timing).
// Targets are on the warm figure. Every scan is simulated from the declared phase, so any verdict but
// `consistent` is a wrong answer and counted too. Memory: the heap (plus typed-array buffers) one result keeps
// alive, per point (see retainedPerResult); it should stay flat as the points grow (the result holds the scan,
// background and fitted profile: 4 × 8 bytes a point).
//
// BENCH_ONLY=text runs the cases whose name contains it. To see where the time goes, profile the warm runs with
// `node --cpu-prof --cpu-prof-dir=DIR --import tsx bench/run.ts`, or the cold ones with BENCH_CPU_PROF=DIR.

import { spawnSync } from "node:child_process";
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from "node:fs";
import { availableParallelism, loadavg, tmpdir } from "node:os";
import { join } from "node:path";
import { setFlagsFromString } from "node:v8";
import { runInNewContext } from "node:vm";
import type { LatticeCheckOptions } from "../app/diffraction/check";
import { formatScanAsXy, type PeakShape, type SimulationOptions, simulatePattern } from "../app/diffraction/simulate";
import { type CrystalStructure, STRUCTURES } from "../app/diffraction/structures";
import type { Radiation } from "../app/diffraction/wavelengths";
import { analyseBytes } from "./lattice-analysis";

setFlagsFromString("--expose-gc");
const gc = runInNewContext("gc") as () => void;

interface Case {
  name: string;
  structure: CrystalStructure;
  min: number;
  max: number;
  step: number;
  radiation?: Radiation;
  peakShape?: PeakShape;
  background?: SimulationOptions["background"];
  /** Warm parse + check, ms. */
  target?: number;
}

const CU: Radiation = { kind: "anode", anode: "Cu", monochromation: "k_alpha_doublet" };
const LAB_BACKGROUND: SimulationOptions["background"] = { constant: 200, slope: -0.5, hump: { center: 25, fwhm: 10, height: 150 } };

// A high-resolution synchrotron powder scan: one wavelength of 0.4 Å, 2–54° 2θ in 0.0004° steps (130k points),
// lines about 0.005° wide (an analyser-crystal instrument; from memory), a capillary's hump at low angle.
const SYNCHROTRON: Radiation = { kind: "custom", wavelength: 0.4 };
const SYNCHROTRON_SHAPE: PeakShape = { U: 0.0001, V: -0.00005, W: 0.00003, eta: 0.3 };
const SYNCHROTRON_BACKGROUND: SimulationOptions["background"] = { constant: 200, slope: -2, hump: { center: 8, fwhm: 4, height: 150 } };
const synchrotron = (name: string, structure: CrystalStructure): Case => ({
  name,
  structure,
  min: 2,
  max: 54,
  step: 0.0004,
  radiation: SYNCHROTRON,
  peakShape: SYNCHROTRON_SHAPE,
  background: SYNCHROTRON_BACKGROUND,
  target: 400,
});

// Targets from the issue: 5k-point cubic ≤ 20 ms; 70k-point ≤ 120 ms; 4k-point monoclinic ≤ 250 ms; 130k-point
// synchrotron ≤ 400 ms.
const CASES: Case[] = [
  { name: "cubic Si, 5k points", structure: STRUCTURES.silicon, min: 10, max: 110, step: 0.02, target: 20 },
  { name: "cubic LaB6, 5k points", structure: STRUCTURES.lanthanumHexaboride, min: 10, max: 110, step: 0.02, target: 20 },
  { name: "tetragonal TiO2, 5k points", structure: STRUCTURES.rutile, min: 10, max: 110, step: 0.02 },
  { name: "hexagonal ZnO, 5k points", structure: STRUCTURES.zincite, min: 10, max: 110, step: 0.02 },
  { name: "trigonal Al2O3, 5k points", structure: STRUCTURES.corundum, min: 10, max: 110, step: 0.02 },
  { name: "orthorhombic LiFePO4, 5k points", structure: STRUCTURES.lithiumIronPhosphate, min: 10, max: 110, step: 0.02 },
  { name: "monoclinic ZrO2, 4k points", structure: STRUCTURES.baddeleyite, min: 10, max: 90, step: 0.02, target: 250 },
  { name: "cubic Si, 15k points", structure: STRUCTURES.silicon, min: 10, max: 130, step: 0.008 },
  { name: "orthorhombic LiFePO4, 15k points", structure: STRUCTURES.lithiumIronPhosphate, min: 10, max: 130, step: 0.008 },
  { name: "monoclinic ZrO2, 15k points", structure: STRUCTURES.baddeleyite, min: 10, max: 130, step: 0.008 },
  { name: "cubic Si, 70k points", structure: STRUCTURES.silicon, min: 10, max: 150, step: 0.002, target: 120 },
  { name: "hexagonal ZnO, 70k points", structure: STRUCTURES.zincite, min: 10, max: 150, step: 0.002, target: 120 },
  { name: "monoclinic ZrO2, 70k points", structure: STRUCTURES.baddeleyite, min: 10, max: 150, step: 0.002, target: 120 },
  synchrotron("cubic Si, 0.4 Å, 130k points", STRUCTURES.silicon),
  synchrotron("orthorhombic LiFePO4, 0.4 Å, 130k points", STRUCTURES.lithiumIronPhosphate),
  synchrotron("monoclinic ZrO2, 0.4 Å, 130k points", STRUCTURES.baddeleyite),
];

const COLD_RUNS = Math.max(1, Number(process.env.BENCH_COLD_RUNS ?? 3));
const ONLY = process.env.BENCH_ONLY;
const CPU_PROF = process.env.BENCH_CPU_PROF;

function median(values: number[]): number {
  const s = [...values].sort((a, b) => a - b);
  const m = s.length >> 1;
  return s.length % 2 ? s[m] : 0.5 * (s[m - 1] + s[m]);
}

/**
 * Bytes one result keeps alive: the slope of the memory in use (heap plus typed-array buffers, which live outside
 * the heap) over 1, 2, … results kept at once, each after a forced collection. The slope, unlike one before/after
 * difference, is not thrown off by a stale result or garbage that the first collection frees.
 */
function retainedPerResult(once: () => unknown, points: number): number {
  // Enough results kept that they outweigh the heap's own noise (about 10 MB at some 40 bytes a point).
  const count = Math.min(60, Math.max(6, Math.ceil(10e6 / (40 * points))));
  const kept: unknown[] = [];
  const ys: number[] = [];
  for (let k = 1; k <= count; k++) {
    kept.push(once());
    // Twice: typed-array buffers that one collection finds dead are released only by the next.
    gc();
    gc();
    const m = process.memoryUsage();
    ys.push(m.heapUsed + m.arrayBuffers);
  }
  // Least-squares slope of memory over k = 1…count.
  const meanK = (count + 1) / 2;
  const meanY = ys.reduce((a, b) => a + b) / count;
  let sxy = 0;
  let sxx = 0;
  ys.forEach((y, i) => {
    sxy += (i + 1 - meanK) * (y - meanY);
    sxx += (i + 1 - meanK) ** 2;
  });
  return sxy / sxx;
}

/** Parse + check of the file in a fresh process, ms, as the child measured it. */
function coldRun(file: string, options: LatticeCheckOptions): number {
  const flags = CPU_PROF ? ["--cpu-prof", `--cpu-prof-dir=${CPU_PROF}`] : [];
  const child = spawnSync(process.execPath, [...flags, "--import", "tsx", "bench/lattice-once.ts", file, JSON.stringify(options)], {
    encoding: "utf8",
    timeout: 120_000,
  });
  if (child.status !== 0) throw new Error(`the cold run failed: ${child.stderr.trim() || `exit ${child.status}`}`);
  return (JSON.parse(child.stdout) as { ms: number }).ms;
}

function runCase(c: Case, dir: string, index: number) {
  const radiation = c.radiation ?? CU;
  const sim = simulatePattern({
    structure: c.structure,
    radiation,
    twoThetaMin: c.min,
    twoThetaMax: c.max,
    step: c.step,
    peakShape: c.peakShape,
    zeroShift: 0.02,
    background: c.background ?? LAB_BACKGROUND,
    noise: { seed: 1 },
  });
  const file = join(dir, `case-${index}.xy`);
  writeFileSync(file, formatScanAsXy(sim));
  // These targets are the verdict's (peaks, indexing, refinement); the whole-pattern fit that draws the plot's
  // calculated curve is timed on its own in bench/whole-pattern.ts against its own target.
  const options: LatticeCheckOptions = { radiation, system: c.structure.system, centering: c.structure.centering, cell: c.structure.cell, wholePattern: false };

  const cold = median(Array.from({ length: COLD_RUNS }, () => coldRun(file, options)));

  const bytes = new Uint8Array(readFileSync(file));
  const once = () => analyseBytes(bytes, options);
  for (let i = 0; i < 3; i++) once();
  const points = sim.twoTheta.length;
  const runs = points > 100_000 ? 7 : points > 50_000 ? 9 : 21;
  const times: number[] = [];
  const checkTimes: number[] = [];
  let verdict = "";
  let peaks = 0;
  const cpuTimes: number[] = [];
  for (let i = 0; i < runs; i++) {
    const c0 = process.cpuUsage();
    const t0 = performance.now();
    const r = once();
    times.push(performance.now() - t0);
    const c = process.cpuUsage(c0);
    cpuTimes.push((c.user + c.system) / 1000);
    checkTimes.push(r.elapsedMs);
    verdict = r.verdict;
    peaks = r.peaks.length;
  }
  const retained = median(Array.from({ length: 3 }, () => retainedPerResult(once, points)));
  return { points, cold, warm: median(times), cpu: median(cpuTimes), check: median(checkTimes), verdict, retained, peaks };
}

const dir = mkdtempSync(join(tmpdir(), "lattice-bench-"));
let missed = 0;
let wrong = 0;
try {
  console.log(`cold: the first parse + check of a fresh process (median of ${COLD_RUNS}); warm: the median in one process after`);
  console.log("warm-up, wall clock and CPU time (all the process's threads, the compiler's and collector's included); of it");
  console.log("check: the check without the parse; targets on warm ms; B/point: memory one result keeps alive, per point");
  console.log("");
  console.log("case                                       points  peaks  cold ms  warm ms  warm CPU  of it check  target  result  B/point  verdict");
  CASES.forEach((c, index) => {
    if (ONLY && !c.name.includes(ONLY)) return;
    const r = runCase(c, dir, index);
    const meets = c.target === undefined || r.warm <= c.target;
    if (!meets) missed++;
    if (r.verdict !== "consistent") wrong++;
    const target = c.target === undefined ? "" : `≤${c.target}`;
    const result = c.target === undefined ? "" : meets ? "pass" : "FAIL";
    const verdict = r.verdict === "consistent" ? r.verdict : `${r.verdict} (WRONG)`;
    console.log(
      [
        c.name.padEnd(42),
        String(r.points).padStart(6),
        String(r.peaks).padStart(6),
        r.cold.toFixed(0).padStart(8),
        r.warm.toFixed(1).padStart(8),
        r.cpu.toFixed(1).padStart(9),
        r.check.toFixed(1).padStart(12),
        ` ${target.padEnd(6)}`,
        result.padEnd(6),
        (r.retained / r.points).toFixed(0).padStart(8),
        ` ${verdict}`,
      ].join(" "),
    );
  });
} finally {
  rmSync(dir, { recursive: true, force: true });
}
console.log("");
console.log(missed === 0 ? "all targets met" : `${missed} target(s) missed`);
if (wrong > 0) console.log(`${wrong} scan(s) of the declared phase did not come out consistent`);
// Wall-clock medians: other processes on the machine slow them; the load says how busy it was, and the CPU time
// (less affected by a busy machine, though it counts background compiling and collecting) what the runs cost.
const load = loadavg();
console.log(`load average during the run: ${load.map((l) => l.toFixed(2)).join(", ")} on ${availableParallelism()} CPUs`);
if (load[0] > availableParallelism()) console.log("the machine was busy: wall-clock figures are inflated; compare warm CPU with the targets");
