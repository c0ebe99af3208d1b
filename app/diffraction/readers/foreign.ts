// Files that are plainly not scans, named by their first bytes (magic numbers) or their opening text, so that a lab
// learns in one sentence what it uploaded (signatures: docs/scan-formats.md#files-that-are-not-scans).
import type { ScanSource } from "./types";

function startsWith(bytes: Uint8Array, signature: (number | null)[], at = 0): boolean {
  if (bytes.length < at + signature.length) return false;
  for (let i = 0; i < signature.length; i++) if (signature[i] !== null && bytes[at + i] !== signature[i]) return false;
  return true;
}

const ascii = (s: string) => Array.from(s, (c) => c.charCodeAt(0));

/** Whether the bytes contain an ASCII string within the first `limit` bytes. */
function contains(bytes: Uint8Array, text: string, limit: number): boolean {
  const needle = ascii(text);
  const end = Math.min(bytes.length, limit) - needle.length;
  outer: for (let i = 0; i <= end; i++) {
    for (let j = 0; j < needle.length; j++) if (bytes[i + j] !== needle[j]) continue outer;
    return true;
  }
  return false;
}

/** One sentence naming a file that is not a scan, or null when it may be one. */
export function foreignFile(source: ScanSource): string | null {
  const b = source.bytes;
  if (startsWith(b, [0x89, 0x50, 0x4e, 0x47])) return image("PNG");
  if (startsWith(b, [0xff, 0xd8, 0xff])) return image("JPEG");
  if (startsWith(b, ascii("GIF8"))) return image("GIF");
  if (startsWith(b, ascii("BM")) && b.length > 26 && b[14] >= 12 && b[15] === 0 && b[16] === 0) return image("BMP");
  if (startsWith(b, ascii("RIFF")) && startsWith(b, ascii("WEBP"), 8)) return image("WebP");
  if (startsWith(b, [0x49, 0x49, 0x2a, 0x00]) || startsWith(b, [0x4d, 0x4d, 0x00, 0x2a]) || startsWith(b, [0x49, 0x49, 0x2b, 0x00])) {
    return "The file is a TIFF image, which may be a 2-D detector frame; integrate it to a 2θ scan (angle against intensity) and upload that.";
  }
  if (startsWith(b, ascii("%PDF")))
    return "The file is a PDF document, not a scan; upload the measured data file (for example two-column text of 2θ and intensity).";
  if (startsWith(b, [0x50, 0x4b, 0x03, 0x04]) || startsWith(b, [0x50, 0x4b, 0x05, 0x06])) return zipSentence(b);
  if (startsWith(b, [0xd0, 0xcf, 0x11, 0xe0, 0xa1, 0xb1, 0x1a, 0xe1])) {
    return "The file is an old Microsoft Office document (binary .xls or .doc), not a scan; if it is a spreadsheet, save the sheet as CSV and upload that.";
  }
  if (startsWith(b, [0x1f, 0x8b])) return "The file is a gzip archive (binary), not a scan; unpack it and upload the scan file inside.";
  if (startsWith(b, [0x37, 0x7a, 0xbc, 0xaf, 0x27, 0x1c])) return "The file is a 7z archive (binary), not a scan; unpack it and upload the scan file inside.";
  if (startsWith(b, ascii("Rar!"))) return "The file is a RAR archive (binary), not a scan; unpack it and upload the scan file inside.";
  if (startsWith(b, ascii("BZh"))) return "The file is a bzip2 archive (binary), not a scan; unpack it and upload the scan file inside.";
  if ((startsWith(b, ascii("MZ")) && b.length >= 64 && b.subarray(2, 64).includes(0)) || startsWith(b, [0x7f, 0x45, 0x4c, 0x46]) || isMachO(b)) {
    return "The file is an executable program, not a scan; upload the measured data file instead.";
  }
  const head = textHead(source);
  if (/^INS\s+(BANK|DTYPE|HTYPE|\d+\s+[A-Z])/m.test(head) && !/^BANK\s/m.test(head)) {
    return "The file is a GSAS instrument parameter file, not a scan; upload the data file it belongs with (the one with BANK lines).";
  }
  if (/^\s*(<!doctype html|<html[\s>])/i.test(head))
    return "The file is a web page (HTML), not a scan; save the data itself (for example as two-column text) and upload that.";
  if (/^\s*[[{]/.test(head) && looksLikeJson(source)) {
    return "The file is JSON data, not a scan format Diffractory reads; export the scan as two-column text or CSV of 2θ and intensity.";
  }
  return null;
}

function image(kind: string): string {
  return `The file is a ${kind} image, not a scan; upload the measured data file (for example two-column text of 2θ and intensity), not a picture of it.`;
}

function zipSentence(b: Uint8Array): string {
  if (contains(b, "xl/", 65536)) {
    return "The file is an Excel spreadsheet (.xlsx, a binary ZIP container), not a scan; save the sheet as CSV and upload that.";
  }
  if (contains(b, "mimetypeapplication/vnd.oasis.opendocument.spreadsheet", 200)) {
    return "The file is an OpenDocument spreadsheet (.ods, a binary ZIP container), not a scan; save the sheet as CSV and upload that.";
  }
  if (contains(b, "word/", 65536)) return "The file is a Word document (.docx, a binary ZIP container), not a scan; upload the measured data file instead.";
  if (contains(b, "mimetypeapplication/vnd.oasis.opendocument", 200)) {
    return "The file is an OpenDocument file (a binary ZIP container), not a scan; upload the measured data file instead.";
  }
  return "The file is a ZIP archive (binary), not a scan; unpack it and upload the scan file inside.";
}

function isMachO(b: Uint8Array): boolean {
  const magic = [
    [0xfe, 0xed, 0xfa, 0xce],
    [0xfe, 0xed, 0xfa, 0xcf],
    [0xce, 0xfa, 0xed, 0xfe],
    [0xcf, 0xfa, 0xed, 0xfe],
  ];
  return magic.some((m) => startsWith(b, m));
}

/** The opening text, from the bytes when they are plain ASCII/UTF-8 (no decoding of a large file for this). */
function textHead(source: ScanSource): string {
  const b = source.bytes;
  const n = Math.min(b.length, 512);
  let s = "";
  for (let i = 0; i < n; i++) s += String.fromCharCode(b[i]);
  return s.replace(/^\u00ef\u00bb\u00bf/, "");
}

function looksLikeJson(source: ScanSource): boolean {
  const text = source.text().trim();
  if (!(text.startsWith("{") && text.endsWith("}")) && !(text.startsWith("[") && text.endsWith("]"))) return false;
  // A bracketed list of numbers is not a scan either, but a quoted key makes it plainly JSON.
  return /^[[{]\s*("|\[|\{)/.test(text);
}

/** The sentence for a binary file that no reader claims, listing the formats read (the registry's labels). */
export function unknownBinary(formats: string[]): string {
  return `The file is binary and in no scan format Diffractory reads; it reads ${formats.join(", ")}.`;
}
