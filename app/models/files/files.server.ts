// An order's delivered files: uploads straight to storage (one PUT or presigned parts), verification of the
// stored bytes, versions, downloads with an access log, soft deletion after the retention period, and archiving from the client's view.
import { isUuid } from "~/domain/ids";
import {
  AbortMultipartUploadCommand,
  CompleteMultipartUploadCommand,
  CreateMultipartUploadCommand,
  DeleteObjectCommand,
  UploadPartCommand,
} from "@aws-sdk/client-s3";
import { getSignedUrl } from "@aws-sdk/s3-request-presigner";
import { and, asc, desc, eq, inArray, isNull, max, sql } from "drizzle-orm";
import { config } from "~/config.server";
import { db, schema } from "~/db/client.server";
import type { Order, OrderFile } from "~/db/schema";
import { enqueueScanCheck } from "~/models/checks/scan-check.server";
import { withPhases } from "~/models/requests/requests.server";
import { services } from "~/utils/services.server";
import {
  checkDeclaredFile,
  contentTypeFor,
  presignDownload,
  presignUpload,
  SCAN_RULE,
  storageKeyFor,
  verifyStoredObject,
  isStorageUnreachable,
  StorageUnavailable,
  type UploadRule,
} from "~/models/files/storage.server";
import { radiationOf, readScanFile } from "~/domain/lattice-check";
import { chooseRadiation, type ScanInfo } from "~/domain/measurement";
import {
  DOWNLOAD_URL_SECONDS,
  deletionRefusal,
  FILE_KINDS,
  MAX_FILE_BYTES,
  PART_BYTES,
  SCAN_MAX_BYTES,
  SINGLE_PUT_MAX_BYTES,
  UPLOAD_ORDER_STATES,
  formatBytes,
  partCount,
  type CompletedPart,
  type FileKind,
  type StartedUpload,
} from "~/domain/order-files";
import { ORDER_STATE_LABELS } from "~/domain/order-states";
import { proposeSample, unmatchedReason } from "~/domain/sample-match";

/** A file's check as the file lists show it: state, verdict, the acceptance window's answer and any error. */
export const checkSummaryColumns = {
  id: schema.scanChecks.id,
  fileId: schema.scanChecks.fileId,
  status: schema.scanChecks.status,
  verdict: schema.scanChecks.verdict,
  // The acceptance window's answer, apart from the verdict (null: none set, or not finished).
  withinWindow: sql<boolean | null>`(${schema.scanChecks.result} ->> 'withinWindow')::boolean`,
  error: schema.scanChecks.error,
  finishedAt: schema.scanChecks.finishedAt,
};

/** A refused upload step, with the sentence for the uploader and the HTTP status to answer with. */
export class UploadProblem extends Error {
  constructor(
    message: string,
    readonly status = 400,
  ) {
    super(message);
  }
}

/** A scan is any file the engine's readers can read (text or an instrument's own format), up to the scan limit. */
export const FILE_RULES: Record<FileKind, UploadRule> = {
  scan: SCAN_RULE,
  report: { label: "a PDF report", maxBytes: MAX_FILE_BYTES, types: ["application/pdf"] },
  other: { label: "a PDF, PNG, JPEG or text file", maxBytes: MAX_FILE_BYTES, types: ["application/pdf", "image/png", "image/jpeg", "text/plain"] },
};

/** Presigned part URLs must outlive a slow upload of a whole file. */
const UPLOAD_URL_SECONDS = 3600;

export interface StartUploadInput {
  name: string;
  size: number;
  /** Known up front by instrument computers; the browser sends it with `complete` instead. */
  sha256?: string | null;
  sampleId?: string | null;
  kind?: FileKind;
}

export interface Uploader {
  userId: string | null;
  via: "browser" | "api";
}

const SHA256_HEX = /^[0-9a-f]{64}$/i;

/** The samples of an order's request with their declarations (further phases too) and hazards, in the client's order. */
export async function orderSamples(order: Pick<Order, "requestId">) {
  return withPhases(
    await db
      .select()
      .from(schema.samples)
      .where(eq(schema.samples.requestId, order.requestId))
      .orderBy(asc(schema.samples.position), asc(schema.samples.label)),
  );
}

