// Pieces the binary readers share: fixed-length text fields, float32 header values, ordinals for messages.
// The layouts themselves, with their sources, are in docs/scan-formats.md.

/** A fixed-length text field: bytes up to the first NUL, read as Windows-1252 (Latin-1), trimmed. */
export function fixedText(bytes: Uint8Array, offset: number, length: number): string {
  const end = Math.min(offset + length, bytes.length);
  let stop = offset;
  while (stop < end && bytes[stop] !== 0) stop++;
  return new TextDecoder("windows-1252").decode(bytes.subarray(offset, stop)).trim();
}

/**
 * A float32 header value as the decimal it was written from: float32 keeps about 7 significant digits, so
 * 10.02 stored is 10.020000457763672 read back; rounding to 7 digits gives 10.02 again (common practice).
 */
export function float32Value(view: DataView, offset: number): number {
  const v = view.getFloat32(offset, true);
  return Number.isFinite(v) ? Number(v.toPrecision(7)) : v;
}

/** A positive, finite value, else undefined (files write 0 or −1 for "not stated"). */
export function stated(value: number, max = Infinity): number | undefined {
  return Number.isFinite(value) && value > 0 && value < max ? value : undefined;
}

/** A wavelength in Å when it is a plausible X-ray line (0.1–10 Å), else undefined. */
export function statedWavelength(value: number): number | undefined {
  return Number.isFinite(value) && value > 0.1 && value < 10 ? value : undefined;
}

/** "1st", "2nd", "3rd", "4th", … for messages. */
export function ordinal(n: number): string {
  const tens = n % 100;
  if (tens >= 11 && tens <= 13) return `${n}th`;
  return `${n}${["th", "st", "nd", "rd"][n % 10] ?? "th"}`;
}

/** Whether the file starts with these ASCII characters. */
export function startsWith(bytes: Uint8Array, magic: string): boolean {
  if (bytes.length < magic.length) return false;
  for (let i = 0; i < magic.length; i++) if (bytes[i] !== magic.charCodeAt(i)) return false;
  return true;
}

/** Angles for a message: at most four decimals, no trailing zeros. */
export function angle(value: number): string {
  return String(Number(value.toFixed(4)));
}
