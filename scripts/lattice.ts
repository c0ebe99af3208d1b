// Command line for the lattice check: `npm run -s lattice -- FILE… [--source Cu | --wavelength Å] [options] [--json]`.
//
// Every file is checked with the same options. With --json, one JSON object per line (JSON Lines), each
// starting with `file` as given; a file that cannot be read or checked gives `{ file, error }`. Without
// --json, the table of each file (under a header line when there are several) and one line on stderr per
// bad file. Exit 0 when at least one file was checked (an `inconsistent` verdict included); exit 2 when no
// file was (bad options, or every file bad); exit 1 for an internal fault. Without --source or --wavelength
// each file's own statement of its radiation is used.

import { readFileSync, statSync } from "node:fs";
import { type Cell, type Centering, type CrystalSystem, CENTERINGS, CRYSTAL_SYSTEMS } from "../app/diffraction/cell";
import { checkOptionsProblem, checkScanFile, type LatticeCheckOptions, type LatticeCheckResult } from "../app/diffraction/check";
import { DEFAULT_MAX_BYTES, parseScan, type ScanMetadata } from "../app/diffraction/parse-scan";
import type { AcceptanceWindow, DeclaredPhase } from "../app/diffraction/phases";
import type { CorrectionKind } from "../app/diffraction/refine";
import { fixedCellParameters } from "../app/diffraction/window";
import { ANODE_LINES, ANODES, type Monochromation, type Radiation } from "../app/diffraction/wavelengths";

const USAGE =
  "usage: npm run -s lattice -- FILE… [--source Cu|Co|Mo|Cr|Fe|Ag | --wavelength Å] [--monochromatic] [--system SYSTEM] [--centering P|I|F|A|B|C|R] [--cell a,b,c,alpha,beta,gamma] [--refine auto|zero_shift|displacement|zero_and_displacement] [--radius mm] [--transparency refine|μ/cm⁻¹] [--phase SYSTEM/CENTERING/a,b,c,alpha,beta,gamma[/NAME]]… [--candidate SYSTEM/CENTERING/a,b,c,alpha,beta,gamma[/NAME]]… [--name MAIN_NAME] [--window a=0.002,c=0.3%] [--json]";

class BadInput extends Error {}

/** The check's options except the radiation, which may come from each file instead. */
type SharedOptions = Omit<LatticeCheckOptions, "radiation">;

interface Arguments {
  files: string[];
  /** From --source or --wavelength; null when each file states its own. */
  radiation: Radiation | null;
  monochromatic: boolean;
  options: SharedOptions;
  json: boolean;
}

const REFINE_CHOICES: readonly CorrectionKind[] = ["auto", "zero_shift", "displacement", "zero_and_displacement"];
const VALUE_OPTIONS = new Set([
  "--source",
  "--wavelength",
  "--system",
  "--centering",
  "--cell",
  "--refine",
  "--radius",
  "--transparency",
  "--name",
  "--window",
]);
/** Options that may be given more than once (each a further expected phase, or a candidate form). */
const REPEATED_OPTIONS = new Set(["--phase", "--candidate"]);
const FLAG_OPTIONS = new Set(["--monochromatic", "--json"]);

