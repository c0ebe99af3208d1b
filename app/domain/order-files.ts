// Delivered files of an order: kinds, accepted formats, size limits and upload sizes (browser-safe).
import type { OrderState } from "~/domain/order-states";

export const FILE_KINDS = ["scan", "report", "other"] as const;
export type FileKind = (typeof FILE_KINDS)[number];

export const FILE_KIND_LABELS: Record<FileKind, string> = { scan: "Scan", report: "Lab report", other: "Other" };

const MiB = 1024 * 1024;
/** Every delivered file may be up to 2 GB. */
export const MAX_FILE_BYTES = 2_000_000_000;
/** Up to this size a file goes up in one PUT; above it, in parts. */
export const SINGLE_PUT_MAX_BYTES = 16 * MiB;
/** The size of each part of a multipart upload (the last one is smaller); S3 wants at least 5 MiB. */
export const PART_BYTES = 8 * MiB;

/** Scans as plain text: columns, CSV, pdCIF. */
export const SCAN_TEXT_EXTENSIONS = [".xy", ".xye", ".csv", ".txt", ".dat", ".asc", ".cif"];
/**
 * Scans in an instrument's own format, text or binary (XRDML, binary raw files, GSAS, Sietronics CPI, Rigaku
 * RAS, Bruker UXD, Philips RD/SD, …; docs/scan-formats.md). The reader is chosen by the content, not the name.
 */
export const SCAN_INSTRUMENT_EXTENSIONS = [".xrdml", ".raw", ".gsa", ".gss", ".gsas", ".fxye", ".fxy", ".cpi", ".ras", ".uxd", ".udf", ".rd", ".sd", ".mdi"];

/**
 * A scan is read whole by the check, so it may be this large at most (the engine's own limit for a scan);
 * reports and other files may be up to MAX_FILE_BYTES.
 */
export const SCAN_MAX_BYTES = 50 * MiB;

/** The file names each kind accepts; the stored bytes are checked too (a scan must be readable, %PDF for reports). */
export const KIND_EXTENSIONS: Record<FileKind, string[]> = {
  scan: [...SCAN_TEXT_EXTENSIONS, ...SCAN_INSTRUMENT_EXTENSIONS],
  report: [".pdf"],
  other: [".pdf", ".png", ".jpg", ".jpeg", ".xy", ".xye", ".csv", ".txt", ".dat", ".cif"],
};

/** The states in which the lab delivers files: from the samples' arrival until the client has accepted. */
export const UPLOAD_ORDER_STATES: OrderState[] = ["samples_received", "measuring", "data_delivered"];

/** How long delivered files are kept after the order, deleted or not (README, "Data retention"). */
export const RETENTION_YEARS = 5;

/** The day a delivered file's retention period ends: RETENTION_YEARS after it was stored (docs/design.md#records-that-hold). */
export function retentionEndsAt(file: { storedAt: Date | null; createdAt: Date }): Date {
  const end = new Date(file.storedAt ?? file.createdAt);
  end.setUTCFullYear(end.getUTCFullYear() + RETENTION_YEARS);
  return end;
}

/**
 * Why a client may not delete a delivered file yet, or null once its retention period is over. Within the period
 * the raw data holds as delivered; the client archives it from view instead.
 */
export function deletionRefusal(file: { storedAt: Date | null; createdAt: Date }, now = new Date()): string | null {
  const end = retentionEndsAt(file);
  if (now >= end) return null;
  return `Delivered data is kept for ${RETENTION_YEARS} years and cannot be deleted before ${end.toISOString().slice(0, 10)}; archive the file to hide it from view.`;
}

/** The longest a share link may stay valid (days). */
export const SHARE_LINK_MAX_DAYS = 90;

/** The most share links one order may have live (neither expired nor revoked) at a time; each is a reader's key. */
export const SHARE_LINK_MAX_LIVE = 20;

/** A download link from the data room is valid this long (seconds). */
export const DOWNLOAD_URL_SECONDS = 300;

/** The kind a file's name suggests: PDFs are reports, scan formats (text or an instrument's own) scans. */
export function kindForName(name: string): FileKind {
  const lower = name.toLowerCase();
  if (lower.endsWith(".pdf")) return "report";
  if (KIND_EXTENSIONS.scan.some((ext) => lower.endsWith(ext))) return "scan";
  return "other";
}

export function partCount(size: number) {
  return size <= SINGLE_PUT_MAX_BYTES ? 1 : Math.ceil(size / PART_BYTES);
}

/** Bytes for people: 1.5 MB, 820 kB, 312 B (decimal units, as file managers show them). */
export function formatBytes(bytes: number) {
  if (bytes >= 1e9) return `${+(bytes / 1e9).toFixed(2)} GB`;
  if (bytes >= 1e6) return `${+(bytes / 1e6).toFixed(1)} MB`;
  if (bytes >= 1e3) return `${(bytes / 1e3).toFixed(0)} kB`;
  return `${bytes} B`;
}

/** The upload target the server hands out: one PUT, or one PUT per part. */
export type UploadTarget =
  | { method: "PUT"; url: string; headers: Record<string, string> }
  | { method: "PUT"; partSize: number; parts: { partNumber: number; url: string }[] };

export interface StartedUpload {
  fileId: string;
  name: string;
  version: number;
  upload: UploadTarget;
}

export interface CompletedPart {
  partNumber: number;
  etag: string;
}
