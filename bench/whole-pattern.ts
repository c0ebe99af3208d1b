// Time of the whole-pattern (Le Bail) fit on simulated scans and one measured scan, one thread.
//
// Each case builds its scan and the peak analysis the fit starts from (outside the timing), then times
// fitWholePattern alone two ways:
// - cold: a fresh Node process (this file with `--once CASE`) runs the fit once — the first fit after a worker
//   starts, on code not yet optimised; the median of BENCH_COLD_RUNS (default 3) processes;
// - warm: in this process, two warm-up fits, then the median of N fits (wall clock and CPU time).
// The start cells are the true ones off by about 0.1 % (a cell the peak refinement hands over), and the default
// cellUncertainty (0.3 %) is used, so the broadened stages run as they would in the check. Targets are on the
// warm figure: the issue's bound is 1 s for a 7k-point three-phase scan; the check runs the fit once per
// candidate, so well below is the aim.
//
// BENCH_ONLY=text runs the cases whose name contains it. `npx tsx bench/whole-pattern.ts`.

import { spawnSync } from "node:child_process";
import { readFileSync } from "node:fs";
import { availableParallelism, loadavg } from "node:os";
import type { Cell } from "../app/diffraction/cell";
import { parseScan } from "../app/diffraction/parse-scan";
import { analysePeaks } from "../app/diffraction/peaks";
import { mulberry32, poissonSampler, simulatePattern } from "../app/diffraction/simulate";
import { type CrystalStructure, STRUCTURES } from "../app/diffraction/structures";
import { type Radiation, radiationLines } from "../app/diffraction/wavelengths";
import { fitWholePattern, type WholePatternInput } from "../app/diffraction/whole-pattern";

const CU: Radiation = { kind: "anode", anode: "Cu", monochromation: "k_alpha_doublet" };
const LINES = radiationLines(CU);

interface Case {
  name: string;
  build: () => WholePatternInput;
  /** Warm fit, ms. */
  target?: number;
}

/** The cell off by +0.1 % on a, −0.08 % on c (b follows the system's constraint), as a start. */
function nudged(cell: Cell): Cell {
  const equalAB = Math.abs(cell.a - cell.b) < 1e-9;
  const a = cell.a * 1.001;
  return { ...cell, a, b: equalAB ? a : cell.b * 0.9992, c: cell.c * 0.9992 };
}

/** A mixture: the phases simulated without noise, summed with a background at the given weights, then counted. */
function mixture(structures: CrystalStructure[], weights: number[], min: number, max: number, step: number, seed: number): WholePatternInput {
  const sims = structures.map((structure, k) =>
    simulatePattern({ structure, radiation: CU, twoThetaMin: min, twoThetaMax: max, step, zeroShift: 0.02, scale: 10_000 * weights[k] }),
  );
  const x = sims[0].twoTheta;
  const poisson = poissonSampler(mulberry32(seed));
  const y = Float64Array.from(x, (t, i) => poisson(sims.reduce((s, sim) => s + sim.intensity[i], 0) + 150 + 60 * Math.exp(-(((t - 25) / 8) ** 2))));
  return inputFor(
    x,
    y,
    structures.map((s) => ({ system: s.system, centering: s.centering, cell: nudged(s.cell) })),
  );
}

function inputFor(x: Float64Array, y: Float64Array, phases: WholePatternInput["phases"]): WholePatternInput {
  const analysis = analysePeaks(x, y, { lines: LINES });
  return {
    twoTheta: x,
    intensity: y,
    variance: analysis.variance,
    background: analysis.background,
    lines: LINES,
    phases,
    correction: { kind: "zero_shift", zeroShift: 0.02, displacement: 0, penetrationMm: 0, radiusMm: 240 },
    typicalFwhm: analysis.typicalFwhm,
  };
}