async function checkUploadInput(order: Order, input: StartUploadInput) {
  if (!UPLOAD_ORDER_STATES.includes(order.state)) {
    throw new UploadProblem(`Files are delivered once the samples have arrived; this order is "${ORDER_STATE_LABELS[order.state]}".`, 409);
  }
  const kind = input.kind ?? "scan";
  if (!FILE_KINDS.includes(kind)) throw new UploadProblem(`The kind must be one of ${FILE_KINDS.join(", ")}.`);
  // The name's own rules (length, control characters, folders) are checkDeclaredFile's, below.
  const name = String(input.name ?? "").trim();
  if (!Number.isSafeInteger(input.size) || input.size < 0) throw new UploadProblem("Give the file's size in bytes, as a whole number.");
  if (input.size > MAX_FILE_BYTES) {
    throw new UploadProblem(`The file is ${formatBytes(input.size)}; the limit is ${formatBytes(MAX_FILE_BYTES)} per file.`, 413);
  }
  if (kind === "scan" && input.size > SCAN_MAX_BYTES) {
    throw new UploadProblem(
      `The file is ${formatBytes(input.size)}; a scan is read whole by the check, so it may be at most ${formatBytes(SCAN_MAX_BYTES)}. Export a smaller scan.`,
      413,
    );
  }
  const problem = checkDeclaredFile(FILE_RULES[kind], { name, size: input.size, type: "" });
  if (problem) throw new UploadProblem(problem);
  if (input.sha256 != null && !SHA256_HEX.test(input.sha256)) throw new UploadProblem("The SHA-256 must be 64 hexadecimal characters.");
  const samples = await orderSamples(order);
  let sampleId = input.sampleId || null;
  if (sampleId && !samples.some((s) => s.id === sampleId)) throw new UploadProblem("That sample is not part of this order.");
  // A scan is checked against its sample's declared cell, so it must say which sample it is: the only sample,
  // else the one whose label its name contains (app/domain/sample-match.ts), else the uploader must choose.
  if (!sampleId && kind === "scan") {
    if (samples.length === 1) sampleId = samples[0].id;
    else if (samples.length > 1) {
      const proposed = proposeSample(name, samples);
      if (!proposed) throw new UploadProblem(`Choose the sample the scan ${name} belongs to. ${unmatchedReason(name, samples)}`);
      sampleId = proposed.id;
    }
  }
  return { kind, name, sampleId, contentType: contentTypeFor(FILE_RULES[kind], name) };
}

const isUniqueViolation = (err: unknown) =>
  (err as { cause?: { code?: string }; code?: string })?.cause?.code === "23505" || (err as { code?: string }).code === "23505";

/** Inserts the file row as the next version of its name; a concurrent upload of the same name retries. */
async function insertNextVersion(values: Omit<typeof schema.orderFiles.$inferInsert, "version">): Promise<OrderFile> {
  for (let attempt = 0; ; attempt++) {
    const [{ latest }] = await db
      .select({ latest: max(schema.orderFiles.version) })
      .from(schema.orderFiles)
      .where(and(eq(schema.orderFiles.orderId, values.orderId), eq(schema.orderFiles.name, values.name)));
    try {
      const [row] = await db
        .insert(schema.orderFiles)
        .values({ ...values, version: (latest ?? 0) + 1 })
        .returning();
      return row;
    } catch (err) {
      if (!isUniqueViolation(err) || attempt >= 4) throw err;
    }
  }
}

/**
 * Starts the upload of one file to an order: checks the declared name, size and kind, creates the file row
 * (the next version of that name) and returns presigned targets. The bytes go from the uploader to storage.
 */
