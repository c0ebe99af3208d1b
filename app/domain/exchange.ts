// Indicative conversion of quotes between currencies at a rate an admin sets (docs/design.md#currencies). Pure:
// amounts stay integer minor units, rates are exact decimals scaled to integers, and every division rounds once,
// half away from zero.

/**
 * Decimal places of the minor unit per currency: ISO 4217, list one (SIX, the maintenance agency), column
 * "Minor unit". Every currency a lab may price in (app/domain/money.ts) has 2; JPY (0) and KWD (3) are listed so
 * the arithmetic stays right for currencies that do not.
 */
export const MINOR_DIGITS: Record<string, number> = {
  EUR: 2,
  USD: 2,
  GBP: 2,
  CHF: 2,
  NOK: 2,
  SEK: 2,
  DKK: 2,
  CAD: 2,
  AUD: 2,
  JPY: 0,
  KWD: 3,
};

/** Decimal places a rate is kept to: the exchange_rates.rate column is numeric(18, 8). */
export const RATE_DIGITS = 8;
const RATE_SCALE = 10n ** BigInt(RATE_DIGITS);
/** numeric(18, 8) leaves 10 digits before the point. */
const RATE_TEXT = /^(\d{1,10})(?:[.,](\d{1,8}))?$/;

export const minorDigitsOf = (currency: string) => MINOR_DIGITS[currency] ?? 2;

/** "1.0850" → 108500000n (the rate times 10^8); null for anything but a plain positive decimal within numeric(18, 8). */
export function parseRate(text: string): bigint | null {
  const m = RATE_TEXT.exec(text.trim());
  if (!m) return null;
  const scaled = BigInt(m[1]) * RATE_SCALE + BigInt((m[2] ?? "").padEnd(RATE_DIGITS, "0"));
  return scaled > 0n ? scaled : null;
}

/** 108500000n → "1.085": the rate as plain decimal text, trailing zeros dropped (at least one decimal kept). */
export function rateText(scaled: bigint): string {
  const whole = scaled / RATE_SCALE;
  const fraction = (scaled % RATE_SCALE).toString().padStart(RATE_DIGITS, "0").replace(/0+$/, "");
  return `${whole}.${fraction || "0"}`;
}

/**
 * n / d rounded to the nearest integer, a half away from zero ("common practice" for money: ties go to the larger
 * magnitude, so a conversion never favours one side by rounding toward zero). d must be positive.
 */
export function divideRounded(n: bigint, d: bigint): bigint {
  if (d <= 0n) throw new RangeError("divideRounded needs a positive divisor");
  const negative = n < 0n;
  const a = negative ? -n : n;
  const q = (a * 2n + d) / (d * 2n);
  return negative ? -q : q;
}

const pow10 = (n: number) => 10n ** BigInt(n);

/**
 * An amount in `from` (minor units) expressed in `to` (minor units), where one unit of `from` is `rate` units of
 * `to` (rate scaled by 10^8). One division, rounded half away from zero.
 */
export function convertMinor(amountMinor: number, from: string, to: string, rateScaled: bigint): number {
  const n = BigInt(amountMinor) * rateScaled * pow10(minorDigitsOf(to));
  const d = RATE_SCALE * pow10(minorDigitsOf(from));
  return Number(divideRounded(n, d));
}

/** The same conversion with a rate quoted the other way round: one unit of `to` is `rate` units of `from`. */
export function convertMinorInverse(amountMinor: number, from: string, to: string, rateScaled: bigint): number {
  const n = BigInt(amountMinor) * RATE_SCALE * pow10(minorDigitsOf(to));
  const d = rateScaled * pow10(minorDigitsOf(from));
  return Number(divideRounded(n, d));
}

/** A rate as the admin set it: one unit of `base` is `rate` units of `quote`, for the day `asOf` (YYYY-MM-DD). */
export interface RateRow {
  base: string;
  quote: string;
  rate: string;
  asOf: string;
  source: string;
  setAt?: Date | string;
}

/** The latest rate between two currencies in either direction (latest day first, then latest set), or null. */
export function latestRateBetween(rates: RateRow[], a: string, b: string): RateRow | null {
  let best: RateRow | null = null;
  for (const r of rates) {
    if (!((r.base === a && r.quote === b) || (r.base === b && r.quote === a))) continue;
    if (parseRate(r.rate) === null) continue;
    if (!best || r.asOf > best.asOf || (r.asOf === best.asOf && new Date(r.setAt ?? 0) > new Date(best.setAt ?? 0))) best = r;
  }
  return best;
}

export type Conversion = { kind: "converted"; amountMinor: number; currency: string; rate: RateRow } | { kind: "no_rate"; from: string; to: string };

/** An amount in `from` converted to `to` at the latest rate between them, or the fact that none is set. */
export function indicativeConversion(amountMinor: number, from: string, to: string, rates: RateRow[]): Conversion {
  const rate = latestRateBetween(rates, from, to);
  if (!rate) return { kind: "no_rate", from, to };
  const scaled = parseRate(rate.rate) as bigint;
  const amount = rate.base === from ? convertMinor(amountMinor, from, to, scaled) : convertMinorInverse(amountMinor, from, to, scaled);
  return { kind: "converted", amountMinor: amount, currency: to, rate };
}

/** What a quote card says about currency: the plain note when the quotes differ, and the conversion when it is not in the request's. */
export interface QuoteCurrencyNote {
  /** "Quoted in USD; the others in EUR", or null when every live quote is in the same currency. */
  note: string | null;
  /** Into the request's currency, when the quote is in another one. */
  conversion: Conversion | null;
}

/** The currency notes of quotes compared side by side, keyed by quote id. */
export function quoteCurrencyNotes(
  quotes: { id: string; currency: string; totalMinor: number }[],
  requestCurrency: string,
  rates: RateRow[],
): Record<string, QuoteCurrencyNote> {
  const currencies = [...new Set(quotes.map((q) => q.currency))];
  const mixed = currencies.length > 1;
  const notes: Record<string, QuoteCurrencyNote> = {};
  for (const q of quotes) {
    const others = currencies.filter((c) => c !== q.currency);
    notes[q.id] = {
      note: mixed ? `Quoted in ${q.currency}; the others in ${others.join(" and ")}` : null,
      conversion: q.currency === requestCurrency ? null : indicativeConversion(q.totalMinor, q.currency, requestCurrency, rates),
    };
  }
  return notes;
}
