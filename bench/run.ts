// Analysis time and memory of the lattice check on simulated scans of 4k–130k points, one thread, side by side with
// a plain numpy/scipy peer (bench/peer/lattice_peer.py), and how the cost grows with the points.
//
// Each case is one scan simulated and written to a file, then timed three ways:
// - cold: a fresh Node process (bench/lattice-once.ts) parses and checks the file once — what the command line and
//   the browser preview cost, and the first upload after a worker starts; the median of BENCH_COLD_RUNS (default
//   3) processes, each timed inside the child from before the parse to after the check (Node/tsx start-up and
//   module loading excluded), wall clock and the process's CPU time;
// - warm: in this process, three warm-up runs, then the median of N runs of the same parse + check of the file's
//   bytes (the file is read once, outside the timing);
// - peer: one python3 process runs the peer on every case's file, the median of BENCH_PEER_RUNS (default 3)
//   analyses of the file's bytes after the imports (reading the file outside the timing, parsing inside it).
// The side-by-side table compares CPU times (less thrown off by a busy machine than wall clock): peer/warm (target
// ≥ 20) and cold/warm (target ≤ 2), per case and as geometric means; and whether the peer's refined cell agrees
// with ours (reported, not a target). Then the growth table: the same patterns at 1×, 4× and 16× the points.
//
// Targets on the warm figure per case too. Every scan is simulated from the declared phase, so any verdict but
// `consistent` is a wrong answer and counted too. Memory: the heap (plus typed-array buffers) one result keeps
// alive, per point (see retainedPerResult); it should stay flat as the points grow (the result holds the scan,
// background and fitted profile: 4 × 8 bytes a point).
//
// Knobs: BENCH_ONLY=text runs the cases whose name contains it; BENCH_GROWTH=0 skips the growth table;
// BENCH_MEMORY=0 the memory column; BENCH_PEER=0 the peer; BENCH_PYTHON the interpreter (default python3). To see
// where the time goes, profile the warm runs with `node --cpu-prof --cpu-prof-dir=DIR --import tsx bench/run.ts`,
// or the cold ones with BENCH_CPU_PROF=DIR.

import { spawnSync } from "node:child_process";
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from "node:fs";
import { availableParallelism, loadavg, tmpdir } from "node:os";
import { join } from "node:path";
import { setFlagsFromString } from "node:v8";
import { runInNewContext } from "node:vm";
import type { Cell } from "../app/diffraction/cell";
import type { LatticeCheckOptions } from "../app/diffraction/check";
import { formatScanAsXy, type PeakShape, type SimulationOptions, simulatePattern } from "../app/diffraction/simulate";
import { type CrystalStructure, STRUCTURES } from "../app/diffraction/structures";
import { type Radiation, radiationLines } from "../app/diffraction/wavelengths";
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
const PEER_RUNS = Math.max(1, Number(process.env.BENCH_PEER_RUNS ?? 3));
const ONLY = process.env.BENCH_ONLY;
const CPU_PROF = process.env.BENCH_CPU_PROF;
const GROWTH = process.env.BENCH_GROWTH !== "0";
const MEMORY = process.env.BENCH_MEMORY !== "0";
const PEER = process.env.BENCH_PEER !== "0";
const PYTHON = process.env.BENCH_PYTHON ?? "python3";

// The growth table: the same 10–110° pattern at 1×, 4× and 16× the points (steps of 0.02°, 0.005°, 0.00125°).
const GROWTH_STRUCTURES: [string, CrystalStructure][] = [
  ["cubic Si", STRUCTURES.silicon],
  ["monoclinic ZrO2", STRUCTURES.baddeleyite],
];
const GROWTH_STEPS = [0.02, 0.005, 0.00125];

function median(values: number[]): number {
  const s = [...values].sort((a, b) => a - b);
  const m = s.length >> 1;
  return s.length % 2 ? s[m] : 0.5 * (s[m - 1] + s[m]);
}