export async function startOrderUpload(order: Order, input: StartUploadInput, uploader: Uploader): Promise<StartedUpload> {
  const { kind, name, sampleId, contentType } = await checkUploadInput(order, input);
  const storageKey = storageKeyFor(`orders/${order.id}/files`, name);
  const multipart = input.size > SINGLE_PUT_MAX_BYTES;
  let uploadId: string | null = null;
  if (multipart) {
    const created = await services.s3
      .send(new CreateMultipartUploadCommand({ Bucket: config.s3.bucket, Key: storageKey, ContentType: contentType }))
      .catch((err) => {
        throw isStorageUnreachable(err) ? new StorageUnavailable() : err;
      });
    uploadId = created.UploadId ?? null;
    if (!uploadId) throw new Error("Storage did not start the multipart upload.");
  }
  let file: OrderFile;
  try {
    file = await insertNextVersion({
      orderId: order.id,
      sampleId,
      kind,
      name,
      sizeBytes: input.size,
      contentType,
      sha256: input.sha256?.toLowerCase() ?? "",
      storageKey,
      state: "uploading",
      multipartUploadId: uploadId,
      uploadedBy: uploader.userId,
      uploadedVia: uploader.via,
    });
  } catch (err) {
    if (uploadId) await abortMultipart(storageKey, uploadId);
    throw err;
  }
  if (!uploadId) {
    const url = await presignUpload(storageKey, contentType, UPLOAD_URL_SECONDS);
    return { fileId: file.id, name, version: file.version, upload: { method: "PUT", url, headers: { "Content-Type": contentType } } };
  }
  const parts = await Promise.all(
    Array.from({ length: partCount(input.size) }, async (_, i) => ({
      partNumber: i + 1,
      url: await getSignedUrl(services.s3, new UploadPartCommand({ Bucket: config.s3.bucket, Key: storageKey, UploadId: uploadId, PartNumber: i + 1 }), {
        expiresIn: UPLOAD_URL_SECONDS,
      }),
    })),
  );
  return { fileId: file.id, name, version: file.version, upload: { method: "PUT", partSize: PART_BYTES, parts } };
}

async function abortMultipart(key: string, uploadId: string) {
  await services.s3.send(new AbortMultipartUploadCommand({ Bucket: config.s3.bucket, Key: key, UploadId: uploadId })).catch(() => null);
}

async function deleteObject(key: string) {
  await services.s3.send(new DeleteObjectCommand({ Bucket: config.s3.bucket, Key: key })).catch(() => null);
}

/** A file of the given order, or null (wrong order, malformed id). */
export async function fileOfOrder(orderId: string, fileId: string) {
  if (!isUuid(fileId)) return null;
  const [file] = await db
    .select()
    .from(schema.orderFiles)
    .where(and(eq(schema.orderFiles.id, fileId), eq(schema.orderFiles.orderId, orderId)));
  return file ?? null;
}

/** Reads a `parts` list from a request body: part numbers 1…n, each with its ETag. */
export function parseCompletedParts(value: unknown): CompletedPart[] | null {
  if (!Array.isArray(value)) return null;
  const parts: CompletedPart[] = [];
  for (const p of value) {
    const partNumber = Number((p as CompletedPart)?.partNumber);
    const etag = (p as CompletedPart)?.etag;
    if (!Number.isInteger(partNumber) || partNumber < 1 || typeof etag !== "string" || !etag || etag.length > 200) return null;
    parts.push({ partNumber, etag });
  }
  return parts.sort((a, b) => a.partNumber - b.partNumber);
}

/** A finished upload: stored (with any warning the lab should read before it delivers), or refused with the reason. */
export type CompletedUpload = { file: OrderFile; stored: true; warnings: string[] } | { file: OrderFile; stored: false; reason: string };

/** What the lab should know about a stored scan before it delivers: a radiation that differs from the quote's instrument. */
async function storedWarnings(file: OrderFile): Promise<string[]> {
  if (file.kind !== "scan" || !file.scanInfo) return [];
  const instrument = await quotedInstrumentOfOrder(file.orderId);
  const radiation = instrument ? radiationOf(instrument) : null;
  const mismatch = radiation ? chooseRadiation(file.scanInfo.metadata, radiation, instrument?.name ?? null).mismatch : null;
  return mismatch ? [mismatch] : [];
}

async function reject(file: OrderFile, reason: string): Promise<CompletedUpload> {
  const [row] = await db
    .update(schema.orderFiles)
    .set({ state: "rejected", rejectReason: reason, multipartUploadId: null })
    .where(and(eq(schema.orderFiles.id, file.id), eq(schema.orderFiles.state, "uploading")))
    .returning();
  // Bytes that do not count are not kept.
  await deleteObject(file.storageKey);
  return { file: row ?? file, stored: false, reason };
}

/**
 * Finishes an upload: puts the parts together (multipart), then reads the stored object once and checks its
 * size, its type by content and its SHA-256. Only then is the file `stored` (and a scan's check queued);
 * otherwise it is `rejected` with the reason, and nothing of it counts as delivered.
 */
