// The one way a scan is checked and its result kept, for a delivered scan (the worker) and a vetting calibration
// scan alike: the file is read (any format the engine reads, text or binary), the radiation is the file's own
// when it states one (docs/design.md#lattice-check), the engine's lattice check runs, and the result is kept in its stored
// form (finite numbers only, the plotted arrays thinned with their extremes kept). Pure: the callers read the
// scan's bytes and write the result.
import type { Instrument, Sample, SamplePhase, ScanCheck } from "~/db/schema";
import { checkParsedScan, parseScan, type Scan, type CheckedPeak, type LatticeCheckResult, type Radiation } from "~/diffraction";
import type { InstrumentProfile } from "~/diffraction/scherrer";
import { SAMPLE_HOLDER_IDS, type SampleHolder } from "~/diffraction/holders";
import {
  type DeclaredCheckOptions,
  declaredCheckOptions,
  type SampleDeclaration,
  STORED_RESULT_VERSION,
  type StoredCheckResult,
  type StoredPhaseDeclaration,
  type StoredProfile,
} from "./check-result";
import { chooseRadiation, type RadiationChoice, type ScanInfo } from "./measurement";
import { SCAN_MAX_BYTES } from "./order-files";

/** Above this many points a delivered scan's plotted arrays are thinned before they are stored. */
export const STORED_PROFILE_POINTS = 20_000;

export type CheckStatus = "queued" | "running" | "done" | "failed";

/**
 * What the scan is checked against: the main phase's system, centering, cell and name (each may be missing),
 * the further expected phases, the candidate forms of the main phase and the client's acceptance window.
 */
export type DeclaredCell = DeclaredCheckOptions;

/** What a check needs besides the scan: the instrument, the declaration, and what the stored result names. */
export interface CheckInput {
  /** The instrument's radiation (the quote's instrument, or the one a vetting form names); null when it names no usable source. */
  radiation: Radiation | null;
  declared: DeclaredCell;
  /** Notes from the caller shown before the engine's own warnings. */
  warnings: string[];
  declaredFrom: StoredCheckResult["declaredFrom"];
  fileName?: string;
  /** The instrument's sample holder, so its own lines are not taken for the sample's. */
  holder?: SampleHolder;
  /** The instrument's Caglioti U, V, W, so the Scherrer sizes leave out the instrument's own width. */
  instrumentProfile?: InstrumentProfile;
}

/** A scan file as read: its format and what it states (kept with the file even when the check fails later). */
export interface ScanRead {
  format: string;
  info: ScanInfo;
}

export type ScanReadOutcome = ({ ok: true; scan: Scan } & ScanRead) | { ok: false; error: string };

/**
 * Reads a scan file (text or bytes) with the engine's readers: its format, what it states about the
 * measurement, and its range. A file that is no readable scan comes back as the engine's one sentence.
 */
export function readScanFile(input: string | Uint8Array, fileName?: string): ScanReadOutcome {
  let parsed: ReturnType<typeof parseScan>;
  try {
    parsed = parseScan(input, { fileName, maxBytes: SCAN_MAX_BYTES });
  } catch (err) {
    return { ok: false, error: `The file could not be read: ${err instanceof Error ? err.message : String(err)}` };
  }
  if (!parsed.ok) return { ok: false, error: parsed.error };
  const { scan } = parsed;
  const n = scan.twoTheta.length;
  return {
    ok: true,
    scan,
    format: scan.format,
    info: { formatLabel: scan.formatLabel, metadata: scan.metadata ?? {}, points: n, twoThetaMin: scan.twoTheta[0], twoThetaMax: scan.twoTheta[n - 1] },
  };
}

export type ScanCheckOutcome =
  | { ok: true; result: StoredCheckResult; read: ScanRead; radiation: RadiationChoice }
  | { ok: false; error: string; read: ScanRead | null; radiation: RadiationChoice | null };

/**
 * Checks one scan file (text or bytes) and returns the result as it is stored, with the file as read. An
 * engine failure is deterministic (running it again gives the same), so it comes back as an error sentence
 * rather than an exception; when the file was read before the check failed, `read` still says what it states.
 */
export function checkScanForStorage(input: string | Uint8Array, context: CheckInput, { maxPoints = STORED_PROFILE_POINTS } = {}): ScanCheckOutcome {
  const read = readScanFile(input, context.fileName);
  if (!read.ok) return { ok: false, error: read.error, read: null, radiation: null };
  const scanRead: ScanRead = { format: read.format, info: read.info };
  const choice = chooseRadiation(read.info.metadata, context.radiation, context.declaredFrom.instrumentName);
  let checked: ReturnType<typeof checkParsedScan>;
  try {
    // The file was read once above; the check runs on that reading.
    checked = checkParsedScan(read.scan, {
      radiation: choice.radiation,
      ...context.declared,
      holder: context.holder,
      instrumentProfile: context.instrumentProfile,
    });
  } catch (err) {
    return {
      ok: false,
      error: `The check could not be completed: ${err instanceof Error ? err.message : String(err)}`,
      read: scanRead,
      radiation: choice,
    };
  }
  if (!checked.ok) return { ok: false, error: checked.error, read: scanRead, radiation: choice };
  return { ok: true, result: toStoredResult(checked.result, context, choice, scanRead, maxPoints), read: scanRead, radiation: choice };
}

/** The radiation of an instrument as the engine takes it; null when the instrument names no usable source. */
export function radiationOf(instrument: Pick<Instrument, "anode" | "customWavelength" | "monochromation">): Radiation | null {
  if (instrument.anode) return { kind: "anode", anode: instrument.anode, monochromation: instrument.monochromation };
  if (instrument.customWavelength && instrument.customWavelength > 0) return { kind: "custom", wavelength: instrument.customWavelength };
  return null;
}