function geometricMean(values: number[]): number {
  return Math.exp(values.reduce((sum, v) => sum + Math.log(v), 0) / values.length);
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

interface ColdRun {
  ms: number;
  cpuMs: number;
  mainThreadMs: number | null;
}

/** Parse + check of the file in a fresh process, as the child measured it: wall clock and CPU time, ms. */
function coldRun(file: string, options: LatticeCheckOptions): ColdRun {
  const flags = CPU_PROF ? ["--cpu-prof", `--cpu-prof-dir=${CPU_PROF}`] : [];
  const child = spawnSync(process.execPath, [...flags, "--import", "tsx", "bench/lattice-once.ts", file, JSON.stringify(options)], {
    encoding: "utf8",
    timeout: 120_000,
  });
  if (child.status !== 0) throw new Error(`the cold run failed: ${child.stderr.trim() || `exit ${child.status}`}`);
  return JSON.parse(child.stdout) as ColdRun;
}

interface Scan {
  file: string;
  points: number;
  options: LatticeCheckOptions;
  structure: CrystalStructure;
}

function writeScan(c: Omit<Case, "name" | "target">, file: string): Scan {
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
  writeFileSync(file, formatScanAsXy(sim));
  // These targets are the verdict's (peaks, indexing, refinement); the whole-pattern fit that draws the plot's
  // calculated curve is timed on its own in bench/whole-pattern.ts against its own target.
  const options: LatticeCheckOptions = { radiation, system: c.structure.system, centering: c.structure.centering, cell: c.structure.cell, wholePattern: false };
  return { file, points: sim.twoTheta.length, options, structure: c.structure };
}

interface Timing {
  points: number;
  cold: number;
  coldCpu: number;
  /** The cold run's main-thread CPU time, ms (NaN without /proc). */
  coldMain: number;
  warm: number;
  cpu: number;
  check: number;
  verdict: string;
  peaks: number;
  cell: Cell | null;
}

function timeScan(scan: Scan): Timing {
  const colds = Array.from({ length: COLD_RUNS }, () => coldRun(scan.file, scan.options));
  const bytes = new Uint8Array(readFileSync(scan.file));
  const once = () => analyseBytes(bytes, scan.options);
  for (let i = 0; i < 3; i++) once();
  const points = scan.points;
  const runs = points > 100_000 ? 7 : points > 50_000 ? 9 : 21;
  const times: number[] = [];
  const checkTimes: number[] = [];
  const cpuTimes: number[] = [];
  let last = once();
  for (let i = 0; i < runs; i++) {
    const c0 = process.cpuUsage();
    const t0 = performance.now();
    last = once();
    times.push(performance.now() - t0);
    const c = process.cpuUsage(c0);
    cpuTimes.push((c.user + c.system) / 1000);
    checkTimes.push(last.elapsedMs);
  }
  return {
    points,
    cold: median(colds.map((r) => r.ms)),
    coldCpu: median(colds.map((r) => r.cpuMs)),
    coldMain: median(colds.map((r) => r.mainThreadMs ?? Number.NaN)),
    warm: median(times),
    cpu: median(cpuTimes),
    check: median(checkTimes),
    verdict: last.verdict,
    peaks: last.peaks.length,
    cell: last.cell,
  };
}

interface PeerResult {
  ms: number;
  cpuMs: number;
  peaks: number;
  indexed: number;
  cell: Cell | null;
}

/** Why the peer cannot run here (python3, numpy or scipy missing), or null. */
function peerProblem(): string | null {
  const probe = spawnSync(PYTHON, ["-c", "import numpy, scipy; print(numpy.__version__, scipy.__version__)"], { encoding: "utf8" });
  if (probe.error)
    return `the numpy/scipy peer is skipped: ${PYTHON} is not installed (install python3 with numpy and scipy, e.g. apt-get install python3-numpy python3-scipy)`;
  if (probe.status !== 0)
    return `the numpy/scipy peer is skipped: ${PYTHON} lacks numpy or scipy (install them, e.g. apt-get install python3-numpy python3-scipy)`;
  return null;
}

function peerVersions(): string {
  const probe = spawnSync(PYTHON, ["-c", "import sys, numpy, scipy; print(sys.version.split()[0], numpy.__version__, scipy.__version__)"], {
    encoding: "utf8",
  });
  const [py, np, sp] = probe.stdout.trim().split(" ");
  return `python ${py}, numpy ${np}, scipy ${sp}`;
}

/** Runs the peer on every scan in one python3 process (one BLAS thread, as our check uses one thread). */
function runPeer(scans: Scan[]): PeerResult[] {
  const request = {
    runs: PEER_RUNS,
    cases: scans.map((s) => ({
      file: s.file,
      lines: radiationLines(s.options.radiation),
      system: s.structure.system,
      centering: s.structure.centering,
      cell: s.structure.cell,
    })),
  };
  const threads = { OPENBLAS_NUM_THREADS: "1", OMP_NUM_THREADS: "1", MKL_NUM_THREADS: "1" };
  const child = spawnSync(PYTHON, ["bench/peer/lattice_peer.py"], {
    input: JSON.stringify(request),
    encoding: "utf8",
    env: { ...process.env, ...threads },
    maxBuffer: 64 << 20,
  });
  if (child.status !== 0) throw new Error(`the peer failed: ${child.stderr.trim() || `exit ${child.status}`}`);
  return child.stdout
    .trim()
    .split("\n")
    .map((line) => JSON.parse(line) as PeerResult);
}

/** The largest relative difference of two cells' edges and angles, in parts per million. */
function cellDifferencePpm(reference: Cell | null, other: Cell | null): string {
  if (!reference || !other) return "no cell";
  const keys = ["a", "b", "c", "alpha", "beta", "gamma"] as const;
  const worst = Math.max(...keys.map((k) => Math.abs(other[k] - reference[k]) / reference[k]));
  return (worst * 1e6).toFixed(0);
}

const load0 = loadavg();
const dir = mkdtempSync(join(tmpdir(), "lattice-bench-"));
let missed = 0;
let wrong = 0;
try {
  const problem = PEER ? peerProblem() : "the numpy/scipy peer is skipped (BENCH_PEER=0)";
  console.log(`cold: the first parse + check of a fresh process (median of ${COLD_RUNS}); warm: the median in one process after`);
  console.log("warm-up, wall clock and CPU time (all the process's threads, the compiler's and collector's included); of it");
  console.log("check: the check without the parse; targets on warm ms; B/point: memory one result keeps alive, per point");
  console.log(`load average at the start: ${load0.map((l) => l.toFixed(2)).join(", ")} on ${availableParallelism()} CPUs`);
  console.log("");
  console.log("case                                       points  peaks  cold ms  cold CPU  warm ms  warm CPU  of it check  target  result  B/point  verdict");
  const scans: Scan[] = [];
  const timings: Timing[] = [];
  const names: string[] = [];
  CASES.forEach((c, index) => {
    if (ONLY && !c.name.includes(ONLY)) return;
    const scan = writeScan(c, join(dir, `case-${index}.xy`));
    const r = timeScan(scan);
    const retained = MEMORY
      ? median(
          Array.from({ length: 3 }, () => {
            const bytes = new Uint8Array(readFileSync(scan.file));
            return retainedPerResult(() => analyseBytes(bytes, scan.options), r.points);
          }),
        )
      : Number.NaN;
    scans.push(scan);
    timings.push(r);
    names.push(c.name);
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
        r.coldCpu.toFixed(0).padStart(9),
        r.warm.toFixed(1).padStart(8),
        r.cpu.toFixed(1).padStart(9),
        r.check.toFixed(1).padStart(12),
        ` ${target.padEnd(6)}`,
        result.padEnd(6),
        (MEMORY ? (retained / r.points).toFixed(0) : "-").padStart(8),
        ` ${verdict}`,
      ].join(" "),
    );
  });

  console.log("");
  console.log(missed === 0 ? "all warm targets met" : `${missed} warm target(s) missed`);
  if (wrong > 0) console.log(`${wrong} scan(s) of the declared phase did not come out consistent`);

  // Side by side with the peer: CPU times, ms.
  console.log("");
  const peer = problem ? null : runPeer(scans);
  if (problem) console.log(problem);
  else console.log(`side by side with the numpy/scipy peer (bench/peer/lattice_peer.py; ${peerVersions()}), CPU ms, peer: median of ${PEER_RUNS}`);
  console.log("(cells: the largest relative difference of an edge or angle, ppm; the scans are simulated from the declared cell)");
  console.log("(cold main: the cold run's JavaScript thread alone, without the optimising compiler's threads; cold/warm on all threads)");
  console.log(
    "case                                       cold CPU  cold main  warm CPU  peer CPU  peer/warm  cold/warm  main/warm  peer peaks  peer−ours  ours−true  peer−true",
  );
  const peerRatios: number[] = [];
  const coldRatios: number[] = [];
  timings.forEach((r, i) => {
    const p = peer?.[i];
    const coldRatio = r.coldCpu / r.cpu;
    coldRatios.push(coldRatio);
    if (p) peerRatios.push(p.cpuMs / r.cpu);
    console.log(
      [
        names[i].padEnd(42),
        r.coldCpu.toFixed(1).padStart(8),
        r.coldMain.toFixed(0).padStart(10),
        r.cpu.toFixed(1).padStart(9),
        (p ? p.cpuMs.toFixed(0) : "-").padStart(9),
        (p ? `${(p.cpuMs / r.cpu).toFixed(1)}×` : "-").padStart(10),
        `${coldRatio.toFixed(2)}×`.padStart(10),
        `${(r.coldMain / r.cpu).toFixed(2)}×`.padStart(10),
        (p ? `${p.indexed}/${p.peaks}` : "-").padStart(11),
        (p ? cellDifferencePpm(r.cell, p.cell) : "-").padStart(10),
        cellDifferencePpm(scans[i].structure.cell, r.cell).padStart(10),
        (p ? cellDifferencePpm(scans[i].structure.cell, p.cell) : "-").padStart(10),
      ].join(" "),
    );
  });
  if (timings.length > 0) {
    const gmCold = geometricMean(coldRatios);
    console.log(
      `geometric mean cold/warm: ${gmCold.toFixed(2)}× (target ≤ 2×: ${gmCold <= 2 ? "met" : "MISSED"}); worst ${Math.max(...coldRatios).toFixed(2)}×`,
    );
    const mainRatios = timings.map((r) => r.coldMain / r.cpu);
    if (mainRatios.every(Number.isFinite)) console.log(`geometric mean cold main thread/warm: ${geometricMean(mainRatios).toFixed(2)}×`);
    if (peerRatios.length > 0) {
      const gmPeer = geometricMean(peerRatios);
      console.log(
        `geometric mean peer/warm: ${gmPeer.toFixed(1)}× (target ≥ 20×: ${gmPeer >= 20 ? "met" : "MISSED"}); lowest ${Math.min(...peerRatios).toFixed(1)}×`,
      );
      const coldPeer = geometricMean(timings.map((r, i) => (peer as PeerResult[])[i].cpuMs / r.coldCpu));
      console.log(`geometric mean peer/cold: ${coldPeer.toFixed(1)}×`);
    }
  }

  // Growth: the same pattern at 1×, 4× and 16× the points.
  if (GROWTH) {
    console.log("");
    console.log("growth: the same 10–110° Cu Kα pattern at 1×, 4× and 16× the points; CPU ms; µs/point and its ratio to the 1× row");
    console.log("pattern            points  cold CPU  cold main  warm CPU  cold/warm  warm µs/pt  × of 1×  peer CPU  peer µs/pt  × of 1×");
    GROWTH_STRUCTURES.forEach(([name, structure], s) => {
      const growthScans = GROWTH_STEPS.map((step, k) => writeScan({ structure, min: 10, max: 110, step }, join(dir, `growth-${s}-${k}.xy`)));
      const rows = growthScans.map(timeScan);
      const peerRows = problem ? null : runPeer(growthScans);
      const base = rows[0].cpu / rows[0].points;
      const peerBase = peerRows ? peerRows[0].cpuMs / rows[0].points : 0;
      rows.forEach((r, k) => {
        const perPoint = r.cpu / r.points;
        const p = peerRows?.[k];
        console.log(
          [
            name.padEnd(17),
            String(r.points).padStart(7),
            r.coldCpu.toFixed(1).padStart(9),
            r.coldMain.toFixed(0).padStart(10),
            r.cpu.toFixed(1).padStart(9),
            `${(r.coldCpu / r.cpu).toFixed(2)}×`.padStart(10),
            (perPoint * 1000).toFixed(2).padStart(11),
            `${(perPoint / base).toFixed(2)}`.padStart(8),
            (p ? p.cpuMs.toFixed(0) : "-").padStart(9),
            (p ? ((p.cpuMs / r.points) * 1000).toFixed(1) : "-").padStart(11),
            (p ? `${(p.cpuMs / r.points / peerBase).toFixed(2)}` : "-").padStart(8),
          ].join(" "),
        );
      });
    });
    console.log("(a × of 1× that rises with the points is a cost growing faster than linear; one that falls, a fixed cost)");
  }
} finally {
  rmSync(dir, { recursive: true, force: true });
}
// Wall-clock medians: other processes on the machine slow them; the load says how busy it was, and the CPU time
// (less affected by a busy machine, though it counts background compiling and collecting) what the runs cost.
const load = loadavg();
console.log("");
console.log(`load average at the end: ${load.map((l) => l.toFixed(2)).join(", ")} on ${availableParallelism()} CPUs`);
if (load[0] > availableParallelism()) console.log("the machine was busy: wall-clock figures are inflated; compare the CPU times");