export async function completeOrderUpload(file: OrderFile, input: { parts?: unknown; sha256?: unknown }): Promise<CompletedUpload> {
  if (file.state === "stored") return { file, stored: true, warnings: await storedWarnings(file) };
  if (file.state === "rejected") throw new UploadProblem(`This upload was already refused: ${file.rejectReason ?? "upload the file again."}`, 409);
  const sha256 = typeof input.sha256 === "string" && input.sha256 ? input.sha256.toLowerCase() : file.sha256;
  if (!SHA256_HEX.test(sha256)) throw new UploadProblem("Send the file's SHA-256 (64 hexadecimal characters).");
  if (file.sha256 && sha256 !== file.sha256)
    return reject(file, "The SHA-256 sent at the end differs from the one declared at the start; upload the file again.");

  if (file.multipartUploadId) {
    const parts = parseCompletedParts(input.parts);
    const expected = partCount(file.sizeBytes);
    if (!parts || parts.length !== expected || parts.some((p, i) => p.partNumber !== i + 1)) {
      throw new UploadProblem(`Send the ETag of each of the ${expected} parts (partNumber 1 to ${expected}).`);
    }
    try {
      await services.s3.send(
        new CompleteMultipartUploadCommand({
          Bucket: config.s3.bucket,
          Key: file.storageKey,
          UploadId: file.multipartUploadId,
          MultipartUpload: { Parts: parts.map((p) => ({ PartNumber: p.partNumber, ETag: p.etag })) },
        }),
      );
    } catch (err) {
      // Unreachable storage leaves the parts where they are, so the same upload can be finished later.
      if (isStorageUnreachable(err)) throw new StorageUnavailable();
      await abortMultipart(file.storageKey, file.multipartUploadId);
      return reject(file, `Storage could not put the parts together (${(err as Error).name || "error"}); upload the file again.`);
    }
  }

  const rule = FILE_RULES[file.kind];
  const verified = await verifyStoredObject(file.storageKey, rule, sha256);
  if (!verified.ok) return reject(file, verified.error);
  if (verified.size !== file.sizeBytes) return reject(file, `The stored file has ${verified.size} bytes, not the ${file.sizeBytes} declared; upload it again.`);
  // A scan is read at once: a file no reader can read (an image, a PDF, a spreadsheet, damaged bytes) is refused
  // now with the reader's sentence, so the lab learns it before anything counts as delivered.
  let scan: { scanFormat: string; scanInfo: ScanInfo } | null = null;
  if (file.kind === "scan") {
    const read = readScanFile(verified.bytes ?? new Uint8Array(), file.name);
    if (!read.ok) return reject(file, read.error);
    scan = { scanFormat: read.format, scanInfo: read.info };
  }

  const [row] = await db
    .update(schema.orderFiles)
    .set({ state: "stored", sha256, storedAt: new Date(), multipartUploadId: null, ...scan })
    .where(and(eq(schema.orderFiles.id, file.id), eq(schema.orderFiles.state, "uploading")))
    .returning();
  if (!row) {
    // Another `complete` of the same upload finished first; answer with what it decided.
    const [current] = await db.select().from(schema.orderFiles).where(eq(schema.orderFiles.id, file.id));
    return current.state === "stored"
      ? { file: current, stored: true, warnings: await storedWarnings(current) }
      : { file: current, stored: false, reason: current.rejectReason ?? "Refused." };
  }
  if (row.kind === "scan") await enqueueScanCheck(row.id);
  return { file: row, stored: true, warnings: await storedWarnings(row) };
}

/** Cancels an unfinished upload: storage drops the parts, and the row goes (its version number is free again). */
export async function abortOrderUpload(file: OrderFile) {
  if (file.state !== "uploading") throw new UploadProblem("Only an upload in progress can be cancelled.", 409);
  if (file.multipartUploadId) await abortMultipart(file.storageKey, file.multipartUploadId);
  await deleteObject(file.storageKey);
  await db.delete(schema.orderFiles).where(and(eq(schema.orderFiles.id, file.id), eq(schema.orderFiles.state, "uploading")));
}