/** An instrument's Caglioti U, V, W as the engine takes them; undefined unless all three are set. */
export function instrumentProfileOf(instrument: Pick<Instrument, "cagliotiU" | "cagliotiV" | "cagliotiW">): InstrumentProfile | undefined {
  const { cagliotiU: U, cagliotiV: V, cagliotiW: W } = instrument;
  return U != null && V != null && W != null ? { U, V, W } : undefined;
}

/** An instrument's sample holder as the engine takes it; undefined when none (or an unknown one) is named. */
export function holderOf(instrument: Pick<Instrument, "sampleHolder">): SampleHolder | undefined {
  const holder = instrument.sampleHolder as SampleHolder | null;
  return holder && holder !== "none" && SAMPLE_HOLDER_IDS.includes(holder) ? holder : undefined;
}

type DeclaredSample = Pick<
  Sample,
  "expectedPhase" | "crystalSystem" | "centering" | "cellA" | "cellB" | "cellC" | "cellAlpha" | "cellBeta" | "cellGamma" | "acceptanceWindow"
>;
type DeclaredSamplePhase = Pick<
  SamplePhase,
  "role" | "position" | "name" | "crystalSystem" | "centering" | "cellA" | "cellB" | "cellC" | "cellAlpha" | "cellBeta" | "cellGamma"
>;

const storedCell = (p: Record<"cellA" | "cellB" | "cellC" | "cellAlpha" | "cellBeta" | "cellGamma", number | null>) => ({
  a: p.cellA,
  b: p.cellB,
  c: p.cellC,
  alpha: p.cellAlpha,
  beta: p.cellBeta,
  gamma: p.cellGamma,
});

/**
 * A sample's declaration as stored (the sample's main phase and window, its further phase rows), in the form
 * both the server's check and the browser's preview take: expected phases and candidates each in position order.
 */
export function sampleDeclarationOf(sample: DeclaredSample, phases: DeclaredSamplePhase[] = []): SampleDeclaration {
  const ofRole = (role: SamplePhase["role"]): StoredPhaseDeclaration[] =>
    phases
      .filter((p) => p.role === role)
      .sort((x, y) => x.position - y.position)
      .map((p) => ({ name: p.name, system: p.crystalSystem, centering: p.centering, cell: storedCell(p) }));
  return {
    mainName: sample.expectedPhase,
    system: sample.crystalSystem,
    centering: sample.centering,
    cell: storedCell(sample),
    phases: ofRole("expected"),
    candidates: ofRole("candidate"),
    window: sample.acceptanceWindow,
  };
}

/** A sample's declaration as engine options; missing cell lengths and angles follow from the crystal system. */
export function declaredOf(sample: DeclaredSample, phases: DeclaredSamplePhase[] = []): DeclaredCell {
  return declaredCheckOptions(sampleDeclarationOf(sample, phases));
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
    calculated: result.calculatedProfile ? pick(result.calculatedProfile, 2) : null,
  };
}

function finitePeak(p: CheckedPeak): CheckedPeak {
  // JSON has no NaN or Infinity; keep the numbers that are numbers.
  const clean = { ...p } as Record<string, unknown>;
  for (const [k, v] of Object.entries(clean)) if (typeof v === "number" && !Number.isFinite(v)) clean[k] = null;
  return clean as unknown as CheckedPeak;
}

function toStoredResult(result: LatticeCheckResult, context: CheckInput, choice: RadiationChoice, read: ScanRead, maxPoints: number): StoredCheckResult {
  const { twoTheta: _t, observed: _o, background: _b, fittedProfile: _f, calculatedProfile: _c, unindexed: _u, ...rest } = result;
  const stored: StoredCheckResult = {
    ...rest,
    version: STORED_RESULT_VERSION,
    scanFormat: result.scanFormat ?? read.format,
    scanFormatLabel: result.scanFormatLabel ?? read.info.formatLabel,
    metadata: result.metadata ?? read.info.metadata,
    radiation: choice.radiation,
    radiationSource: choice.source,
    radiationMismatch: choice.mismatch,
    holder: context.holder ?? null,
    instrumentProfile: context.instrumentProfile ?? null,
    declaredFrom: context.declaredFrom,
    peaks: result.peaks.map(finitePeak),
    warnings: [...(choice.mismatch ? [choice.mismatch] : []), ...choice.notes, ...context.warnings, ...result.warnings],
    profile: storedProfile(result, maxPoints),
  };
  // Drop any non-finite numbers elsewhere (JSON would turn them into null anyway; make it explicit).
  return JSON.parse(JSON.stringify(stored, (_k, v) => (typeof v === "number" && !Number.isFinite(v) ? null : v)));
}

/** A finished check's second answer, apart from its verdict: within the acceptance window (null: none set, not judged, or not finished). */
export function withinWindowOf(check: Pick<ScanCheck, "result">): boolean | null {
  const answer = (check.result as { withinWindow?: unknown } | null)?.withinWindow;
  return typeof answer === "boolean" ? answer : null;
}

/** The public status of a check, as the status API answers it: the verdict and, kept apart, the acceptance window's answer. */
export function checkStatusJson(check: ScanCheck) {
  return {
    id: check.id,
    fileId: check.fileId,
    status: check.status as CheckStatus,
    verdict: check.verdict,
    withinWindow: withinWindowOf(check),
    error: check.error,
    finishedAt: check.finishedAt ? check.finishedAt.toISOString() : null,
  };
}
