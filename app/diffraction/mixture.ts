// Several declared phases in one scan: which peak belongs to which phase, each phase's cell refined on its
// own peaks, and whether each further expected phase is present (docs/decisions/012-phases-and-window.md).
//
// The main phase is indexed first on every peak that is not a tube or holder line (as for a single phase).
// Each further expected phase is then indexed on the same peaks from its declared cell. A peak goes to the
// phase whose reflection lies nearest to it, measured in that peak's own indexing window; a peak no phase
// reaches within its window stays unexplained. Every phase is then refined again on its own peaks only, and
// the attribution repeated with the refined cells. An expected phase counts as present when
//   - its own peaks refine its cell with at least one degree of freedom left,
//   - at least MIN_OWN_PEAKS of them lie where no other phase has a reflection (lines it alone explains), and
//   - its lines sit on its reflections: mean |Δ2θ| at most MAX_MEAN_MISS of the median FWHM (chance matches
//     of a phase that is not there scatter across the whole window).
// An absent phase gives its peaks back, and the others are attributed and refined once more without it.
// The thresholds are Diffractory's own choices (common practice for routine phase checks).

import { freeParameters, twoThetaFromD } from "./cell";
import { indexingWindow } from "./foreign-lines";
import { refinedLineShift } from "./line-shifts";
import { deWolffM20, smithSnyderFN } from "./merit";
import type { DeclaredPhase } from "./phases";
import { type CorrectionKind, figuresOfMeritLines, type ObservedPeak, type Refinement, type RefineOptions, refineCell } from "./refine";
import { lowerBound, median } from "./sorted";

/** Lines an expected phase must explain alone to count as present. */
export const MIN_OWN_PEAKS = 2;
/** Largest mean |Δ2θ| of a present phase's lines, in median FWHM of its peaks. */
export const MAX_MEAN_MISS = 0.2;

export interface PhaseFit {
  phase: DeclaredPhase;
  role: "main" | "expected";
  refinement: Refinement | null;
  /** Indices (into the observed peaks) the phase was refined on, and those it explains (its assignments). */
  attributed: number[];
  explained: Map<number, Refinement["assignments"][number]>;
  present: boolean;
  reasons: string[];
  /** M20 over the phase's own lines; F_N's ⟨|Δ2θ|⟩ over the median FWHM of its lines. */
  m20: number | null;
  meanMissInFwhm: number | null;
}

export interface MixtureContext {
  observed: readonly ObservedPeak[];
  /** Peaks kept out of every phase (tube and holder lines). */
  excluded: ReadonlySet<number>;
  wavelength: number;
  twoThetaMax: number;
  /** The main phase's correction; expected phases refine a zero shift of their own. */
  correction: CorrectionKind;
  base: Omit<RefineOptions, "system" | "centering" | "start" | "correction" | "wavelength" | "twoThetaMax">;
}

/** Observed-frame positions (sorted) of a refinement's reflections. */
function positionsOf(refinement: Refinement, wavelength: number): Float64Array {
  const xs = refinement.reflections
    .filter((r) => wavelength / (2 * r.d) < 1)
    .map((r) => {
      const bragg = twoThetaFromD(r.d, wavelength);
      return bragg + refinedLineShift(bragg, refinement);
    });
  return Float64Array.from(xs).sort();
}

function nearestMiss(xs: Float64Array, x: number): number {
  if (xs.length === 0) return Number.POSITIVE_INFINITY;
  const j = lowerBound(xs, x);
  let best = Number.POSITIVE_INFINITY;
  if (j < xs.length) best = Math.abs(xs[j] - x);
  if (j > 0) best = Math.min(best, Math.abs(xs[j - 1] - x));
  return best;
}

function refine(
  ctx: MixtureContext,
  indices: number[],
  phase: DeclaredPhase,
  start: DeclaredPhase["cell"],
  main: boolean,
  warm: Refinement | null,
): Refinement {
  return refineCell(
    indices.map((i) => ctx.observed[i]),
    {
      ...ctx.base,
      wavelength: ctx.wavelength,
      twoThetaMax: ctx.twoThetaMax,
      system: phase.system,
      centering: phase.centering,
      start,
      correction: main ? (warm ? warm.correction : ctx.correction) : "zero_shift",
      ...(warm ? { searchRange: 0.002 } : {}),
    },
  );
}

const usable = (r: Refinement | null): r is Refinement => r !== null && r.used > 0 && r.assignments.some((a) => a.used);

/**
 * Peak → phase by the nearest reflection in the peak's own window; phases without a usable refinement take
 * nothing. Returns per phase the peak indices it gets.
 */
function attribute(ctx: MixtureContext, candidates: number[], fits: (Refinement | null)[]): number[][] {
  const positions = fits.map((r) => (usable(r) ? positionsOf(r, ctx.wavelength) : new Float64Array()));
  const out: number[][] = fits.map(() => []);
  for (const i of candidates) {
    const p = ctx.observed[i];
    const window = indexingWindow(p);
    let best = -1;
    let bestMiss = Number.POSITIVE_INFINITY;
    positions.forEach((xs, j) => {
      const miss = nearestMiss(xs, p.twoTheta) / window;
      if (miss <= 1 && miss < bestMiss) {
        best = j;
        bestMiss = miss;
      }
    });
    if (best >= 0) out[best].push(i);
  }
  return out;
}

function explainedBy(indices: number[], refinement: Refinement | null): Map<number, Refinement["assignments"][number]> {
  const map = new Map<number, Refinement["assignments"][number]>();
  for (const a of refinement?.assignments ?? []) map.set(indices[a.peak], a);
  return map;
}

