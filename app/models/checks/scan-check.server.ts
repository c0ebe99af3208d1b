// The automatic lattice check of a stored scan: queued through pg-boss, run by the worker, one row per file. The
// check itself is app/domain/lattice-check.ts, the same function the vetting calibration check calls.
import { eq, sql } from "drizzle-orm";
import { db, schema } from "~/db/client.server";
import type { Sample } from "~/db/schema";
import { type CheckInput, checkScanForStorage, declaredOf, holderOf, instrumentProfileOf, radiationOf, type ScanRead } from "~/domain/lattice-check";
import { formatBytes, SCAN_MAX_BYTES } from "~/domain/order-files";
import { readStoredBytes } from "~/models/files/storage.server";
import { recordLot } from "~/models/materials/materials.server";
import { phasesOfSamples } from "~/models/requests/requests.server";
import { config } from "~/config.server";
import { QUEUES } from "~/jobs/queues.server";
import { sendAndWake } from "~/jobs/wake.server";

/** How often pg-boss runs a check again after a failure or a killed worker, and when an active job counts as lost. */
export const SCAN_CHECK_JOB = {
  retryLimit: 3,
  retryDelay: config.jobs.scanCheckRetryDelaySeconds,
  expireInSeconds: config.jobs.scanCheckExpireSeconds,
} as const;

/** Puts a stored file's check in the queue (a new row, or the existing one reset) and sends the job, waking the worker. */
export async function enqueueScanCheck(fileId: string): Promise<void> {
  await resetToQueued(fileId);
  const jobId = await sendAndWake(QUEUES.scanCheck, { fileId }, { ...SCAN_CHECK_JOB });
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
    // A lot's earlier answer no longer stands on its material's record.
    await recordLot(checkId);
    return { status: "failed", checkId, error };
  };

  // Files stored before the scan limit applied at upload may be larger than the check reads.
  if (file.sizeBytes > SCAN_MAX_BYTES) {
    return fail(`The file is ${formatBytes(file.sizeBytes)}; a scan is checked up to ${formatBytes(SCAN_MAX_BYTES)}. Deliver a smaller export of it.`);
  }
  let bytes: Uint8Array;
  try {
    bytes = await readStoredBytes(file.storageKey);
  } catch (err) {
    if (options.finalAttempt) return fail("The stored scan could not be read from storage; upload it again.");
    throw err;
  }

  const checked = checkScanForStorage(bytes, { ...(await checkContext(file.orderId, file.sampleId)), fileName: file.name });
  // What the file states is kept with the file as soon as it is read, whether the check then succeeds or not.
  if (checked.read) await keepScanRead(fileId, checked.read);
  if (!checked.ok) return fail(checked.error);
  const stored = checked.result;
  await db
    .update(schema.scanChecks)
    .set({ status: "done", verdict: stored.verdict, error: null, result: stored as unknown as Record<string, unknown>, finishedAt: new Date() })
    .where(eq(schema.scanChecks.id, checkId));
  // A lot of a material goes on the material's record (docs/design.md#materials-and-lots).
  await recordLot(checkId);
  return { status: "done", checkId, verdict: stored.verdict };
}

/** Keeps a scan's format and what it states on its file row (written at upload too; files stored before that get it here). */
async function keepScanRead(fileId: string, read: ScanRead) {
  await db.update(schema.orderFiles).set({ scanFormat: read.format, scanInfo: read.info }).where(eq(schema.orderFiles.id, fileId));
}

/** The quote's instrument (radiation, holder, profile), and the sample's declaration: its phases and window. */
export async function checkContext(orderId: string, sampleId: string | null): Promise<CheckInput> {
  const [found] = await db
    .select({ instrument: schema.instruments })
    .from(schema.orders)
    .innerJoin(schema.quotes, eq(schema.quotes.id, schema.orders.quoteId))
    .leftJoin(schema.instruments, eq(schema.instruments.id, schema.quotes.instrumentId))
    .where(eq(schema.orders.id, orderId));
  // With no source here, the file's own is used, or Cu Kα is assumed and said so (chooseRadiation).
  const instrument = found?.instrument ?? null;
  let sample: Sample | undefined;
  if (sampleId) [sample] = await db.select().from(schema.samples).where(eq(schema.samples.id, sampleId));
  const phases = sample ? await phasesOfSamples([sample.id]) : [];
  return {
    radiation: instrument ? radiationOf(instrument) : null,
    holder: instrument ? holderOf(instrument) : undefined,
    instrumentProfile: instrument ? instrumentProfileOf(instrument) : undefined,
    declared: sample ? declaredOf(sample, phases) : {},
    warnings: [],
    declaredFrom: {
      sampleLabel: sample?.label ?? null,
      expectedPhase: sample?.expectedPhase ?? null,
      instrumentName: found?.instrument?.name ?? null,
    },
  };
}
