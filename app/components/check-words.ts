// Words, tables and plot data the check screen makes from a stored check's phases, candidate forms, acceptance
// window and whole-pattern fit (docs/decisions/012-phases-and-window.md). Results stored before these fields read
// as one main phase: the top-level system, centering and cells, every indexed peak its own.
import type { Cell, CheckedPeak } from "~/diffraction";
import type { CandidateResult, CellKey, PhaseResult, WholePatternFigures, WindowParameter, WindowResult } from "~/diffraction/phases";
import { allowedReflections, twoThetaOf } from "~/diffraction/reflections";
import type { Verdict } from "~/diffraction/verdict";
import { fixedCellParameters } from "~/diffraction/window";
import { CELL_PARAMS, formatHkl, peakOriginWords, signed, type StoredCheckResult, VERDICT_WORDS } from "~/domain/check-result";
import type { CheckPlotData, CheckPlotMark, CheckPlotRow } from "./check-plot";

/** A stored result as the check screen reads it (through readStoredResult: older results carry one main phase). */
export type CheckScreenResult = StoredCheckResult;

const PARAMS = CELL_PARAMS;
const PARAM = Object.fromEntries(PARAMS.map((p) => [p.key, p])) as Record<CellKey, (typeof PARAMS)[number]>;
const withUnit = (v: number, unit: "Å" | "°") => (unit === "°" ? `${v}°` : `${v} Å`);

/** The declared phases, main first (an older result read through readStoredResult has its one main phase). */
export function phasesOf(result: Pick<CheckScreenResult, "phases">): PhaseResult[] {
  return result.phases ?? [];
}

/** Whether the check was made with the phases, candidates, window and whole-pattern fit (stored version 3 on). */
export const reportsPhases = (result: Pick<CheckScreenResult, "version">) => result.version >= 3;

/** A phase's name for people: its declared name, else "Main phase" / "Expected phase 2". */
export function phaseName(phase: Pick<PhaseResult, "name" | "role">, index: number) {
  if (phase.name?.trim()) return phase.name.trim();
  return phase.role === "main" ? "Main phase" : `Expected phase ${index + 1}`;
}

/** Index into the phases of the phase that indexes a peak (results before phases: the indexed peaks are the main phase's). */
export function peakPhase(peak: Pick<CheckedPeak, "phase" | "hkl" | "foreign">): number | null {
  if (peak.phase !== undefined) return peak.phase;
  return peak.hkl && !peak.foreign ? 0 : null;
}

/** The crystal system and centering in words: "orthorhombic P". */
export const systemWords = (p: Pick<PhaseResult, "system" | "centering">) => `${p.system} ${p.centering}`;

/**
 * One line per cell parameter of a phase: the refined value ± its standard uncertainty, or "fixed" for the
 * parameters the crystal system fixes or ties to another (b = a, α = 90°), or the declared value when the
 * phase was not refined.
 */
export function phaseCellLines(
  phase: Pick<PhaseResult, "system" | "declaredCell" | "cell" | "esd" | "fixed">,
): { name: string; value: string; fixed: boolean }[] {
  const fixed = phase.fixed?.length ? phase.fixed : fixedCellParameters(phase.system);
  const tiedToA = (key: CellKey) =>
    (key === "b" && ["cubic", "tetragonal", "hexagonal", "trigonal"].includes(phase.system)) || (key === "c" && phase.system === "cubic");
  return PARAMS.map(({ key, name, unit, digits }) => {
    const cell = phase.cell ?? phase.declaredCell;
    if (fixed.includes(key)) return { name, value: tiedToA(key) ? "fixed (= a)" : `fixed (${withUnit(Number(cell[key].toFixed(3)), unit)})`, fixed: true };
    const u = unit === "°" ? "°" : " Å";
    if (!phase.cell) return { name, value: `${withUnit(Number(phase.declaredCell[key].toFixed(digits)), unit)} declared`, fixed: false };
    const esd = phase.esd?.[key];
    return { name, value: `${phase.cell[key].toFixed(digits)}${esd ? ` ± ${esd.toFixed(digits)}` : ""}${u}`, fixed: false };
  });
}

