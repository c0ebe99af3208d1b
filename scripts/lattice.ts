// Command line for the lattice check: `npm run -s lattice -- FILE --source Cu [options] [--json]`.
//
// Exit 0 whenever a check was made (an `inconsistent` verdict included); exit 2 with one line on stderr
// for bad input (unknown option, missing file, unreadable scan, bad cell); exit 1 for an internal fault.

import { readFileSync, statSync } from "node:fs";
import { type Cell, type Centering, type CrystalSystem, CENTERINGS, CRYSTAL_SYSTEMS } from "../app/diffraction/cell";
import { checkScanText, type LatticeCheckOptions, type LatticeCheckResult } from "../app/diffraction/check";
import { DEFAULT_MAX_BYTES } from "../app/diffraction/parse-scan";
import { type Anode, ANODES, type Radiation } from "../app/diffraction/wavelengths";

const USAGE =
  "usage: npm run -s lattice -- FILE --source Cu|Co|Mo|Cr|Fe|Ag [--wavelength Å] [--monochromatic] [--system SYSTEM] [--centering P|I|F|A|B|C|R] [--cell a,b,c,alpha,beta,gamma] [--json]";

class BadInput extends Error {}

interface Arguments {
  file: string;
  options: LatticeCheckOptions;
  json: boolean;
}

const VALUE_OPTIONS = new Set(["--source", "--wavelength", "--system", "--centering", "--cell", "--refine", "--radius"]);
const FLAG_OPTIONS = new Set(["--monochromatic", "--json"]);

function parseArguments(argv: string[]): Arguments {
  const values = new Map<string, string>();
  const flags = new Set<string>();
  const files: string[] = [];
  for (let i = 0; i < argv.length; i++) {
    const arg = argv[i];
    if (arg === "--") continue;
    if (arg.startsWith("--")) {
      const eq = arg.indexOf("=");
      const name = eq > 0 ? arg.slice(0, eq) : arg;
      if (FLAG_OPTIONS.has(name) && eq < 0) flags.add(name);
      else if (VALUE_OPTIONS.has(name)) {
        const value = eq > 0 ? arg.slice(eq + 1) : argv[++i];
        if (value === undefined || (eq < 0 && value.startsWith("--"))) throw new BadInput(`The option ${name} needs a value.`);
        values.set(name, value);
      } else throw new BadInput(`Unknown option ${arg}; ${USAGE}`);
    } else if (arg.startsWith("-") && arg.length > 1 && !/^-\d/.test(arg)) {
      throw new BadInput(`Unknown option ${arg}; ${USAGE}`);
    } else files.push(arg);
  }
  if (files.length === 0) throw new BadInput(`No scan file was given; ${USAGE}`);
  if (files.length > 1) throw new BadInput(`Only one scan file can be checked at a time; got ${files.join(", ")}.`);

  const source = values.get("--source");
  const wavelengthText = values.get("--wavelength");
  let radiation: Radiation;
  if (wavelengthText !== undefined) {
    const wavelength = Number(wavelengthText);
    if (!(wavelength > 0 && wavelength < 20)) throw new BadInput(`The wavelength must be a positive number of ångström; got "${wavelengthText}".`);
    radiation = { kind: "custom", wavelength };
  } else {
    if (!source) throw new BadInput(`The option --source (${ANODES.join("|")}) is required unless --wavelength is given.`);
    const anode = ANODES.find((a) => a.toLowerCase() === source.toLowerCase());
    if (!anode) throw new BadInput(`Unknown source "${source}"; use one of ${ANODES.join(", ")}.`);
    radiation = { kind: "anode", anode: anode as Anode, monochromation: flags.has("--monochromatic") ? "k_alpha1_only" : "k_alpha_doublet" };
  }
  if (source && !ANODES.some((a) => a.toLowerCase() === source.toLowerCase())) {
    throw new BadInput(`Unknown source "${source}"; use one of ${ANODES.join(", ")}.`);
  }

  const options: LatticeCheckOptions = { radiation };
  const system = values.get("--system");
  if (system !== undefined) {
    if (!CRYSTAL_SYSTEMS.includes(system.toLowerCase() as CrystalSystem)) {
      throw new BadInput(`Unknown crystal system "${system}"; use one of ${CRYSTAL_SYSTEMS.join(", ")}.`);
    }
    options.system = system.toLowerCase() as CrystalSystem;
  }
  const centering = values.get("--centering");
  if (centering !== undefined) {
    if (!CENTERINGS.includes(centering.toUpperCase() as Centering)) {
      throw new BadInput(`Unknown centering "${centering}"; use one of ${CENTERINGS.join(", ")}.`);
    }
    options.centering = centering.toUpperCase() as Centering;
  }
  const cellText = values.get("--cell");
  if (cellText !== undefined) options.cell = parseCell(cellText);
  const refine = values.get("--refine");
  if (refine !== undefined) {
    if (refine !== "zero_shift" && refine !== "displacement") throw new BadInput(`--refine takes zero_shift or displacement; got "${refine}".`);
    options.refine = refine;
  }
  const radius = values.get("--radius");
  if (radius !== undefined) {
    const r = Number(radius);
    if (!(r > 0)) throw new BadInput(`The goniometer radius must be a positive number of mm; got "${radius}".`);
    options.goniometerRadiusMm = r;
  }
  return { file: files[0], options, json: flags.has("--json") };
}

