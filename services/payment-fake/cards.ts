// The provider's public test card numbers and what each one does, plus the checks a card form makes.

export interface CardInput {
  number: string;
  exp?: string;
  cvc?: string;
  name?: string;
}

export interface CardError {
  type: "card_error";
  code: string;
  decline_code?: string;
  message: string;
}

export interface CardVerdict {
  ok: boolean;
  brand: string;
  funding: string;
  last4: string;
  expMonth: number;
  expYear: number;
  error?: CardError;
}

const DECLINED = "Your card was declined.";

const CARDS: Record<string, { brand: string; funding: string; error?: Omit<CardError, "type"> }> = {
  "4242424242424242": { brand: "visa", funding: "credit" },
  "4000056655665556": { brand: "visa", funding: "debit" },
  "5555555555554444": { brand: "mastercard", funding: "credit" },
  "4000000000000002": { brand: "visa", funding: "credit", error: { code: "card_declined", decline_code: "generic_decline", message: DECLINED } },
  "4000000000009995": {
    brand: "visa",
    funding: "credit",
    error: { code: "card_declined", decline_code: "insufficient_funds", message: "Your card has insufficient funds." },
  },
  "4000000000009987": { brand: "visa", funding: "credit", error: { code: "card_declined", decline_code: "lost_card", message: DECLINED } },
  "4000000000000069": { brand: "visa", funding: "credit", error: { code: "expired_card", decline_code: "expired_card", message: "Your card has expired." } },
  "4000000000000127": {
    brand: "visa",
    funding: "credit",
    error: { code: "incorrect_cvc", decline_code: "incorrect_cvc", message: "Your card's security code is incorrect." },
  },
  "4000000000000119": {
    brand: "visa",
    funding: "credit",
    error: { code: "processing_error", decline_code: "processing_error", message: "An error occurred while processing your card. Try again in a little bit." },
  },
};

export const TEST_CARDS_HINT = [
  ["4242 4242 4242 4242", "succeeds"],
  ["4000 0000 0000 0002", "declined (generic)"],
  ["4000 0000 0000 9995", "declined (insufficient funds)"],
] as const;

/** Decides what a card does; expiry defaults to a future date and CVC to "123" when not given. */
export function checkCard(input: CardInput, at = new Date()): CardVerdict {
  const digits = input.number.replace(/[\s-]/g, "");
  const known = CARDS[digits];
  const exp = (input.exp ?? "12/34").trim();
  const m = /^(\d{1,2})\s*\/\s*(\d{2}|\d{4})$/.exec(exp);
  const expMonth = m ? Number(m[1]) : 0;
  const expYear = m ? (m[2].length === 2 ? 2000 + Number(m[2]) : Number(m[2])) : 0;
  const base = { brand: known?.brand ?? "unknown", funding: known?.funding ?? "unknown", last4: digits.slice(-4), expMonth, expYear };
  const fail = (code: string, message: string, decline_code?: string): CardVerdict => ({
    ...base,
    ok: false,
    error: { type: "card_error", code, ...(decline_code ? { decline_code } : {}), message },
  });

  if (!/^\d{12,19}$/.test(digits) || !known) return fail("incorrect_number", "Your card number is incorrect.");
  if (!m || expMonth < 1 || expMonth > 12) return fail("invalid_expiry_month", "Your card's expiration month is invalid.");
  const endOfMonth = new Date(Date.UTC(expYear, expMonth, 1));
  if (endOfMonth <= at) return fail("invalid_expiry_year", "Your card's expiration year is in the past.");
  if (!/^\d{3,4}$/.test((input.cvc ?? "123").trim())) return fail("invalid_cvc", "Your card's security code is invalid.");
  if (known.error) return fail(known.error.code, known.error.message, known.error.decline_code);
  return { ...base, ok: true };
}
