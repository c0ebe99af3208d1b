// The phases a sample declares — its main phase, further expected phases, candidate forms — and the client's
// acceptance window, as the lattice check takes them and answers them (docs/decisions/012-phases-and-window.md).

import type { Cell, Centering, CrystalSystem } from "./cell";
import type { Verdict } from "./verdict";

export type CellKey = keyof Cell;
export const CELL_KEYS: readonly CellKey[] = ["a", "b", "c", "alpha", "beta", "gamma"];

/** One declared phase: a name for people, its crystal system, lattice centering and approximate cell. */
export interface DeclaredPhase {
  /** "LiFePO4", "Li2CO3", "Form II"; null when the client gave none. */
  name?: string | null;
  system: CrystalSystem;
  centering: Centering;
  cell: Cell;
}

/** One parameter's limit: ± an absolute amount (Å for lengths, degrees for angles) or ± a percentage. */
export interface WindowLimit {
  plusMinus: number;
  unit: "absolute" | "percent";
}

/** The client's acceptance window: limits for any of the main phase's cell parameters, around the declared cell. */
export type AcceptanceWindow = Partial<Record<CellKey, WindowLimit>>;

/** One parameter's answer to the window. */
export interface WindowParameter {
  parameter: CellKey;
  declared: number;
  plusMinus: number;
  unit: "absolute" | "percent";
  /** The limits in Å or degrees. */
  lower: number;
  upper: number;
  /** The refined value and its standard uncertainty; null when the cell was not refined. */
  refined: number | null;
  esd: number | null;
  /** Distance from the nearer limit, Å or degrees: positive inside, negative outside; null when not refined. */
  margin: number | null;
  inside: boolean | null;
}

export interface WindowResult {
  /** true: every limited parameter inside (a value on a limit counts as inside); false: one outside; null: none set or not refined. */
  withinWindow: boolean | null;
  parameters: WindowParameter[];
}

/** A tick of one phase's reflection in the observed frame. */
export interface PhaseTick {
  h: number;
  k: number;
  l: number;
  d: number;
  twoTheta: number;
  multiplicity: number;
}

/** What the check found for one declared phase. */
export interface PhaseResult {
  role: "main" | "expected";
  name: string | null;
  system: CrystalSystem;
  centering: Centering;
  declaredCell: Cell;
  cell: Cell | null;
  esd: Cell | null;
  /**
   * Where `cell` comes from: the refinement on the phase's peak positions, or the whole-pattern fit where the
   * phase's lines overlap so much that many of them could not enter the peak refinement (absent in results
   * stored before the whole-pattern fit: the peaks).
   */
  cellFrom?: "peaks" | "whole_pattern";
  /** The whole-pattern fit's cell and esds of this phase, when the fit refined it. */
  wholePatternCell?: Cell | null;
  wholePatternEsd?: Cell | null;
  /** Parameters the crystal system fixes (not refined): shown as fixed. */
  fixed: CellKey[];
  present: boolean;
  /** Peaks attributed to this phase. */
  peaks: number;
  M20: number | null;
  /** Why the phase counts as present or absent, in sentences. */
  reasons: string[];
  /** The phase's reflections in the scan's range: from its refined cell, or from its declared cell when absent. */
  reflections: PhaseTick[];
}

/** What the check found for one candidate form of the main phase. */
export interface CandidateResult {
  name: string | null;
  system: CrystalSystem;
  centering: Centering;
  /** The candidate's declared cell, its refined cell and esds. */
  cell: Cell;
  refinedCell: Cell | null;
  esd: Cell | null;
  /** The verdict the scan would get with this candidate as the main phase. */
  verdict: Verdict;
  /** Strong peaks this candidate (with the expected phases) explains, of how many. */
  strongIndexed: number;
  strongCount: number;
  M20: number | null;
  /** The whole-pattern fit's Rwp with this candidate; null without a fit. */
  Rwp: number | null;
  chosen: boolean;
}

/** The whole-pattern fit's figures (Le Bail extraction; docs/whole-pattern.md). */
export interface WholePatternFigures {
  /** Weighted-profile, expected and profile R factors, fractions (not percent). */
  Rwp: number;
  Rexp: number;
  /** Goodness of fit, (Rwp / Rexp)² = χ² per degree of freedom. */
  GoF: number;
  Rp: number;
  /**
   * Points fitted (N), parameters refined (P, the intensities included), reflections listed in the scan, and
   * cycles run (Levenberg–Marquardt steps, each with its own extraction, over all stages).
   */
  points: number;
  parameters: number;
  reflections: number;
  cycles: number;
  converged: boolean;
  elapsedMs: number;
}
