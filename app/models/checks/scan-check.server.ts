// The automatic lattice check of a stored scan: queued through pg-boss, run by the worker, one row per file.
import { isUuid } from "~/domain/ids";
import { and, eq, isNull, sql } from "drizzle-orm";
import { db, schema } from "~/db/client.server";
import type { Instrument, Sample } from "~/db/schema";
import { checkScanText } from "~/diffraction";
import type { Cell, Centering, CheckedPeak, CrystalSystem, LatticeCheckResult, Radiation } from "~/diffraction";
import { declaredCheckOptions, type StoredCheckResult, type StoredProfile } from "~/domain/check-result";
import { readStoredText } from "~/models/files/storage.server";
import { config } from "~/config.server";
import { getBoss, QUEUES } from "~/jobs/queues.server";

/** How often pg-boss runs a check again after a failure or a killed worker, and when an active job counts as lost. */
export const SCAN_CHECK_JOB = {
  retryLimit: 3,
  retryDelay: config.jobs.scanCheckRetryDelaySeconds,
  expireInSeconds: config.jobs.scanCheckExpireSeconds,
} as const;

/** Above this many points the plotted arrays are thinned (extremes kept) before they are stored. */
export const STORED_PROFILE_POINTS = 20_000;

export type { StoredCheckResult, StoredProfile };
export type CheckStatus = "queued" | "running" | "done" | "failed";

/** Puts a stored file's check in the queue (a new row, or the existing one reset) and sends the job. */
export async function enqueueScanCheck(fileId: string): Promise<void> {
  await resetToQueued(fileId);
  const boss = await getBoss();
  const jobId = await boss.send(QUEUES.scanCheck, { fileId }, { ...SCAN_CHECK_JOB });
  if (!jobId) throw new Error(`The scan check of file ${fileId} could not be queued.`);
}

async function resetToQueued(fileId: string) {
  const now = new Date();
  const fresh = { status: "queued" as const, verdict: null, error: null, result: null, queuedAt: now, startedAt: null, finishedAt: null };
  await db
    .insert(schema.scanChecks)
    .values({ fileId, ...fresh })
    .onConflictDoUpdate({ target: schema.scanChecks.fileId, set: fresh });
}

export interface RunScanCheckOptions {
  /** Set by the worker on the job's last try: a storage failure then ends the check as failed instead of throwing. */
  finalAttempt?: boolean;
}

export type RunScanCheckOutcome =
  | { status: "done"; checkId: string; verdict: string }
  | { status: "failed"; checkId: string; error: string }
  | { status: "skipped"; reason: string };

/**
 * Runs the check of one stored file and stores its result. Safe to run again at any point (a retried job,
 * a worker killed half-way): the row is keyed by the file, so there is always exactly one, and the last
 * complete run's result is the one kept. Transient failures (storage unreachable) throw so pg-boss retries.
 */
export async function runScanCheck(fileId: string, options: RunScanCheckOptions = {}): Promise<RunScanCheckOutcome> {
  const [file] = await db.select().from(schema.orderFiles).where(eq(schema.orderFiles.id, fileId));
  if (!file) return { status: "skipped", reason: "The file no longer exists." };
  if (file.state !== "stored" || file.deletedAt) return { status: "skipped", reason: "The file is not a stored file." };

  const now = new Date();
  const [row] = await db
    .insert(schema.scanChecks)
    .values({ fileId, status: "running", startedAt: now, attempts: 1 })
    .onConflictDoUpdate({
      target: schema.scanChecks.fileId,
      set: { status: "running", startedAt: now, finishedAt: null, error: null, attempts: sql`${schema.scanChecks.attempts} + 1` },
    })
    .returning({ id: schema.scanChecks.id });
  const checkId = row.id;

  const fail = async (error: string): Promise<RunScanCheckOutcome> => {
    await db
      .update(schema.scanChecks)
      .set({ status: "failed", verdict: null, result: null, error, finishedAt: new Date() })
      .where(eq(schema.scanChecks.id, checkId));
    return { status: "failed", checkId, error };
  };

  let text: string;
  try {
    text = await readStoredText(file.storageKey);
  } catch (err) {
    if (options.finalAttempt) return fail("The stored scan could not be read from storage; upload it again.");
    throw err;
  }

  const context = await checkContext(file.orderId, file.sampleId);
  let checked;
  try {
    checked = checkScanText(text, { radiation: context.radiation, ...context.declared });
  } catch (err) {
    // A deterministic engine failure: running it again would give the same, so it ends here.
    return fail(`The check could not be completed: ${err instanceof Error ? err.message : String(err)}`);
  }
  if (!checked.ok) return fail(checked.error);

  const stored = toStoredResult(checked.result, context);
  await db
    .update(schema.scanChecks)
    .set({ status: "done", verdict: stored.verdict, error: null, result: stored as unknown as Record<string, unknown>, finishedAt: new Date() })
    .where(eq(schema.scanChecks.id, checkId));
  return { status: "done", checkId, verdict: stored.verdict };
}

interface CheckContext {
  radiation: Radiation;
  declared: { system?: CrystalSystem; centering?: Centering; cell?: Cell };
  warnings: string[];
  declaredFrom: StoredCheckResult["declaredFrom"];
}