function parseArguments(argv: string[]): Arguments {
  const values = new Map<string, string>();
  const repeated = new Map<string, string[]>();
  const flags = new Set<string>();
  const files: string[] = [];
  for (let i = 0; i < argv.length; i++) {
    const arg = argv[i];
    if (arg === "--") continue;
    if (arg.startsWith("--")) {
      const eq = arg.indexOf("=");
      const name = eq > 0 ? arg.slice(0, eq) : arg;
      if (FLAG_OPTIONS.has(name) && eq < 0) flags.add(name);
      else if (VALUE_OPTIONS.has(name) || REPEATED_OPTIONS.has(name)) {
        const value = eq > 0 ? arg.slice(eq + 1) : argv[++i];
        if (value === undefined || (eq < 0 && value.startsWith("--"))) throw new BadInput(`The option ${name} needs a value.`);
        if (REPEATED_OPTIONS.has(name)) repeated.set(name, [...(repeated.get(name) ?? []), value]);
        else values.set(name, value);
      } else throw new BadInput(`Unknown option ${arg}; ${USAGE}`);
    } else if (arg.startsWith("-") && arg.length > 1 && !/^-\d/.test(arg)) {
      throw new BadInput(`Unknown option ${arg}; ${USAGE}`);
    } else files.push(arg);
  }
  if (files.length === 0) throw new BadInput(`No scan file was given; ${USAGE}`);

  const monochromatic = flags.has("--monochromatic");
  const source = values.get("--source");
  const anode = source === undefined ? undefined : ANODES.find((a) => a.toLowerCase() === source.toLowerCase());
  if (source !== undefined && !anode) throw new BadInput(`Unknown source "${source}"; use one of ${ANODES.join(", ")}.`);
  const wavelengthText = values.get("--wavelength");
  let radiation: Radiation | null = null;
  if (wavelengthText !== undefined) {
    const wavelength = Number(wavelengthText);
    if (!(wavelength > 0 && wavelength < 20)) throw new BadInput(`The wavelength must be a positive number of ångström; got "${wavelengthText}".`);
    radiation = { kind: "custom", wavelength };
  } else if (anode) {
    radiation = { kind: "anode", anode, monochromation: monochromatic ? "k_alpha1_only" : "k_alpha_doublet" };
  }

  const options: SharedOptions = {};
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
    if (!REFINE_CHOICES.includes(refine as CorrectionKind)) throw new BadInput(`--refine takes ${REFINE_CHOICES.join(", ")}; got "${refine}".`);
    options.refine = refine as CorrectionKind;
  }
  const radius = values.get("--radius");
  if (radius !== undefined) {
    const r = Number(radius);
    if (!(r > 0)) throw new BadInput(`The goniometer radius must be a positive number of mm; got "${radius}".`);
    options.goniometerRadiusMm = r;
  }
  // Transparency of a weakly absorbing sample: refined, or fixed from its linear attenuation coefficient μ.
  const transparency = values.get("--transparency");
  if (transparency !== undefined) {
    const mu = Number(transparency);
    if (transparency === "refine") options.transparency = { refine: true };
    else if (mu > 0 && Number.isFinite(mu)) options.transparency = { linearAttenuationPerCm: mu };
    else throw new BadInput(`--transparency takes "refine" or the sample's linear attenuation coefficient in cm⁻¹ (a positive number); got "${transparency}".`);
  }
  const name = values.get("--name");
  if (name !== undefined) options.mainName = name;
  const phases = (repeated.get("--phase") ?? []).map((text) => parsePhase(text, "--phase"));
  if (phases.length > 0) options.phases = phases;
  const candidates = (repeated.get("--candidate") ?? []).map((text) => parsePhase(text, "--candidate"));
  if (candidates.length > 0) options.candidates = candidates;
  const windowText = values.get("--window");
  if (windowText !== undefined) options.window = parseWindow(windowText);
  // System, centering and cell are the same for every file: a contradiction among them is bad options, not a bad
  // file. The radiation stands in for itself when given (its problems were refused above).
  const problem = checkOptionsProblem({ ...options, radiation: radiation ?? { kind: "anode", anode: "Cu", monochromation: "k_alpha_doublet" } });
  if (problem) throw new BadInput(problem);
  return { files, radiation, monochromatic, options, json: flags.has("--json") };
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

/** `SYSTEM/CENTERING/a,b,c,alpha,beta,gamma[/NAME]`: one declared phase. */
function parsePhase(text: string, option: string): DeclaredPhase {
  const [systemText, centeringText, cellText, ...nameParts] = text.split("/");
  const system = systemText?.trim().toLowerCase() as CrystalSystem;
  if (!CRYSTAL_SYSTEMS.includes(system)) {
    throw new BadInput(`${option} takes SYSTEM/CENTERING/a,b,c,alpha,beta,gamma[/NAME]; "${systemText}" is not one of ${CRYSTAL_SYSTEMS.join(", ")}.`);
  }
  const centering = centeringText?.trim().toUpperCase() as Centering;
  if (!CENTERINGS.includes(centering)) throw new BadInput(`${option}: unknown centering "${centeringText ?? ""}"; use one of ${CENTERINGS.join(", ")}.`);
  if (cellText === undefined) throw new BadInput(`${option} takes SYSTEM/CENTERING/a,b,c,alpha,beta,gamma[/NAME]; the cell is missing in "${text}".`);
  const name = nameParts.join("/").trim();
  return { name: name || null, system, centering, cell: parseCell(cellText) };
}

