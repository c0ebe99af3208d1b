// A file as the readers see it: bytes, and text decoded once on first use.
import type { ScanSource } from "./types";

/**
 * Wraps an upload. Bytes are decoded as UTF-8 when valid, as UTF-16 when a byte-order mark (or the zero bytes of
 * plain ASCII written in UTF-16) says so, else as Latin-1 (Windows-1252, which keeps "°" and "Å" of older
 * instrument software). A leading byte-order mark is dropped from the text. A string is taken as the text itself.
 */
export function scanSource(input: string | Uint8Array, fileName?: string): ScanSource {
  if (typeof input === "string") {
    const text = input.charCodeAt(0) === 0xfeff ? input.slice(1) : input;
    let bytes: Uint8Array | undefined;
    return {
      get bytes() {
        bytes ??= new TextEncoder().encode(input);
        return bytes;
      },
      text: () => text,
      fileName,
    };
  }
  let text: string | undefined;
  return {
    bytes: input,
    text() {
      text ??= decode(input);
      return text;
    },
    fileName,
  };
}

export function decode(bytes: Uint8Array): string {
  if (bytes[0] === 0xef && bytes[1] === 0xbb && bytes[2] === 0xbf) return utf8(bytes.subarray(3)) ?? latin1(bytes.subarray(3));
  if (bytes[0] === 0xff && bytes[1] === 0xfe) return new TextDecoder("utf-16le").decode(bytes.subarray(2));
  if (bytes[0] === 0xfe && bytes[1] === 0xff) return new TextDecoder("utf-16be").decode(bytes.subarray(2));
  const wide = utf16WithoutMark(bytes);
  if (wide) return new TextDecoder(wide).decode(bytes);
  return utf8(bytes) ?? latin1(bytes);
}

function utf8(bytes: Uint8Array): string | null {
  try {
    return new TextDecoder("utf-8", { fatal: true }).decode(bytes);
  } catch {
    return null;
  }
}

function latin1(bytes: Uint8Array): string {
  return new TextDecoder("windows-1252").decode(bytes);
}

/** ASCII text saved as UTF-16 without a mark: every other byte of the head is zero and the rest printable. */
function utf16WithoutMark(bytes: Uint8Array): "utf-16le" | "utf-16be" | null {
  const n = Math.min(bytes.length, 512) & ~1;
  if (n < 8) return null;
  const printable = (c: number) => c === 9 || c === 10 || c === 13 || (c >= 32 && c < 127);
  let little = true;
  let big = true;
  for (let i = 0; i < n && (little || big); i += 2) {
    little &&= bytes[i + 1] === 0 && printable(bytes[i]);
    big &&= bytes[i] === 0 && printable(bytes[i + 1]);
  }
  return little ? "utf-16le" : big ? "utf-16be" : null;
}
