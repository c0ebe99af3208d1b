// Storage keys and stored files' names: what a key may look like, whether it lies under an owner's folder, what a file's name may be, and the download header that carries it (browser-safe).
import { z } from "zod";

/**
 * One segment of a key: letters, digits, dot, underscore and hyphen, and never only dots. The app makes every
 * key from such segments, so anything else in a key sent back by a form (`.`, `..`, an empty segment from `//`,
 * a backslash, a percent escape, a control character) did not come from it. Storage must not be trusted to
 * treat `..` literally: some servers and proxies normalise the path before they look the key up.
 */
const SEGMENT = /^(?!\.+$)[A-Za-z0-9._-]+$/;
const MAX_KEY_LENGTH = 400;

/** The key's segments, or null when any of them is not one the app makes. */
export function keySegments(key: string): string[] | null {
  if (typeof key !== "string" || key.length === 0 || key.length > MAX_KEY_LENGTH) return null;
  const segments = key.split("/");
  return segments.every((s) => SEGMENT.test(s)) ? segments : null;
}

/**
 * Whether a key sent back by a form names a file inside the owner's folder: both parse into plain segments,
 * the key starts with every segment of the prefix and has at least one more. Every check of a client-sent key
 * goes through here; comparing the raw strings would let `prefix/../../elsewhere` through.
 */
export function isKeyUnder(key: string, prefix: string): boolean {
  const k = keySegments(key);
  const p = keySegments(prefix);
  if (!k || !p || k.length <= p.length) return false;
  return p.every((segment, i) => k[i] === segment);
}

/** The readable end of a key made for a file: its name with everything but letters, digits, `.`, `_` and `-` replaced. */
export function keySegmentFor(fileName: string): string {
  const safe = fileName.replace(/[^A-Za-z0-9._-]+/g, "_").slice(-120);
  return SEGMENT.test(safe) ? safe : "file";
}

export const MAX_FILE_NAME_LENGTH = 200;

/**
 * Control characters (C0, DEL, C1), the Unicode line and paragraph separators, and the bidirectional controls
 * that can make a name such as `scan[RLO]fdp.xy` display as `scanyx.pdf`. A line break in a name would end the download's header line.
 */
const CONTROL = /[\p{Cc}\u2028\u2029\u200e\u200f\u202a-\u202e\u2066-\u2069]/u;

export const FILE_NAME_CONTROL = "The file name contains a control character (such as a line break or tab); rename the file without it and upload it again.";

/** Why a (trimmed) file name cannot be accepted, or null. Every step that takes a file's name asks this. */
export function fileNameProblem(name: string): string | null {
  if (!name || name.length > MAX_FILE_NAME_LENGTH) return `Give the file a name of at most ${MAX_FILE_NAME_LENGTH} characters.`;
  if (CONTROL.test(name)) return FILE_NAME_CONTROL;
  if (/[\\/]/.test(name)) return "Give the file name without folders.";
  return null;
}

/** A file's name in a form: trimmed, and refused with the sentence fileNameProblem gives. */
export const FileNameSchema = z
  .string()
  .trim()
  .superRefine((name, ctx) => {
    const problem = fileNameProblem(name);
    if (problem) ctx.addIssue({ code: "custom", message: problem });
  });

/**
 * `Content-Disposition: attachment` naming the file: a plain-ASCII `filename` for old clients and the exact name
 * as UTF-8 in `filename*` (RFC 6266, RFC 8187). Control characters become `_`, so whatever a stored name holds,
 * the header stays one valid line.
 */
export function attachmentDisposition(fileName: string): string {
  const name = fileName.replace(new RegExp(CONTROL.source, "gu"), "_") || "file";
  const ascii = name.replace(/[^\x20-\x7e]|["\\%]/g, "_");
  const encoded = encodeURIComponent(name).replace(/['()*]/g, (c) => `%${c.charCodeAt(0).toString(16).toUpperCase()}`);
  return `attachment; filename="${ascii}"; filename*=UTF-8''${encoded}`;
}