const WINDOW_KEYS = ["a", "b", "c", "alpha", "beta", "gamma"] as const;

/** `a=0.002,c=0.3%`: ± Å (degrees for angles) or ± % per cell parameter. */
function parseWindow(text: string): AcceptanceWindow {
  const window: AcceptanceWindow = {};
  for (const part of text.split(",").map((p) => p.trim())) {
    const m = /^(a|b|c|alpha|beta|gamma)\s*=\s*([0-9.eE+-]+)\s*(%?)$/.exec(part);
    if (!m) throw new BadInput(`--window takes parameter=value pairs such as a=0.002,c=0.3% (Å or degrees, or %); got "${part}".`);
    const key = m[1] as (typeof WINDOW_KEYS)[number];
    const value = Number(m[2]);
    if (!(value > 0 && Number.isFinite(value))) throw new BadInput(`--window: the window of ${key} must be a positive number; got "${m[2]}".`);
    window[key] = { plusMinus: value, unit: m[3] === "%" ? "percent" : "absolute" };
  }
  return window;
}

/** The file's bytes, as a binary format needs them; the analysis decides what the bytes are. */
function readScanBytes(file: string): Uint8Array {
  let size: number;
  try {
    const stat = statSync(file);
    if (!stat.isFile()) throw new BadInput("It is not a file.");
    size = stat.size;
  } catch (error) {
    if (error instanceof BadInput) throw error;
    throw new BadInput("There is no such file.");
  }
  if (size > DEFAULT_MAX_BYTES) throw new BadInput(`The file is larger than the ${DEFAULT_MAX_BYTES / (1024 * 1024)} MB limit for a scan.`);
  try {
    const buffer = readFileSync(file);
    return new Uint8Array(buffer.buffer, buffer.byteOffset, buffer.byteLength);
  } catch {
    throw new BadInput("The file cannot be read.");
  }
}

/** Relative agreement within which a stated Kα1 is taken to name an anode (files round to 4–6 digits). */
const ANODE_MATCH = 5e-4;

/** What a file states about its radiation. */
type StatedRadiation = Pick<ScanMetadata, "anode" | "kAlpha1" | "kAlpha2" | "kAlpha2Ratio" | "wavelength">;

/**
 * The radiation a file states, as the check takes it; a sentence when it states none that can be used. A named
 * anode is taken with its tabulated lines (docs/reference-values.md#x-ray-wavelengths); a single stated wavelength
 * means monochromatic radiation (the anode's Kα1 when it is that line, else that wavelength); a Kα1 without an
 * anode's name is matched to an anode's Kα1.
 */
function radiationFromFile(stated: StatedRadiation, monochromatic: boolean): Radiation | string {
  const single = positive(stated.wavelength);
  const named = ANODES.find((a) => a.toLowerCase() === stated.anode?.trim().toLowerCase());
  const kAlpha1 = positive(stated.kAlpha1);
  const anode = named ?? (kAlpha1 ? ANODES.find((a) => near(ANODE_LINES[a].kAlpha1, kAlpha1)) : undefined);
  if (single && (!anode || !near(ANODE_LINES[anode].kAlpha1, single))) return { kind: "custom", wavelength: single };
  if (anode) {
    const kAlpha1Only = monochromatic || single !== undefined || stated.kAlpha2Ratio === 0 || (kAlpha1 !== undefined && !positive(stated.kAlpha2));
    const monochromation: Monochromation = kAlpha1Only ? "k_alpha1_only" : "k_alpha_doublet";
    return { kind: "anode", anode, monochromation };
  }
  if (kAlpha1 && !positive(stated.kAlpha2)) return { kind: "custom", wavelength: kAlpha1 };
  if (kAlpha1) {
    return `The file states Kα1 = ${kAlpha1} Å and Kα2 = ${stated.kAlpha2} Å, which match no anode (${ANODES.join(", ")}); give --source or --wavelength.`;
  }
  if (stated.anode) return `The file names the anode "${stated.anode}", which is not one of ${ANODES.join(", ")}; give --wavelength.`;
  return "The file does not state its radiation; give --source or --wavelength.";
}