/** The instrument named by the order's quote (its source, name, holder and profile), or null. */
async function quotedInstrumentOfOrder(orderId: string) {
  const [found] = await db
    .select({ instrument: schema.instruments })
    .from(schema.orders)
    .innerJoin(schema.quotes, eq(schema.quotes.id, schema.orders.quoteId))
    .innerJoin(schema.instruments, eq(schema.instruments.id, schema.quotes.instrumentId))
    .where(eq(schema.orders.id, orderId));
  return found?.instrument ?? null;
}

/**
 * The order's files with uploader, sample and check; `client` sees stored, undeleted files only, archived ones
 * only with `archived`. A scan that has
 * been read carries what it states, and (for the lab) the sentence when its radiation differs from the quote's instrument.
 */
export async function orderFileList(orderId: string, { side, archived = false }: { side: "client" | "lab" | "shared"; archived?: boolean }) {
  const visible =
    side === "lab"
      ? eq(schema.orderFiles.orderId, orderId)
      : and(
          eq(schema.orderFiles.orderId, orderId),
          eq(schema.orderFiles.state, "stored"),
          isNull(schema.orderFiles.deletedAt),
          // The client's archived files only when asked for ("show archived"); the lab always sees its deliveries.
          archived ? undefined : isNull(schema.orderFiles.archivedAt),
        );
  const rows = await db
    .select({
      file: schema.orderFiles,
      uploader: schema.users.name,
      sampleLabel: schema.samples.label,
      check: checkSummaryColumns,
    })
    .from(schema.orderFiles)
    .leftJoin(schema.users, eq(schema.users.id, schema.orderFiles.uploadedBy))
    .leftJoin(schema.samples, eq(schema.samples.id, schema.orderFiles.sampleId))
    .leftJoin(schema.scanChecks, eq(schema.scanChecks.fileId, schema.orderFiles.id))
    .where(visible)
    .orderBy(asc(schema.orderFiles.name), desc(schema.orderFiles.version));
  // The mismatch sentence is for the lab, who decides what to deliver (the client reads it among the check's warnings).
  const instrument = side === "lab" && rows.some((r) => r.file.scanInfo) ? await quotedInstrumentOfOrder(orderId) : null;
  const instrumentRadiation = instrument ? radiationOf(instrument) : null;
  return rows.map(({ file, uploader, sampleLabel, check }) => ({
    id: file.id,
    name: file.name,
    version: file.version,
    kind: file.kind,
    size: file.sizeBytes,
    sha256: file.sha256,
    state: file.state,
    rejectReason: file.rejectReason,
    sampleId: file.sampleId,
    sampleLabel,
    uploader: uploader ?? (file.uploadedVia === "api" ? "Instrument computer" : null),
    uploadedVia: file.uploadedVia,
    uploadedAt: (file.storedAt ?? file.createdAt).toISOString(),
    deletedAt: file.deletedAt?.toISOString() ?? null,
    archivedAt: file.archivedAt?.toISOString() ?? null,
    check: check?.id ? { ...check, finishedAt: check.finishedAt?.toISOString() ?? null } : null,
    scanFormat: file.scanFormat,
    scanInfo: file.scanInfo,
    conditions: file.conditions,
    radiationMismatch:
      file.scanInfo && instrumentRadiation ? chooseRadiation(file.scanInfo.metadata, instrumentRadiation, instrument?.name ?? null).mismatch : null,
  }));
}

export type OrderFileRow = Awaited<ReturnType<typeof orderFileList>>[number];

/** Every file version delivered on the given orders with its scan check's verdict, for weighing a dispute. */
export async function filesWithVerdicts(orderIds: string[]) {
  if (orderIds.length === 0) return [];
  return db
    .select({ orderId: schema.orderFiles.orderId, name: schema.orderFiles.name, version: schema.orderFiles.version, verdict: schema.scanChecks.verdict })
    .from(schema.orderFiles)
    .leftJoin(schema.scanChecks, eq(schema.scanChecks.fileId, schema.orderFiles.id))
    .where(inArray(schema.orderFiles.orderId, orderIds));
}

