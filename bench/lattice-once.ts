// One lattice check in a fresh process: the cold figure of `npm run bench` (bench/run.ts starts this once per
// case and run). `node --import tsx bench/lattice-once.ts FILE OPTIONS_JSON` prints one JSON line
// {"ms", "checkMs", "verdict", "peaks"}. The time runs from before the parse to after the check, so it is the
// engine's first run on unoptimised code; starting Node and tsx, loading the modules and reading the file are
// outside it.

import { readFileSync } from "node:fs";
import type { LatticeCheckOptions } from "../app/diffraction/check";
import { analyseBytes } from "./lattice-analysis";

const [file, optionsJson] = process.argv.slice(2);
const options = JSON.parse(optionsJson) as LatticeCheckOptions;
const bytes = new Uint8Array(readFileSync(file));
const started = performance.now();
const result = analyseBytes(bytes, options);
const ms = performance.now() - started;
process.stdout.write(`${JSON.stringify({ ms, checkMs: result.elapsedMs, verdict: result.verdict, peaks: result.peaks.length })}\n`);