function parseCell(text: string): Cell {
  const parts = text.split(",").map((p) => p.trim());
  const numbers = parts.map(Number);
  if (parts.length !== 6 || numbers.some((v) => !Number.isFinite(v)) || parts.some((p) => p === "")) {
    throw new BadInput(`The cell must be six numbers a,b,c,alpha,beta,gamma (Å and degrees); got "${text}".`);
  }
  const [a, b, c, alpha, beta, gamma] = numbers;
  return { a, b, c, alpha, beta, gamma };
}

function readScanText(file: string): string {
  let size: number;
  try {
    const stat = statSync(file);
    if (!stat.isFile()) throw new BadInput(`${file} is not a file.`);
    size = stat.size;
  } catch (error) {
    if (error instanceof BadInput) throw error;
    throw new BadInput(`Cannot read ${file}: no such file.`);
  }
  if (size > DEFAULT_MAX_BYTES) throw new BadInput(`${file} is larger than the ${DEFAULT_MAX_BYTES / (1024 * 1024)} MB limit for a scan.`);
  try {
    return readFileSync(file, "utf8");
  } catch {
    throw new BadInput(`Cannot read ${file}.`);
  }
}

const CELL_KEYS = ["a", "b", "c", "alpha", "beta", "gamma"] as const;

function toJson(result: LatticeCheckResult, elapsedMs: number) {
  return {
    verdict: result.verdict,
    reasons: result.reasons,
    system: result.system,
    centering: result.centering,
    wavelength: result.wavelength,
    declaredCell: result.declaredCell,
    cell: result.cell,
    esd: result.esd,
    deviation: result.deviation,
    correction: result.correction,
    zeroShift: result.zeroShift,
    zeroShiftEsd: result.zeroShiftEsd,
    displacement: result.displacement,
    displacementEsd: result.displacementEsd,
    figuresOfMerit: result.figuresOfMerit,
    reducedChi2: result.reducedChi2,
    peaksUsed: result.peaksUsed,
    peaks: result.peaks.map((p) => ({
      twoTheta: p.twoTheta,
      twoThetaEsd: p.twoThetaEsd,
      d: p.d,
      intensity: p.intensity,
      relativeIntensity: p.relativeIntensity,
      height: p.height,
      fwhm: p.fwhm,
      eta: p.eta,
      hkl: p.hkl,
      twoThetaCalc: p.twoThetaCalc ?? null,
      delta: p.delta ?? null,
      usedInRefinement: p.usedInRefinement,
      crystalliteSizeNm: p.crystalliteSizeNm,
    })),
    unindexed: result.unindexed.map((p) => ({ twoTheta: p.twoTheta, d: p.d, relativeIntensity: p.relativeIntensity })),
    cubicIndexing: result.cubicIndexing,
    warnings: result.warnings,
    elapsedMs,
  };
}

