// The one way a scan is checked and its result kept, for a delivered scan (the worker) and a vetting calibration
// scan alike: the engine's lattice check, then the result in its stored form (finite numbers only, the plotted
// arrays thinned with their extremes kept). Pure: the callers read the scan and write the result.
import type { Instrument, Sample, ScanCheck } from "~/db/schema";
import { checkScanText, type Cell, type Centering, type CheckedPeak, type CrystalSystem, type LatticeCheckResult, type Radiation } from "~/diffraction";
import { declaredCheckOptions, type StoredCheckResult, type StoredProfile } from "./check-result";

/** Above this many points a delivered scan's plotted arrays are thinned before they are stored. */
export const STORED_PROFILE_POINTS = 20_000;

export type CheckStatus = "queued" | "running" | "done" | "failed";

/** The declared system, centering and cell the scan is checked against (each may be missing). */
export interface DeclaredCell {
  system?: CrystalSystem;
  centering?: Centering;
  cell?: Cell;
}

/** What a check needs besides the scan: the radiation, the declaration, and what the stored result names. */
export interface CheckInput {
  radiation: Radiation;
  declared: DeclaredCell;
  /** Notes from the caller (e.g. an assumed source) shown before the engine's own warnings. */
  warnings: string[];
  declaredFrom: StoredCheckResult["declaredFrom"];
  fileName?: string;
}

export type ScanCheckOutcome = { ok: true; result: StoredCheckResult } | { ok: false; error: string };

/**
 * Checks one scan's text and returns the result as it is stored. An engine failure is deterministic (running
 * it again gives the same), so it comes back as an error sentence rather than an exception.
 */
export function checkScanForStorage(text: string, input: CheckInput, { maxPoints = STORED_PROFILE_POINTS } = {}): ScanCheckOutcome {
  let checked: ReturnType<typeof checkScanText>;
  try {
    checked = checkScanText(text, { radiation: input.radiation, ...input.declared, fileName: input.fileName });
  } catch (err) {
    return { ok: false, error: `The check could not be completed: ${err instanceof Error ? err.message : String(err)}` };
  }
  if (!checked.ok) return { ok: false, error: checked.error };
  return { ok: true, result: toStoredResult(checked.result, input, maxPoints) };
}

/** The radiation of an instrument as the engine takes it; null when the instrument names no usable source. */
export function radiationOf(instrument: Pick<Instrument, "anode" | "customWavelength" | "monochromation">): Radiation | null {
  if (instrument.anode) return { kind: "anode", anode: instrument.anode, monochromation: instrument.monochromation };
  if (instrument.customWavelength && instrument.customWavelength > 0) return { kind: "custom", wavelength: instrument.customWavelength };
  return null;
}

/** A sample's declaration as engine options; missing cell lengths and angles follow from the crystal system. */
export function declaredOf(
  sample: Pick<Sample, "crystalSystem" | "centering" | "cellA" | "cellB" | "cellC" | "cellAlpha" | "cellBeta" | "cellGamma">,
): DeclaredCell {
  return declaredCheckOptions({
    system: sample.crystalSystem,
    centering: sample.centering,
    cell: { a: sample.cellA, b: sample.cellB, c: sample.cellC, alpha: sample.cellAlpha, beta: sample.cellBeta, gamma: sample.cellGamma },
  });
}

const round = (x: number, digits: number) => {
  if (!Number.isFinite(x)) return 0;
  const f = 10 ** digits;
  return Math.round(x * f) / f;
};

/** Indices to keep of a long scan: per bucket the lowest and highest observed point, so peaks keep their tops. */
function thinIndices(observed: ArrayLike<number>, maxPoints: number): number[] {
  const n = observed.length;
  if (n <= maxPoints) return Array.from({ length: n }, (_, i) => i);
  const buckets = Math.max(1, Math.floor(maxPoints / 2));
  const out: number[] = [];
  for (let b = 0; b < buckets; b++) {
    const start = Math.floor((b * n) / buckets);
    const end = Math.floor(((b + 1) * n) / buckets);
    let lo = start;
    let hi = start;
    for (let i = start; i < end; i++) {
      if (observed[i] < observed[lo]) lo = i;
      if (observed[i] > observed[hi]) hi = i;
    }
    if (lo === hi) out.push(lo);
    else out.push(Math.min(lo, hi), Math.max(lo, hi));
  }
  return out;
}

function storedProfile(result: LatticeCheckResult, maxPoints: number): StoredProfile {
  const keep = thinIndices(result.observed, maxPoints);
  const pick = (arr: ArrayLike<number>, digits: number) => keep.map((i) => round(arr[i], digits));
  return {
    points: result.twoTheta.length,
    thinned: keep.length < result.twoTheta.length,
    twoTheta: pick(result.twoTheta, 5),
    observed: pick(result.observed, 2),
    background: pick(result.background, 2),
    fitted: pick(result.fittedProfile, 2),
  };
}

function finitePeak(p: CheckedPeak): CheckedPeak {
  // JSON has no NaN or Infinity; keep the numbers that are numbers.
  const clean = { ...p } as Record<string, unknown>;
  for (const [k, v] of Object.entries(clean)) if (typeof v === "number" && !Number.isFinite(v)) clean[k] = null;
  return clean as unknown as CheckedPeak;
}

function toStoredResult(result: LatticeCheckResult, context: CheckInput, maxPoints: number): StoredCheckResult {
  const { twoTheta: _t, observed: _o, background: _b, fittedProfile: _f, unindexed: _u, ...rest } = result;
  const stored: StoredCheckResult = {
    ...rest,
    version: 1,
    radiation: context.radiation,
    declaredFrom: context.declaredFrom,
    peaks: result.peaks.map(finitePeak),
    warnings: [...context.warnings, ...result.warnings],
    profile: storedProfile(result, maxPoints),
  };
  // Drop any non-finite numbers elsewhere (JSON would turn them into null anyway; make it explicit).
  return JSON.parse(JSON.stringify(stored, (_k, v) => (typeof v === "number" && !Number.isFinite(v) ? null : v)));
}

/** The public status of a check, as the status API answers it. */
export function checkStatusJson(check: ScanCheck) {
  return {
    id: check.id,
    fileId: check.fileId,
    status: check.status as CheckStatus,
    verdict: check.verdict,
    error: check.error,
    finishedAt: check.finishedAt ? check.finishedAt.toISOString() : null,
  };
}
