// The client's acceptance window: the second answer of a check, kept apart from the verdict
// (docs/decisions/012-phases-and-window.md).
//
// Each limited parameter of the main phase's cell has limits declared ± the window (Å or degrees, or a
// percentage of the declared value). The refined value is inside when lower ≤ value ≤ upper; a value on a
// limit is inside (the usual reading of "a = 5.411 ± 0.002 Å"; comparisons allow 10⁻⁹ of the value for
// rounding). The esd is reported beside the margin but does not move the limits: how to treat measurement
// uncertainty at a specification limit is the client's decision (guard bands are a matter of their own
// quality system, e.g. ISO/IEC 17025 decision rules), not the check's.

import { type Cell, type CrystalSystem, freeParameters } from "./cell";
import { type AcceptanceWindow, CELL_KEYS, type CellKey, type WindowParameter, type WindowResult } from "./phases";

/** The cell parameter each reciprocal-metric parameter of cell.ts's freeParameters stands for. */
const CELL_PARAMETER_OF: Record<string, CellKey> = { A: "a", B: "b", C: "c", D: "alpha", E: "beta", F: "gamma" };

/** Parameters of a cell the crystal system leaves free (the others follow from them or are fixed angles). */
export function freeCellParameters(system: CrystalSystem): CellKey[] {
  return freeParameters(system).map((p) => CELL_PARAMETER_OF[p]);
}

/** Parameters the crystal system fixes or ties to another (shown as fixed, not refined). */
export function fixedCellParameters(system: CrystalSystem): CellKey[] {
  const free = freeCellParameters(system);
  return CELL_KEYS.filter((k) => !free.includes(k));
}

const LENGTHS: readonly CellKey[] = ["a", "b", "c"];

/** One sentence when a window cannot be applied to a main phase of this system, else null. */
export function windowProblem(window: AcceptanceWindow, system: CrystalSystem): string | null {
  const free = freeCellParameters(system);
  for (const [key, limit] of Object.entries(window) as [CellKey, AcceptanceWindow[CellKey]][]) {
    if (!limit) continue;
    if (!CELL_KEYS.includes(key)) return `The acceptance window names an unknown cell parameter "${key}".`;
    if (!free.includes(key)) return `${key} of a ${system} cell is fixed by its symmetry, so it cannot have an acceptance window of its own.`;
    if (!(Number.isFinite(limit.plusMinus) && limit.plusMinus > 0)) return `The acceptance window of ${key} must be a positive number; got ${limit.plusMinus}.`;
    if (limit.unit !== "absolute" && limit.unit !== "percent")
      return `The acceptance window of ${key} must be in ${LENGTHS.includes(key) ? "Å" : "degrees"} or %.`;
  }
  return null;
}

/** The window's answer for a refined main cell (null: not refined). */
export function judgeWindow(window: AcceptanceWindow | undefined, declared: Cell | null, refined: Cell | null, esd: Cell | null): WindowResult {
  if (!window || !declared) return { withinWindow: null, parameters: [] };
  const parameters: WindowParameter[] = [];
  for (const key of CELL_KEYS) {
    const limit = window[key];
    if (!limit) continue;
    const nominal = declared[key];
    const half = limit.unit === "percent" ? (Math.abs(nominal) * limit.plusMinus) / 100 : limit.plusMinus;
    const lower = nominal - half;
    const upper = nominal + half;
    const value = refined ? refined[key] : null;
    const slack = 1e-9 * Math.max(Math.abs(nominal), 1);
    const margin = value === null ? null : Math.min(value - lower, upper - value);
    parameters.push({
      parameter: key,
      declared: nominal,
      plusMinus: limit.plusMinus,
      unit: limit.unit,
      lower,
      upper,
      refined: value,
      esd: esd ? esd[key] : null,
      margin,
      inside: margin === null ? null : margin >= -slack,
    });
  }
  if (parameters.length === 0) return { withinWindow: null, parameters };
  const answers = parameters.map((p) => p.inside);
  const withinWindow = answers.some((x) => x === null) ? null : answers.every((x) => x === true);
  return { withinWindow, parameters };
}

/** "a ± 0.002 Å, c ± 0.3 %": a window in words. */
export function windowWords(window: AcceptanceWindow): string {
  return CELL_KEYS.filter((k) => window[k])
    .map((k) => {
      const w = window[k]!;
      const unit = w.unit === "percent" ? " %" : LENGTHS.includes(k) ? " Å" : "°";
      const name = { a: "a", b: "b", c: "c", alpha: "α", beta: "β", gamma: "γ" }[k];
      return `${name} ± ${w.plusMinus}${unit}`;
    })
    .join(", ");
}