/** The instrument's radiation from the order's quote, and the sample's declared system, centering and cell. */
async function checkContext(orderId: string, sampleId: string | null): Promise<CheckContext> {
  const [found] = await db
    .select({ instrument: schema.instruments })
    .from(schema.orders)
    .innerJoin(schema.quotes, eq(schema.quotes.id, schema.orders.quoteId))
    .leftJoin(schema.instruments, eq(schema.instruments.id, schema.quotes.instrumentId))
    .where(eq(schema.orders.id, orderId));
  const warnings: string[] = [];
  let radiation = found?.instrument ? radiationOf(found.instrument) : null;
  if (!radiation) {
    radiation = { kind: "anode", anode: "Cu", monochromation: "k_alpha_doublet" };
    warnings.push("The quote names no instrument with a known source, so the check assumed Cu Kα radiation.");
  }
  let sample: Sample | undefined;
  if (sampleId) [sample] = await db.select().from(schema.samples).where(eq(schema.samples.id, sampleId));
  return {
    radiation,
    declared: sample ? declaredOf(sample) : {},
    warnings,
    declaredFrom: {
      sampleLabel: sample?.label ?? null,
      expectedPhase: sample?.expectedPhase ?? null,
      instrumentName: found?.instrument?.name ?? null,
    },
  };
}

export function radiationOf(instrument: Pick<Instrument, "anode" | "customWavelength" | "monochromation">): Radiation | null {
  if (instrument.anode) return { kind: "anode", anode: instrument.anode, monochromation: instrument.monochromation };
  if (instrument.customWavelength && instrument.customWavelength > 0) return { kind: "custom", wavelength: instrument.customWavelength };
  return null;
}

/** A sample's declaration as engine options; missing cell lengths and angles follow from the crystal system. */
export function declaredOf(
  sample: Pick<Sample, "crystalSystem" | "centering" | "cellA" | "cellB" | "cellC" | "cellAlpha" | "cellBeta" | "cellGamma">,
): CheckContext["declared"] {
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
export function thinIndices(observed: ArrayLike<number>, maxPoints: number): number[] {
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

function storedProfile(result: LatticeCheckResult): StoredProfile {
  const keep = thinIndices(result.observed, STORED_PROFILE_POINTS);
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

export function toStoredResult(result: LatticeCheckResult, context: Pick<CheckContext, "radiation" | "warnings" | "declaredFrom">): StoredCheckResult {
  const { twoTheta: _t, observed: _o, background: _b, fittedProfile: _f, unindexed: _u, ...rest } = result;
  const stored: StoredCheckResult = {
    ...rest,
    version: 1,
    radiation: context.radiation,
    declaredFrom: context.declaredFrom,
    peaks: result.peaks.map(finitePeak),
    warnings: [...context.warnings, ...result.warnings],
    profile: storedProfile(result),
  };
  // Drop any non-finite numbers elsewhere (JSON would turn them into null anyway; make it explicit).
  return JSON.parse(JSON.stringify(stored, (_k, v) => (typeof v === "number" && !Number.isFinite(v) ? null : v)));
}

/**
 * Labels of the order's samples that have no scan with a completed check (`done`) yet. The order may move
 * to `data_delivered` only when this is empty.
 */
export async function samplesWithoutCompletedCheck(orderId: string): Promise<string[]> {
  const [order] = await db.select({ requestId: schema.orders.requestId }).from(schema.orders).where(eq(schema.orders.id, orderId));
  if (!order) return [];
  const sampleRows = await db
    .select({ id: schema.samples.id, label: schema.samples.label })
    .from(schema.samples)
    .where(eq(schema.samples.requestId, order.requestId))
    .orderBy(schema.samples.position, schema.samples.label);
  const checked = await db
    .selectDistinct({ sampleId: schema.orderFiles.sampleId })
    .from(schema.orderFiles)
    .innerJoin(schema.scanChecks, eq(schema.scanChecks.fileId, schema.orderFiles.id))
    .where(
      and(
        eq(schema.orderFiles.orderId, orderId),
        eq(schema.orderFiles.state, "stored"),
        isNull(schema.orderFiles.deletedAt),
        eq(schema.scanChecks.status, "done"),
      ),
    );
  const done = new Set(checked.map((c) => c.sampleId));
  return sampleRows.filter((s) => !done.has(s.id)).map((s) => s.label);
}

/** A check with the order it belongs to, for access checks (null when there is no such check). */
export async function checkWithOrder(checkId: string) {
  if (!isUuid(checkId)) return null;
  const [row] = await db
    .select({ check: schema.scanChecks, file: schema.orderFiles })
    .from(schema.scanChecks)
    .innerJoin(schema.orderFiles, eq(schema.orderFiles.id, schema.scanChecks.fileId))
    .where(eq(schema.scanChecks.id, checkId));
  return row ?? null;
}

/** The public status of a check, as the status API answers it. */
export function checkStatusJson(check: typeof schema.scanChecks.$inferSelect) {
  return {
    id: check.id,
    fileId: check.fileId,
    status: check.status as CheckStatus,
    verdict: check.verdict,
    error: check.error,
    finishedAt: check.finishedAt ? check.finishedAt.toISOString() : null,
  };
}
