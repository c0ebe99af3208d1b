// Order numbers people read: the client organisation's prefix, the year and a gap-free sequence, e.g. HCW-2026-0042
// (docs/design.md#order-numbers). Pure rules only; taking the next number is app/models/orders/numbers.server.ts.

/** Small joining words that give no initial: "Institute of Materials" → IM. */
const JOINING_WORDS = new Set(["and", "of", "the", "for"]);

/** Latin letters that do not decompose under NFD, spelled in plain letters. */
const PLAIN: Record<string, string> = { ø: "o", Ø: "O", æ: "ae", Æ: "AE", œ: "oe", Œ: "OE", ß: "ss", ł: "l", Ł: "L", đ: "d", Đ: "D", þ: "th", Þ: "TH" };

const MAX_LETTERS = 4;

/**
 * The order-number prefix an organisation's name suggests: the initials of its words, A–Z only, two to four
 * letters ("Halvorsen Cathode Works" → HCW, "Ångström & Sons" → AS). A one-word name gives its first three
 * letters ("Kestrel" → KES); a name without Latin letters gives ORG.
 */
export function derivePrefix(name: string): string {
  const plain = name
    .normalize("NFD")
    .replace(/\p{M}/gu, "")
    .replace(/[øØæÆœŒßłŁđĐþÞ]/g, (c) => PLAIN[c] ?? c);
  const words = plain.split(/[^A-Za-z]+/).filter((w) => w && !JOINING_WORDS.has(w.toLowerCase()));
  const initials = words
    .map((w) => w[0])
    .join("")
    .toUpperCase()
    .slice(0, MAX_LETTERS);
  if (initials.length >= 2) return initials;
  const letters = words.join("").toUpperCase();
  return letters.length >= 2 ? letters.slice(0, 3) : "ORG";
}

/** The prefixes to try in turn when an earlier one is taken: HCW, HCW2, HCW3, … */
export function prefixCandidate(base: string, attempt: number): string {
  return attempt <= 1 ? base : `${base}${attempt}`;
}

/** HCW, 2026, 42 → "HCW-2026-0042"; the sequence has at least four digits and grows past 9999 without wrapping. */
export function formatOrderNumber(prefix: string, year: number, seq: number): string {
  return `${prefix}-${year}-${String(seq).padStart(4, "0")}`;
}

const NUMBER = /^([A-Z]{2,4}\d*)-(\d{4})-(\d{4,})$/;

/** "HCW-2026-0042" → its parts; null for anything else. */
export function parseOrderNumber(text: string): { prefix: string; year: number; seq: number } | null {
  const m = NUMBER.exec(text.trim());
  return m ? { prefix: m[1], year: Number(m[2]), seq: Number(m[3]) } : null;
}
