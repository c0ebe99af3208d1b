// A client's purchase-order number: what may be typed, and how it is kept (docs/design.md#purchase-orders).

/** The longest purchase-order number kept; procurement systems' numbers are far shorter. */
export const PO_NUMBER_MAX = 60;

const PO_NUMBER = /^[\p{L}\p{N}][\p{L}\p{N} ./_#-]*$/u;

/** The number as kept: trimmed, inner runs of spaces made one. */
export const normalisePurchaseOrderNumber = (text: string) => text.trim().replace(/\s+/g, " ");

/** One sentence when the typed number cannot be kept, else null (an empty field is the caller's to judge). */
export function purchaseOrderNumberProblem(text: string): string | null {
  const n = normalisePurchaseOrderNumber(text);
  if (n.length > PO_NUMBER_MAX) return `A purchase-order number has at most ${PO_NUMBER_MAX} characters.`;
  if (n && !PO_NUMBER.test(n)) return "A purchase-order number has letters, digits, spaces and . / _ # - only, starting with a letter or digit.";
  return null;
}

export const PO_REQUIRED = "Your organisation requires a purchase-order number on every order: enter the PO number to accept this quote. Nothing was accepted.";
