// Two building blocks of the check and the simulator, timed warm (best batch of five, wall clock and CPU): the
// reflection list of a cell and a simulated 70k-point scan. These targets stood in unit tests before; speed is
// measured here, not asserted in tests (docs/performance.md). `npx tsx bench/kernels.ts`, part of `npm run bench`.
import { loadavg } from "node:os";
import type { Cell } from "../app/diffraction/cell";
import { allowedReflections } from "../app/diffraction/reflections";
import { simulatePattern } from "../app/diffraction/simulate";
import { STRUCTURES } from "../app/diffraction/structures";
import type { Radiation } from "../app/diffraction/wavelengths";

/** Best of five batches of `n` calls after five warm-up calls: ms per call, wall clock and CPU. */
function time(f: () => void, n: number) {
  for (let i = 0; i < 5; i++) f();
  let wall = Number.POSITIVE_INFINITY;
  let cpu = Number.POSITIVE_INFINITY;
  for (let batch = 0; batch < 5; batch++) {
    const c0 = process.cpuUsage();
    const t0 = performance.now();
    for (let i = 0; i < n; i++) f();
    wall = Math.min(wall, (performance.now() - t0) / n);
    const c = process.cpuUsage(c0);
    cpu = Math.min(cpu, (c.user + c.system) / 1000 / n);
  }
  return { wall, cpu };
}

const cubic = (a: number): Cell => ({ a, b: a, c: a, alpha: 90, beta: 90, gamma: 90 });
const CU_DOUBLET: Radiation = { kind: "anode", anode: "Cu", monochromation: "k_alpha_doublet" };
const scan = { radiation: CU_DOUBLET, twoThetaMin: 5, twoThetaMax: 145, step: 0.002, noise: { seed: 3 }, background: { constant: 100 } };

// Targets: common practice for an interactive check (a reflection list is rebuilt for every trial cell, so it
// must cost far less than a millisecond for a small cell; a simulated scan is drawn while a person waits).
const cases: { name: string; target: number; run: () => void; n: number }[] = [
  { name: "reflections, cubic P 5 Å to d 0.8 Å", target: 0.5, n: 100, run: () => allowedReflections(cubic(5), "cubic", "P", { dMin: 0.8 }) },
  {
    name: "reflections, monoclinic P 10×12×15 Å to d 1 Å",
    target: 5,
    n: 10,
    run: () => allowedReflections({ a: 10, b: 12, c: 15, alpha: 90, beta: 105, gamma: 90 }, "monoclinic", "P", { dMin: 1 }),
  },
  { name: "simulated scan, LiFePO4, 70,001 points", target: 500, n: 1, run: () => simulatePattern({ structure: STRUCTURES.lithiumIronPhosphate, ...scan }) },
  {
    name: "simulated scan, monoclinic cell, 70,001 points",
    target: 500,
    n: 1,
    run: () => simulatePattern({ cell: { a: 10, b: 12, c: 15, alpha: 90, beta: 105, gamma: 90 }, system: "monoclinic", centering: "P", ...scan }),
  },
];

console.log(`\nkernel                                            wall ms   CPU ms   target ms  check   (load ${loadavg()[0].toFixed(1)})`);
for (const c of cases) {
  const t = time(c.run, c.n);
  console.log(
    `${c.name.padEnd(48)} ${t.wall.toFixed(3).padStart(9)} ${t.cpu.toFixed(3).padStart(8)} ${String(c.target).padStart(11)}  ${t.cpu <= c.target ? "met" : "MISSED"}`,
  );
}
console.log("warm, best batch of five after five warm-up calls; the check is on CPU time.");
