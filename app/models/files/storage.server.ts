// Object storage (S3 through the official SDK): presigned uploads and downloads, and checks of stored objects.
import { createHash, randomUUID } from "node:crypto";
import { GetObjectCommand, HeadObjectCommand, PutObjectCommand } from "@aws-sdk/client-s3";
import { getSignedUrl } from "@aws-sdk/s3-request-presigner";
import { config } from "~/config.server";
import { attachmentDisposition, fileNameProblem, keySegmentFor, keySegments } from "~/domain/storage-keys";
import { services } from "~/utils/services.server";
import { SCAN_INSTRUMENT_EXTENSIONS, SCAN_MAX_BYTES, SCAN_TEXT_EXTENSIONS } from "~/domain/order-files";

/** What a kind of upload may be: its size limit and the types it accepts (checked by content too). */
export interface UploadRule {
  label: string;
  maxBytes: number;
  /**
   * Accepted MIME types; the first bytes of the stored object must match one of them. A scan rule
   * (`application/octet-stream` among them) accepts any bytes: the scan reader decides what the file is.
   */
  types: ("application/pdf" | "image/png" | "image/jpeg" | "text/plain" | "application/octet-stream")[];
}

export const DOCUMENT_RULE: UploadRule = {
  label: "a PDF or an image (PNG, JPEG)",
  maxBytes: 20 * 1024 * 1024,
  types: ["application/pdf", "image/png", "image/jpeg"],
};

/** Scans: text columns, CSV, pdCIF, or an instrument's own format; the bytes are read by the scan reader, not sniffed. */
export const SCAN_RULE: UploadRule = {
  label: `a text scan file (${SCAN_TEXT_EXTENSIONS.join(", ")}) or an instrument's scan file (${SCAN_INSTRUMENT_EXTENSIONS.join(", ")})`,
  maxBytes: SCAN_MAX_BYTES,
  types: ["text/plain", "application/octet-stream"],
};

const EXTENSIONS: Record<UploadRule["types"][number], string[]> = {
  "application/pdf": [".pdf"],
  "image/png": [".png"],
  "image/jpeg": [".jpg", ".jpeg"],
  "text/plain": SCAN_TEXT_EXTENSIONS,
  "application/octet-stream": SCAN_INSTRUMENT_EXTENSIONS,
};

/** Whether the rule leaves the content to the scan reader (any bytes may be stored, then read as a scan). */
export const readAsScan = (rule: UploadRule) => rule.types.includes("application/octet-stream");

const mb = (n: number) => `${Math.round(n / 1024 / 1024)} MB`;

/** Checks what the uploader says about a file (its name already trimmed) before any upload URL is issued; returns a sentence or null. */
export function checkDeclaredFile(rule: UploadRule, file: { name: string; size: number; type: string }): string | null {
  const nameProblem = fileNameProblem(file.name);
  if (nameProblem) return nameProblem;
  if (!Number.isSafeInteger(file.size) || file.size < 0) return "Give the file's size in bytes, as a whole number.";
  if (file.size === 0) return "The file is empty.";
  if (file.size > rule.maxBytes) return `The file is ${mb(file.size)}; the limit is ${mb(rule.maxBytes)}.`;
  const type = rule.types.find((t) => EXTENSIONS[t].some((ext) => file.name.toLowerCase().endsWith(ext)));
  if (!type) return `Upload ${rule.label}.`;
  return null;
}

export function contentTypeFor(rule: UploadRule, name: string) {
  return rule.types.find((t) => EXTENSIONS[t].some((ext) => name.toLowerCase().endsWith(ext))) ?? "application/octet-stream";
}

/**
 * A storage key under a prefix of the owner's, with the file's own name kept readable at the end. Made of plain
 * segments only, so the key passes isKeyUnder when a form sends it back.
 */
export function storageKeyFor(prefix: string, fileName: string) {
  if (!keySegments(prefix)) throw new Error(`Not a storage prefix: ${JSON.stringify(prefix)}`);
  return `${prefix}/${randomUUID()}/${keySegmentFor(fileName)}`;
}

/** A short-lived URL the browser PUTs the file to; the app server never carries the bytes. */
export async function presignUpload(key: string, contentType: string, expiresInSeconds = 600) {
  const command = new PutObjectCommand({ Bucket: config.s3.bucket, Key: key, ContentType: contentType });
  return getSignedUrl(services.s3, command, { expiresIn: expiresInSeconds });
}

/** A short-lived download URL (minutes), optionally naming the file for the browser. */
export async function presignDownload(key: string, fileName?: string, expiresInSeconds = 300) {
  const command = new GetObjectCommand({
    Bucket: config.s3.bucket,
    Key: key,
    ResponseContentDisposition: fileName ? attachmentDisposition(fileName) : undefined,
  });
  return getSignedUrl(services.s3, command, { expiresIn: expiresInSeconds });
}