function positive(value: number | undefined): number | undefined {
  return value !== undefined && Number.isFinite(value) && value > 0 ? value : undefined;
}

function near(tabulated: number, stated: number): boolean {
  return Math.abs(stated - tabulated) / tabulated <= ANODE_MATCH;
}

type Analysis = { ok: true; result: LatticeCheckResult; elapsedMs: number } | { ok: false; error: string };

/** The radiation for one file: the command line's, else the file's own. */
function radiationFor(bytes: Uint8Array, args: Arguments, fileName: string): Radiation | string {
  if (args.radiation) return args.radiation;
  const parsed = parseScan(bytes, { fileName });
  if (!parsed.ok) return parsed.error;
  return radiationFromFile(parsed.scan.metadata, args.monochromatic);
}

/** Parses and checks one file's bytes; elapsedMs is the analysis alone (parse and check, not reading the file). */
function analyse(bytes: Uint8Array, options: LatticeCheckOptions, fileName: string): Analysis {
  const started = performance.now();
  const checked = checkScanFile(bytes, { ...options, fileName });
  const elapsedMs = performance.now() - started;
  return checked.ok ? { ok: true, result: checked.result, elapsedMs } : checked;
}

const CELL_KEYS = ["a", "b", "c", "alpha", "beta", "gamma"] as const;