const fixed = (v: number | null | undefined, digits: number) => (v === null || v === undefined || !Number.isFinite(v) ? "—" : v.toFixed(digits));

function toTable(result: LatticeCheckResult, elapsedMs: number): string {
  const out: string[] = [];
  out.push(`Verdict: ${result.verdict}`);
  for (const r of result.reasons) out.push(`  - ${r}`);
  out.push("");
  out.push(`System ${result.system ?? "—"}, centering ${result.centering ?? "—"}, λ = ${result.wavelength} Å`);
  if (result.cell) {
    out.push("param      refined        esd     declared   refined−declared");
    for (const k of CELL_KEYS) {
      const digits = k.length === 1 ? 5 : 3;
      out.push(
        `${k.padEnd(6)} ${fixed(result.cell[k], digits).padStart(12)} ${fixed(result.esd?.[k], digits + 1).padStart(10)} ${fixed(result.declaredCell?.[k], digits).padStart(12)} ${fixed(result.deviation?.absolute[k], digits + 1).padStart(12)}`,
      );
    }
    if (result.correction === "zero_shift") out.push(`zero shift ${fixed(result.zeroShift, 4)}° 2θ (esd ${fixed(result.zeroShiftEsd, 4)})`);
    else out.push(`specimen displacement ${fixed(result.displacement, 4)} mm (esd ${fixed(result.displacementEsd, 4)})`);
  } else out.push("No refined cell.");
  const fom = result.figuresOfMerit;
  out.push(
    `M${fom.M20Lines} = ${fixed(fom.M20, 1)}   F${fom.FNLines} = ${fixed(fom.FN, 1)} (${fixed(fom.FNMeanDelta, 4)}°, ${fom.FNPossible ?? "—"})   peaks used ${result.peaksUsed}`,
  );
  out.push("");
  out.push("   2θ obs      d (Å)   I rel    FWHM    hkl          2θ calc     Δ2θ");
  for (const p of result.peaks) {
    const hkl = p.hkl ? p.hkl.join(" ") : "unindexed";
    out.push(
      `${fixed(p.twoTheta, 4).padStart(9)} ${fixed(p.d, 5).padStart(10)} ${fixed(p.relativeIntensity, 1).padStart(7)} ${fixed(p.fwhm, 4).padStart(7)}    ${hkl.padEnd(12)} ${fixed(p.twoThetaCalc, 4).padStart(9)} ${fixed(p.delta, 4).padStart(8)}`,
    );
  }
  if (result.warnings.length > 0) {
    out.push("");
    for (const w of result.warnings) out.push(`warning: ${w}`);
  }
  out.push(`analysis ${elapsedMs.toFixed(1)} ms`);
  return out.join("\n");
}

function main(): number {
  let args: Arguments;
  let text: string;
  try {
    args = parseArguments(process.argv.slice(2));
    text = readScanText(args.file);
  } catch (error) {
    if (error instanceof BadInput) {
      process.stderr.write(`lattice: ${error.message}\n`);
      return 2;
    }
    throw error;
  }
  const started = performance.now();
  const checked = checkScanText(text, { ...args.options, fileName: args.file });
  const elapsedMs = performance.now() - started;
  if (!checked.ok) {
    process.stderr.write(`lattice: ${checked.error}\n`);
    return 2;
  }
  process.stdout.write(`${args.json ? JSON.stringify(toJson(checked.result, elapsedMs)) : toTable(checked.result, elapsedMs)}\n`);
  return 0;
}

try {
  process.exitCode = main();
} catch (error) {
  // An internal fault, not bad input: still one line and no stack trace.
  process.stderr.write(`lattice: internal error: ${error instanceof Error ? error.message : String(error)}\n`);
  process.exitCode = 1;
}