/** A file with its order, if one of the given organisations is on the order (client or lab). */
export async function fileForOrganisations(fileId: string, organisationIds: string[]) {
  if (!isUuid(fileId) || organisationIds.length === 0) return null;
  const [row] = await db
    .select({ file: schema.orderFiles, order: schema.orders })
    .from(schema.orderFiles)
    .innerJoin(schema.orders, eq(schema.orders.id, schema.orderFiles.orderId))
    .where(eq(schema.orderFiles.id, fileId));
  if (!row) return null;
  if (organisationIds.includes(row.order.clientOrganisationId)) return { ...row, side: "client" as const };
  if (organisationIds.includes(row.order.labId)) return { ...row, side: "lab" as const };
  return null;
}

/** Whether a file can be downloaded: stored, and (for the client's side) not deleted. */
export function downloadable(file: OrderFile, side: "client" | "lab" | "shared") {
  return file.state === "stored" && (side === "lab" || !file.deletedAt);
}

/**
 * Logs the download and returns a presigned GET valid for `expiresInSeconds` (minutes at most); the
 * browser fetches the bytes from storage, not through the app.
 */
export async function downloadUrl(
  file: OrderFile,
  who: { userId?: string | null; shareLinkId?: string | null; clientAddress?: string | null },
  expiresInSeconds = DOWNLOAD_URL_SECONDS,
) {
  await db.insert(schema.fileAccessLog).values({
    fileId: file.id,
    userId: who.userId ?? null,
    shareLinkId: who.shareLinkId ?? null,
    clientAddress: who.clientAddress ?? null,
  });
  const versioned = file.version > 1 ? file.name.replace(/(\.[^.]*)?$/, (ext) => `.v${file.version}${ext}`) : file.name;
  return presignDownload(file.storageKey, versioned, expiresInSeconds);
}

/** Who downloaded which file of the order, newest first. */
export async function orderAccessLog(orderId: string, limit = 200) {
  const files = await db.select({ id: schema.orderFiles.id }).from(schema.orderFiles).where(eq(schema.orderFiles.orderId, orderId));
  if (files.length === 0) return [];
  const rows = await db
    .select({
      id: schema.fileAccessLog.id,
      at: schema.fileAccessLog.at,
      clientAddress: schema.fileAccessLog.clientAddress,
      fileName: schema.orderFiles.name,
      version: schema.orderFiles.version,
      person: schema.users.name,
      shareLabel: schema.shareLinks.label,
    })
    .from(schema.fileAccessLog)
    .innerJoin(schema.orderFiles, eq(schema.orderFiles.id, schema.fileAccessLog.fileId))
    .leftJoin(schema.users, eq(schema.users.id, schema.fileAccessLog.userId))
    .leftJoin(schema.shareLinks, eq(schema.shareLinks.id, schema.fileAccessLog.shareLinkId))
    .where(
      inArray(
        schema.fileAccessLog.fileId,
        files.map((f) => f.id),
      ),
    )
    .orderBy(desc(schema.fileAccessLog.at), desc(schema.fileAccessLog.id))
    .limit(limit);
  return rows.map((r) => ({ ...r, at: r.at.toISOString() }));
}

/**
 * Hides a stored file from the data room once its retention period is over; within it the deletion is refused
 * with the sentence to show (the client archives the file instead). The bytes stay either way.
 */
export async function softDeleteFile(file: OrderFile, userId: string, now = new Date()): Promise<{ refused: string } | { file: OrderFile }> {
  const refused = deletionRefusal(file, now);
  if (refused) return { refused };
  if (file.deletedAt) return { file };
  const [row] = await db.update(schema.orderFiles).set({ deletedAt: now, deletedBy: userId }).where(eq(schema.orderFiles.id, file.id)).returning();
  return { file: row };
}

/** Archives a delivered file from the client's view (shown again under "show archived"); nothing is removed. */
export async function archiveFile(file: OrderFile, userId: string) {
  if (file.archivedAt) return file;
  const [row] = await db.update(schema.orderFiles).set({ archivedAt: new Date(), archivedBy: userId }).where(eq(schema.orderFiles.id, file.id)).returning();
  return row;
}

/** Brings an archived file back into the client's view. */
export async function restoreFile(file: OrderFile) {
  if (!file.archivedAt) return file;
  const [row] = await db.update(schema.orderFiles).set({ archivedAt: null, archivedBy: null }).where(eq(schema.orderFiles.id, file.id)).returning();
  return row;
}