function toJson(result: LatticeCheckResult, elapsedMs: number) {
  return {
    verdict: result.verdict,
    reasons: result.reasons,
    scanFormat: result.scanFormat,
    measurement: result.metadata,
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
    zeroDisplacementCorrelation: result.zeroDisplacementCorrelation,
    transparency: result.transparency,
    penetrationMm: result.penetrationMm,
    penetrationMmEsd: result.penetrationMmEsd,
    foreignPeaks: result.foreignPeaks,
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
      phase: p.phase ?? null,
      notSample: p.foreign ?? null,
    })),
    unindexed: result.unindexed.map((p) => ({ twoTheta: p.twoTheta, d: p.d, relativeIntensity: p.relativeIntensity })),
    phases: result.phases.map((p) => ({
      name: p.name,
      role: p.role,
      system: p.system,
      centering: p.centering,
      declaredCell: p.declaredCell,
      cell: p.cell,
      esd: p.esd,
      fixed: p.fixed,
      present: p.present,
      peaks: p.peaks,
      M20: p.M20,
      reasons: p.reasons,
    })),
    candidates: result.candidates,
    window: result.window.parameters,
    withinWindow: result.withinWindow,
    wholePattern: result.wholePattern,
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
    const fixedKeys = result.system ? fixedCellParameters(result.system) : [];
    for (const k of CELL_KEYS) {
      const digits = k.length === 1 ? 5 : 3;
      if (fixedKeys.includes(k)) {
        out.push(
          `${k.padEnd(6)} ${fixed(result.cell[k], digits).padStart(12)} ${"fixed".padStart(10)} ${fixed(result.declaredCell?.[k], digits).padStart(12)}`,
        );
        continue;
      }
      out.push(
        `${k.padEnd(6)} ${fixed(result.cell[k], digits).padStart(12)} ${fixed(result.esd?.[k], digits + 1).padStart(10)} ${fixed(result.declaredCell?.[k], digits).padStart(12)} ${fixed(result.deviation?.absolute[k], digits + 1).padStart(12)}`,
      );
    }
    if (result.correction !== "displacement") out.push(`zero shift ${fixed(result.zeroShift, 4)}° 2θ (esd ${fixed(result.zeroShiftEsd, 4)})`);
    if (result.correction !== "zero_shift") out.push(`specimen displacement ${fixed(result.displacement, 4)} mm (esd ${fixed(result.displacementEsd, 4)})`);
  } else out.push("No refined cell.");
  for (const p of result.phases.slice(1)) {
    const cell = p.cell
      ? WINDOW_KEYS.filter((k) => !p.fixed.includes(k))
          .map((k) => `${k} ${fixed(p.cell![k], 5)}(${fixed(p.esd?.[k], 5)})`)
          .join(" ")
      : "";
    out.push(`phase ${p.name ?? "(unnamed)"} (${p.system} ${p.centering}): ${p.present ? `present, ${p.peaks} peaks, ${cell}` : "not found"}`);
  }
  for (const c of result.candidates ?? []) {
    out.push(
      `candidate ${c.name ?? "(unnamed)"}: ${c.verdict}, ${c.strongIndexed} of ${c.strongCount} strongest peaks, M20 ${fixed(c.M20, 1)}${c.chosen ? "  ← chosen" : ""}`,
    );
  }
  if (result.window.parameters.length > 0) {
    out.push(`acceptance window: ${result.withinWindow === null ? "not judged" : result.withinWindow ? "within" : "outside"}`);
    for (const w of result.window.parameters) {
      out.push(
        `  ${w.parameter} ${fixed(w.refined, 5)} in [${fixed(w.lower, 5)}, ${fixed(w.upper, 5)}], margin ${fixed(w.margin, 5)}${w.inside === false ? "  OUTSIDE" : ""}`,
      );
    }
  }
  if (result.wholePattern) {
    const w = result.wholePattern;
    out.push(`whole pattern: Rwp ${fixed(100 * w.Rwp, 2)} %, Rexp ${fixed(100 * w.Rexp, 2)} %, GoF ${fixed(w.GoF, 2)}`);
  }
  const fom = result.figuresOfMerit;
  out.push(
    `M${fom.M20Lines} = ${fixed(fom.M20, 1)}   F${fom.FNLines} = ${fixed(fom.FN, 1)} (${fixed(fom.FNMeanDelta, 4)}°, ${fom.FNPossible ?? "—"})   peaks used ${result.peaksUsed}`,
  );
  out.push("");
  out.push("   2θ obs      d (Å)   I rel    FWHM    hkl          2θ calc     Δ2θ");
  for (const p of result.peaks) {
    const phaseName = p.phase ? ` ${result.phases[p.phase]?.name ?? `phase ${p.phase + 1}`}` : "";
    const hkl = p.hkl ? `${p.hkl.join(" ")}${phaseName}` : p.foreign ? p.foreign.line : "unindexed";
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

type Outcome = { file: string } & ({ ok: true; result: LatticeCheckResult; elapsedMs: number } | { ok: false; error: string; internal?: true });

function checkFile(file: string, args: Arguments): Outcome {
  try {
    const bytes = readScanBytes(file);
    const radiation = radiationFor(bytes, args, file);
    if (typeof radiation === "string") return { file, ok: false, error: radiation };
    const options: LatticeCheckOptions = { ...args.options, radiation };
    const problem = checkOptionsProblem(options);
    if (problem) return { file, ok: false, error: problem };
    return { file, ...analyse(bytes, options, file) };
  } catch (error) {
    if (error instanceof BadInput) return { file, ok: false, error: error.message };
    // An internal fault on one file: the others are still checked, and the run ends with exit 1.
    return { file, ok: false, error: `internal error: ${error instanceof Error ? error.message : String(error)}`, internal: true };
  }
}

function main(): number {
  let args: Arguments;
  try {
    args = parseArguments(process.argv.slice(2));
  } catch (error) {
    if (error instanceof BadInput) {
      process.stderr.write(`lattice: ${error.message}\n`);
      return 2;
    }
    throw error;
  }
  let checked = 0;
  let internal = false;
  let tables = 0;
  for (const file of args.files) {
    const outcome = checkFile(file, args);
    if (outcome.ok) checked++;
    else if (outcome.internal) internal = true;
    if (args.json) {
      const line = outcome.ok ? { file, ...toJson(outcome.result, outcome.elapsedMs) } : { file, error: outcome.error };
      process.stdout.write(`${JSON.stringify(line)}\n`);
    } else if (outcome.ok) {
      // Several files: each table under its own header, a blank line between them.
      const header = args.files.length > 1 ? `${tables > 0 ? "\n" : ""}=== ${file} ===\n` : "";
      process.stdout.write(`${header}${toTable(outcome.result, outcome.elapsedMs)}\n`);
      tables++;
    } else process.stderr.write(`lattice: ${file}: ${outcome.error}\n`);
  }
  if (internal) return 1;
  return checked > 0 ? 0 : 2;
}

try {
  process.exitCode = main();
} catch (error) {
  // An internal fault, not bad input: still one line and no stack trace.
  process.stderr.write(`lattice: internal error: ${error instanceof Error ? error.message : String(error)}\n`);
  process.exitCode = 1;
}