/** A cell in one line, free parameters only: "a 8.62 Å, b 9.71 Å, c 11.35 Å, β 103.2°". */
export function cellLine(cell: Cell, system: PhaseResult["system"]) {
  const fixed = fixedCellParameters(system);
  return PARAMS.filter((p) => !fixed.includes(p.key))
    .map((p) => `${p.name} ${withUnit(Number(cell[p.key].toFixed(p.unit === "Å" ? 4 : 2)), p.unit)}`)
    .join(", ");
}

/** The acceptance window's answer for the badge: within / outside / none set / not decided. */
export function windowAnswer(result: Pick<CheckScreenResult, "window" | "withinWindow">): {
  tone: "ok" | "danger" | "neutral" | "caution";
  label: string;
  meaning: string;
} {
  const parameters = result.window?.parameters ?? [];
  const within = result.withinWindow ?? result.window?.withinWindow ?? null;
  if (parameters.length === 0) {
    return { tone: "neutral", label: "No window set", meaning: "The sample declares no acceptance window for its cell, so there is nothing to be within." };
  }
  if (within === true) return { tone: "ok", label: "Within the window", meaning: "Every limited cell parameter lies within the client's acceptance window." };
  if (within === false) {
    const outside = parameters.filter((p) => p.inside === false).map((p) => PARAM[p.parameter].name);
    return {
      tone: "danger",
      label: "Outside the window",
      meaning: `${outside.join(", ")} ${outside.length === 1 ? "lies" : "lie"} outside the client's acceptance window.`,
    };
  }
  return { tone: "caution", label: "Not decided", meaning: "The main phase's cell was not refined, so the window could not be judged." };
}

/** One row of the acceptance window's table, in words with units. */
export function windowRows(window: WindowResult | undefined) {
  return (window?.parameters ?? []).map((p: WindowParameter) => {
    const { name, unit, digits } = PARAM[p.parameter];
    const u = unit === "°" ? "°" : " Å";
    // Lengths to 0.0001 Å and angles to 0.001° in the limits: finer than any window a client sets.
    const d = unit === "°" ? 3 : 4;
    const half = p.unit === "percent" ? `± ${p.plusMinus} %` : `± ${p.plusMinus}${u}`;
    return {
      key: p.parameter,
      name,
      window: `${p.declared.toFixed(d)}${u} ${half}`,
      limits: `${p.lower.toFixed(d)}–${p.upper.toFixed(d)}${u}`,
      refined: p.refined == null ? "not refined" : `${p.refined.toFixed(digits)}${p.esd ? ` ± ${p.esd.toFixed(digits)}` : ""}${u}`,
      margin: p.margin == null ? "—" : `${signed(p.margin, digits)}${u}`,
      inside: p.inside,
    };
  });
}

/** The sentence over the candidates' table: which candidate explains the scan best. */
export function candidateHeadline(candidates: readonly CandidateResult[]): string {
  const i = candidates.findIndex((c) => c.chosen);
  if (i < 0) return "None of the candidate forms explains the scan.";
  const c = candidates[i];
  const name = c.name?.trim() || (i === 0 ? "The declared main phase" : `Candidate ${i + 1}`);
  const declared = i === 0 ? " — the declared main phase" : "";
  return `${name}${declared} explains the scan best: ${c.strongIndexed} of the ${c.strongCount} strongest peaks, M20 ${c.M20 != null ? c.M20.toFixed(1) : "not defined"}${c.Rwp != null ? `, Rwp ${rFactor(c.Rwp)}` : ""}.`;
}

/** A candidate's name for its table row. */
export const candidateName = (c: Pick<CandidateResult, "name">, i: number) => c.name?.trim() || (i === 0 ? "Main declaration" : `Candidate ${i + 1}`);

/** The verdict a candidate would get, in the badge's words. */
export const verdictLabel = (v: Verdict) => VERDICT_WORDS[v]?.label ?? v;

/** An R factor of the whole-pattern fit (stored as a fraction) in per cent. */
export const rFactor = (r: number) => `${(100 * r).toFixed(2)} %`;