const CASES: Case[] = [
  {
    name: "three phases Al2O3 + ZnO + TiO2, 7k points",
    build: () => mixture([STRUCTURES.corundum, STRUCTURES.zincite, STRUCTURES.rutile], [1, 0.6, 0.4], 10, 150, 0.02, 3),
    target: 1000,
  },
  {
    name: "monoclinic ZrO2, 5.5k points",
    build: () => mixture([STRUCTURES.baddeleyite], [1], 10, 120, 0.02, 5),
  },
  {
    name: "cubic LaB6 (measured, SRM 660c), 8.4k points",
    build: () => {
      const parsed = parseScan(new Uint8Array(readFileSync("tests/data/real/lab6-srm660c-cu.gsas")), { fileName: "lab6-srm660c-cu.gsas" });
      if (!parsed.ok) throw new Error(parsed.error);
      const cell = STRUCTURES.lanthanumHexaboride.cell;
      return inputFor(parsed.scan.twoTheta, parsed.scan.intensity, [{ system: "cubic", centering: "P", cell: nudged(cell) }]);
    },
  },
  {
    name: "three phases Al2O3 + ZnO + TiO2, 70k points",
    build: () => mixture([STRUCTURES.corundum, STRUCTURES.zincite, STRUCTURES.rutile], [1, 0.6, 0.4], 10, 150, 0.002, 3),
  },
  {
    // The synchrotron scan of bench/run.ts: 0.4 Å, 2–54° 2θ in 0.0004° steps, lines about 0.005° wide; some 2000
    // reflections.
    name: "orthorhombic LiFePO4, 0.4 Å, 130k points",
    build: () => {
      const s = STRUCTURES.lithiumIronPhosphate;
      const radiation: Radiation = { kind: "custom", wavelength: 0.4 };
      const sim = simulatePattern({
        structure: s,
        radiation,
        twoThetaMin: 2,
        twoThetaMax: 54,
        step: 0.0004,
        peakShape: { U: 0.0001, V: -0.00005, W: 0.00003, eta: 0.3 },
        zeroShift: 0.002,
        background: { constant: 200, slope: -2, hump: { center: 8, fwhm: 4, height: 150 } },
        noise: { seed: 1 },
      });
      const lines = radiationLines(radiation);
      const analysis = analysePeaks(sim.twoTheta, sim.intensity, { lines });
      return {
        twoTheta: sim.twoTheta,
        intensity: sim.intensity,
        variance: analysis.variance,
        background: analysis.background,
        lines,
        phases: [{ system: s.system, centering: s.centering, cell: nudged(s.cell) }],
        correction: { kind: "zero_shift", zeroShift: 0, displacement: 0, penetrationMm: 0, radiusMm: 240 },
        typicalFwhm: analysis.typicalFwhm,
      };
    },
  },
];

const COLD_RUNS = Math.max(1, Number(process.env.BENCH_COLD_RUNS ?? 3));
const ONLY = process.env.BENCH_ONLY;

function median(values: number[]): number {
  const s = [...values].sort((a, b) => a - b);
  const m = s.length >> 1;
  return s.length % 2 ? s[m] : 0.5 * (s[m - 1] + s[m]);
}

/** One fit in a fresh process, ms, as the child measured it. */
function coldRun(index: number): number {
  const child = spawnSync(process.execPath, ["--import", "tsx", "bench/whole-pattern.ts", "--once", String(index)], { encoding: "utf8", timeout: 300_000 });
  if (child.status !== 0) throw new Error(`the cold run failed: ${child.stderr.trim() || `exit ${child.status}`}`);
  return (JSON.parse(child.stdout) as { ms: number }).ms;
}

const onceAt = process.argv.indexOf("--once");
if (onceAt >= 0) {
  const input = CASES[Number(process.argv[onceAt + 1])].build();
  const started = performance.now();
  fitWholePattern(input);
  process.stdout.write(`${JSON.stringify({ ms: performance.now() - started })}\n`);
} else {
  let missed = 0;
  console.log(`cold: one fit in a fresh process (median of ${COLD_RUNS}); warm: the median in one process after warm-up,`);
  console.log("wall clock and CPU time; the fit alone (the scan and its peak analysis are made outside the timing)");
  console.log("");
  console.log("case                                             points  phases  refl.  cycles  cold ms  warm ms  warm CPU  target  result  Rwp     GoF");
  CASES.forEach((c, index) => {
    if (ONLY && !c.name.includes(ONLY)) return;
    const input = c.build();
    const cold = median(Array.from({ length: COLD_RUNS }, () => coldRun(index)));
    for (let i = 0; i < 2; i++) fitWholePattern(input);
    const runs = input.twoTheta.length > 50_000 ? 5 : 11;
    const times: number[] = [];
    const cpu: number[] = [];
    let fit = fitWholePattern(input);
    for (let i = 0; i < runs; i++) {
      const c0 = process.cpuUsage();
      const t0 = performance.now();
      fit = fitWholePattern(input);
      times.push(performance.now() - t0);
      const used = process.cpuUsage(c0);
      cpu.push((used.user + used.system) / 1000);
    }
    const warm = median(times);
    const meets = c.target === undefined || warm <= c.target;
    if (!meets) missed++;
    console.log(
      [
        c.name.padEnd(48),
        String(fit.points).padStart(6),
        String(input.phases.length).padStart(7),
        String(fit.reflections).padStart(6),
        String(fit.cycles).padStart(7),
        cold.toFixed(0).padStart(8),
        warm.toFixed(0).padStart(8),
        median(cpu).toFixed(0).padStart(9),
        ` ${(c.target === undefined ? "" : `≤${c.target}`).padEnd(6)}`,
        (c.target === undefined ? "" : meets ? "pass" : "FAIL").padEnd(6),
        `${(100 * fit.Rwp).toFixed(2)}%`.padStart(7),
        fit.GoF.toFixed(2).padStart(6),
      ].join(" "),
    );
  });
  console.log("");
  console.log(missed === 0 ? "all targets met" : `${missed} target(s) missed`);
  const load = loadavg();
  console.log(`load average during the run: ${load.map((l) => l.toFixed(2)).join(", ")} on ${availableParallelism()} CPUs`);
  if (load[0] > availableParallelism()) console.log("the machine was busy: wall-clock figures are inflated; compare warm CPU with the targets");
}