function merits(ctx: MixtureContext, indices: number[], refinement: Refinement | null) {
  if (!usable(refinement)) return { m20: null, meanMissInFwhm: null };
  const peaks = indices.map((i) => ctx.observed[i]);
  const { lines, calculatedQ, calculatedTwoTheta } = figuresOfMeritLines(peaks, refinement, ctx.wavelength);
  const m20 = deWolffM20(lines, calculatedQ);
  const fn = smithSnyderFN(lines, calculatedTwoTheta);
  const widths = refinement.assignments.map((a) => peaks[a.peak].fwhm);
  return { m20: m20 ? m20.value : null, meanMissInFwhm: fn && widths.length ? fn.meanDelta / median(widths) : null };
}

/**
 * Indexes and refines the main phase and the further expected ones on the scan's peaks (see the module
 * comment). `mainFirst` is the main phase's refinement on every candidate peak when the caller already has it.
 */
export function fitPhases(ctx: MixtureContext, main: DeclaredPhase, expected: readonly DeclaredPhase[], mainFirst?: Refinement): PhaseFit[] {
  const candidates = ctx.observed.map((_, i) => i).filter((i) => !ctx.excluded.has(i));
  const phases = [main, ...expected];
  const roles = phases.map((_, j): "main" | "expected" => (j === 0 ? "main" : "expected"));
  const first = mainFirst ?? refine(ctx, candidates, main, main.cell, true, null);
  if (expected.length === 0) {
    const explained = explainedBy(candidates, first);
    return [
      {
        phase: main,
        role: "main",
        refinement: first,
        attributed: candidates,
        explained,
        present: usable(first),
        reasons: [],
        ...merits(ctx, candidates, first),
      },
    ];
  }
  // Each expected phase is indexed first on the peaks the phases before it leave unexplained (its own lines
  // are found without the main phase's strong lines steering the search), else on every peak.
  let fits: (Refinement | null)[] = [first];
  // The peaks each phase's current refinement was made on (its assignments index into them).
  const fittedOn: number[][] = [candidates];
  const taken = new Set(explainedBy(candidates, first).keys());
  for (const p of expected) {
    const left = candidates.filter((i) => !taken.has(i));
    let r = left.length > 0 ? refine(ctx, left, p, p.cell, false, null) : null;
    let on = left;
    if (!usable(r)) {
      r = refine(ctx, candidates, p, p.cell, false, null);
      on = candidates;
    }
    for (const i of explainedBy(on, r).keys()) taken.add(i);
    fits.push(r);
    fittedOn.push(on);
  }
  const active = phases.map(() => true);
  let attributed: number[][] = phases.map(() => candidates);
  const reasons: string[][] = phases.map(() => []);
  const round = () => {
    const shown = fits.map((r, j) => (active[j] ? r : null));
    attributed = attribute(ctx, candidates, shown);
    fits = fits.map((r, j) => {
      if (!active[j]) return r;
      const warm = usable(r) ? r : null;
      const start = warm ? warm.cell : phases[j].cell;
      // A main phase that keeps no peak of its own keeps its first refinement (the verdict then says so).
      if (attributed[j].length === 0) return j === 0 ? r : null;
      fittedOn[j] = attributed[j];
      return refine(ctx, attributed[j], phases[j], start, j === 0, warm);
    });
  };
  round();
  round();
  // Presence of the expected phases; an absent one gives its peaks back.
  const decide = () => {
    let changed = false;
    for (let j = 1; j < phases.length; j++) {
      if (!active[j]) continue;
      const r = fits[j];
      const explained = explainedBy(fittedOn[j], r);
      const why: string[] = [];
      const nFree = freeParameters(phases[j].system).length;
      const refinedOk = usable(r) && r.dof >= 1;
      if (!refinedOk) why.push(`Too few peaks (${explained.size}) match its reflections to refine its ${nFree === 1 ? "cell" : `${nFree} cell parameters`}.`);
      const others = fits.map((o, k) => (k !== j && active[k] && usable(o) ? positionsOf(o, ctx.wavelength) : null)).filter((x) => x !== null);
      const own = [...explained.keys()].filter((i) => others.every((xs) => nearestMiss(xs, ctx.observed[i].twoTheta) > indexingWindow(ctx.observed[i])));
      if (refinedOk && own.length < MIN_OWN_PEAKS) {
        why.push(
          own.length === 0
            ? "None of its lines stands apart from the other phases' reflections."
            : `Only ${own.length} of its lines stands apart from the other phases' reflections; at least ${MIN_OWN_PEAKS} are needed.`,
        );
      }
      const { meanMissInFwhm } = merits(ctx, fittedOn[j], r);
      if (refinedOk && meanMissInFwhm !== null && meanMissInFwhm > MAX_MEAN_MISS) {
        why.push(`Its lines miss their reflections by ${meanMissInFwhm.toFixed(2)} FWHM on average, more than ${MAX_MEAN_MISS}: chance matches.`);
      }
      if (why.length > 0) {
        active[j] = false;
        reasons[j] = why;
        changed = true;
      } else {
        reasons[j] = [`${explained.size} peaks index on its reflections, ${own.length} of them where no other phase has one.`];
      }
    }
    return changed;
  };
  if (decide()) {
    round();
    decide();
  }
  return phases.map((phase, j) => {
    const present = j === 0 ? usable(fits[0]) : active[j];
    const r = fits[j];
    return {
      phase,
      role: roles[j],
      refinement: r,
      attributed: fittedOn[j],
      explained: present || j === 0 ? explainedBy(fittedOn[j], r) : new Map(),
      present,
      reasons: reasons[j],
      ...merits(ctx, fittedOn[j], r),
    };
  });
}
