// Analysis time and memory of the lattice check on simulated scans of 4k–70k points, warm, one thread.
//
// Each case: a scan simulated once, three warm-up runs, then the median of N timed runs of
// parseScan + runLatticeCheck (the text is parsed each time, as an upload would be). Memory: the heap
// (plus typed-array buffers) retained by one result after a forced collection, per point; it should stay
// flat as the points grow (the result holds the scan, background and fitted profile: 4 × 8 bytes a point).

import { loadavg } from "node:os";
import { setFlagsFromString } from "node:v8";
import { runInNewContext } from "node:vm";
import { runLatticeCheck } from "../app/diffraction/check";
import { parseScan } from "../app/diffraction/parse-scan";
import { formatScanAsXy, simulatePattern } from "../app/diffraction/simulate";
import { type CrystalStructure, STRUCTURES } from "../app/diffraction/structures";
import type { Radiation } from "../app/diffraction/wavelengths";

setFlagsFromString("--expose-gc");
const gc = runInNewContext("gc") as () => void;

interface Case {
  name: string;
  structure: CrystalStructure;
  min: number;
  max: number;
  step: number;
  target?: number;
}

const CU: Radiation = { kind: "anode", anode: "Cu", monochromation: "k_alpha_doublet" };

// Targets from the issue: 5k-point cubic ≤ 20 ms; 70k-point ≤ 120 ms; 4k-point monoclinic ≤ 250 ms.
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
];

function median(values: number[]): number {
  const s = [...values].sort((a, b) => a - b);
  const m = s.length >> 1;
  return s.length % 2 ? s[m] : 0.5 * (s[m - 1] + s[m]);
}

function runCase(c: Case) {
  const sim = simulatePattern({
    structure: c.structure,
    radiation: CU,
    twoThetaMin: c.min,
    twoThetaMax: c.max,
    step: c.step,
    zeroShift: 0.02,
    background: { constant: 200, slope: -0.5, hump: { center: 25, fwhm: 10, height: 150 } },
    noise: { seed: 1 },
  });
  const text = formatScanAsXy(sim);
  const options = { radiation: CU, system: c.structure.system, centering: c.structure.centering, cell: c.structure.cell };
  const once = () => {
    const parsed = parseScan(text);
    if (!parsed.ok) throw new Error(parsed.error);
    return runLatticeCheck(parsed.scan, options);
  };
  for (let i = 0; i < 3; i++) once();
  const runs = sim.twoTheta.length > 50_000 ? 9 : 21;
  const times: number[] = [];
  const checkTimes: number[] = [];
  let verdict = "";
  for (let i = 0; i < runs; i++) {
    const t0 = performance.now();
    const r = once();
    times.push(performance.now() - t0);
    checkTimes.push(r.elapsedMs);
    verdict = r.verdict;
  }
  // Typed arrays live outside the JS heap, so both are counted.
  const used = () => {
    const m = process.memoryUsage();
    return m.heapUsed + m.arrayBuffers;
  };
  // Three results kept alive at once, so one collection's noise is shared out.
  gc();
  const before = used();
  const kept = [once(), once(), once()];
  gc();
  const retained = (used() - before) / kept.length;
  return { points: sim.twoTheta.length, total: median(times), check: median(checkTimes), verdict, retained, peaks: kept[0].peaks.length };
}

const rows: string[] = [];
console.log("case                                 points  peaks  parse+check ms  check ms  target    verdict       retained B/point");
let failures = 0;
for (const c of CASES) {
  const r = runCase(c);
  const meets = c.target === undefined ? "" : r.total <= c.target ? `≤${c.target} ok` : `>${c.target} MISS`;
  if (c.target !== undefined && r.total > c.target) failures++;
  rows.push(
    `${c.name.padEnd(36)} ${String(r.points).padStart(6)} ${String(r.peaks).padStart(6)} ${r.total.toFixed(1).padStart(15)} ${r.check.toFixed(1).padStart(9)}  ${meets.padEnd(9)} ${r.verdict.padEnd(13)} ${(r.retained / r.points).toFixed(0).padStart(8)}`,
  );
  console.log(rows[rows.length - 1]);
}
console.log(failures === 0 ? "all targets met" : `${failures} target(s) missed`);
// Wall-clock medians: other processes on the machine slow them; the load says how busy it was.
console.log(
  `load average during the run: ${loadavg()
    .map((l) => l.toFixed(2))
    .join(", ")}`,
);
