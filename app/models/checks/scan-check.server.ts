// The automatic lattice check of a stored scan: queued through pg-boss, run by the worker, one row per file. The
// check itself is app/domain/lattice-check.ts, the same function the vetting calibration check calls.
import { eq, sql } from "drizzle-orm";
import { db, schema } from "~/db/client.server";
import type { Sample } from "~/db/schema";
import { type CheckInput, checkScanForStorage, declaredOf, radiationOf } from "~/domain/lattice-check";
import { readStoredText } from "~/models/files/storage.server";
import { config } from "~/config.server";
import { getBoss, QUEUES } from "~/jobs/queues.server";

/** How often pg-boss runs a check again after a failure or a killed worker, and when an active job counts as lost. */
export const SCAN_CHECK_JOB = {
  retryLimit: 3,
  retryDelay: config.jobs.scanCheckRetryDelaySeconds,
  expireInSeconds: config.jobs.scanCheckExpireSeconds,
} as const;

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

  const checked = checkScanForStorage(text, await checkContext(file.orderId, file.sampleId));
  if (!checked.ok) return fail(checked.error);
  const stored = checked.result;
  await db
    .update(schema.scanChecks)
    .set({ status: "done", verdict: stored.verdict, error: null, result: stored as unknown as Record<string, unknown>, finishedAt: new Date() })
    .where(eq(schema.scanChecks.id, checkId));
  return { status: "done", checkId, verdict: stored.verdict };
}

/** The instrument's radiation from the order's quote, and the sample's declared system, centering and cell. */
async function checkContext(orderId: string, sampleId: string | null): Promise<CheckInput> {
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