function sniff(bytes: Uint8Array): UploadRule["types"][number] | "binary" | null {
  const starts = (...sig: number[]) => sig.every((b, i) => bytes[i] === b);
  if (starts(0x25, 0x50, 0x44, 0x46, 0x2d)) return "application/pdf"; // %PDF-
  if (starts(0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a)) return "image/png";
  if (starts(0xff, 0xd8, 0xff)) return "image/jpeg";
  if (bytes.includes(0)) return "binary";
  return bytes.length > 0 ? "text/plain" : null;
}

export type StoredObjectCheck =
  | {
      ok: true;
      size: number;
      sha256: string;
      /** The object's bytes, for a scan rule (read once, with the hash), so the caller can read the scan. */
      bytes?: Uint8Array;
    }
  | { ok: false; error: string };

/** Storage gave no answer (connection refused, reset, timed out) or a server error: nothing is known, try later. */
export class StorageUnavailable extends Error {
  readonly status = 503;
  constructor() {
    super("File storage cannot be reached just now, so nothing was stored. Please try again in a few minutes; the upload can be finished then.");
  }
}

/** True for a storage call that failed without a client-side answer (no HTTP status, or 5xx). */
export function isStorageUnreachable(err: unknown) {
  const status = (err as { $metadata?: { httpStatusCode?: number } } | null)?.$metadata?.httpStatusCode;
  return status === undefined || status >= 500;
}

/**
 * Verifies an uploaded object: it exists, is within the size limit, its first bytes match an accepted
 * type, and (when given) its SHA-256 equals what the browser computed. Streams the object once.
 */
export async function verifyStoredObject(key: string, rule: UploadRule, expectedSha256?: string): Promise<StoredObjectCheck> {
  let size: number;
  try {
    const head = await services.s3.send(new HeadObjectCommand({ Bucket: config.s3.bucket, Key: key }));
    size = head.ContentLength ?? 0;
  } catch (err) {
    // Storage that does not answer says nothing about the upload: the caller answers 503 and keeps it open.
    if (isStorageUnreachable(err)) throw new StorageUnavailable();
    return { ok: false, error: "The upload did not arrive in storage; please upload the file again." };
  }
  if (size > rule.maxBytes) return { ok: false, error: `The file is ${mb(size)}; the limit is ${mb(rule.maxBytes)}.` };
  if (size === 0) return { ok: false, error: "The file is empty." };
  const hash = createHash("sha256");
  const scan = readAsScan(rule);
  const chunks: Uint8Array[] = [];
  let head: Uint8Array | null = null;
  try {
    const object = await services.s3.send(new GetObjectCommand({ Bucket: config.s3.bucket, Key: key }));
    for await (const chunk of object.Body as AsyncIterable<Uint8Array>) {
      if (!head) head = chunk.subarray(0, 512);
      hash.update(chunk);
      if (scan) chunks.push(chunk);
    }
  } catch (err) {
    if (isStorageUnreachable(err)) throw new StorageUnavailable();
    throw err;
  }
  // A scan's content is judged by the scan reader (it names images, PDFs and the like in one sentence).
  const kind = sniff(head ?? new Uint8Array());
  if (!scan && (!kind || kind === "binary" || !rule.types.includes(kind))) {
    return { ok: false, error: `The file's content is not ${rule.label}.` };
  }
  const sha256 = hash.digest("hex");
  if (expectedSha256 && expectedSha256.toLowerCase() !== sha256) {
    return { ok: false, error: "The stored file's checksum does not match the one computed in your browser; upload it again." };
  }
  return scan ? { ok: true, size, sha256, bytes: Buffer.concat(chunks) } : { ok: true, size, sha256 };
}

/** Reads a stored object's bytes whole (a scan, text or binary, up to the scan limit; the caller checks the size first). */
export async function readStoredBytes(key: string): Promise<Uint8Array> {
  const object = await services.s3.send(new GetObjectCommand({ Bucket: config.s3.bucket, Key: key }));
  return object.Body!.transformToByteArray();
}

/** Stores bytes from the server itself (seeding, generated reports). */
export async function putObject(key: string, body: string | Uint8Array, contentType: string) {
  await services.s3.send(new PutObjectCommand({ Bucket: config.s3.bucket, Key: key, Body: body, ContentType: contentType }));
}

export type UploadTarget = { ok: true; target: { uploadUrl: string; storageKey: string; contentType: string } } | { ok: false; error: string };

/**
 * Where a declared file goes: a presigned PUT under the prefix, or the sentence saying why the file does not
 * fit the rule. The caller has already checked who may upload.
 */
export async function uploadTargetFor(declared: { name: string; size: number; type: string }, rule: UploadRule, prefix: string): Promise<UploadTarget> {
  const file = { ...declared, name: declared.name.trim() };
  const problem = checkDeclaredFile(rule, file);
  if (problem) return { ok: false, error: problem };
  const storageKey = storageKeyFor(prefix, file.name);
  const contentType = contentTypeFor(rule, file.name);
  return { ok: true, target: { uploadUrl: await presignUpload(storageKey, contentType), storageKey, contentType } };
}