/** The whole-pattern figures in one line, or why there are none. */
export function wholePatternWords(result: Pick<CheckScreenResult, "version" | "wholePattern">): string {
  const wp = result.wholePattern;
  if (!reportsPhases(result)) return "not available (checked before the whole-pattern fit)";
  if (!wp) return "not made (no cell to fit)";
  return `Rwp ${rFactor(wp.Rwp)} · Rexp ${rFactor(wp.Rexp)} · GoF ${wp.GoF.toFixed(2)}`;
}

/** The details of the whole-pattern fit under its figures. */
export function wholePatternDetails(wp: WholePatternFigures): string {
  return `Le Bail extraction: ${wp.points} points, ${wp.reflections} reflections, ${wp.parameters} parameters, ${wp.cycles} cycles${wp.converged ? "" : " (not converged)"}; Rp ${rFactor(wp.Rp)}; GoF = (Rwp / Rexp)²`;
}

/**
 * A phase's tick row: its refined reflections in the observed frame, or, for a phase that was not refined (an
 * absent phase), the reflections of its declared cell, so the plot shows where its lines would be.
 */
function phaseRow(phase: PhaseResult, wavelength: number, range: [number, number]): CheckPlotRow {
  const name = phase.name?.trim() || null;
  if (phase.reflections.length > 0 || !(wavelength > 0)) {
    return {
      name,
      role: phase.role,
      present: phase.present,
      ticks: phase.reflections.map((t) => ({ twoTheta: t.twoTheta, label: `(${formatHkl([t.h, t.k, t.l])})` })),
    };
  }
  const dMin = wavelength / (2 * Math.sin((Math.min(range[1], 179) * Math.PI) / 360));
  let ticks: CheckPlotRow["ticks"] = [];
  try {
    ticks = allowedReflections(phase.declaredCell, phase.system, phase.centering, { dMin })
      .map((r) => ({ twoTheta: twoThetaOf(r, wavelength), label: `(${formatHkl([r.h, r.k, r.l])})` }))
      .filter((t) => t.twoTheta >= range[0] && t.twoTheta <= range[1]);
  } catch {
    ticks = [];
  }
  return { name, role: phase.role, present: phase.present, ticks, note: "declared cell" };
}

/** The lines that are not the sample's, each with its kind (tube line or holder line) for its own tick row. */
function markRows(peaks: readonly CheckedPeak[]): CheckPlotMark[] {
  return peaks.flatMap((p) => {
    const words = peakOriginWords(p);
    return words ? [{ twoTheta: p.twoTheta, label: words, kind: p.origin === "holder" ? ("holder" as const) : ("tube" as const) }] : [];
  });
}

/** The curves of a stored plot: observed, background, the free peaks' sum, and the whole-pattern curve where it was kept. */
export function plotCurves(p: { twoTheta: number[]; observed: number[]; background: number[]; fitted: number[]; calculated?: number[] | null }) {
  return {
    twoTheta: p.twoTheta,
    observed: p.observed,
    background: p.background,
    fitted: p.fitted,
    calculated: p.calculated?.length === p.twoTheta.length ? p.calculated : null,
  };
}

/** Everything the check plot draws for a stored result. */
export function checkPlotData(result: CheckScreenResult): CheckPlotData {
  const p = result.profile;
  const range: [number, number] = [p.twoTheta[0] ?? 0, p.twoTheta[p.twoTheta.length - 1] ?? 0];
  const phases = phasesOf(result);
  return {
    ...plotCurves(p),
    wavelength: result.wavelength,
    ticks: result.reflections.map((t) => ({ twoTheta: t.twoTheta, label: `(${formatHkl([t.h, t.k, t.l])})` })),
    rows: phases.map((ph) => phaseRow(ph, result.wavelength, range)),
    marks: markRows(result.peaks),
    unindexed: result.peaks.filter((pk) => !pk.foreign && peakPhase(pk) === null).map((pk) => ({ twoTheta: pk.twoTheta, label: "unindexed" })),
  };
}
