// Money as integer minor units with a currency code: parsing what people type and showing it back.
import { DEFAULT_LOCALE, formatterFor, type SupportedLocale } from "~/domain/locale";

/** Currencies a lab may price in; all have two decimal places (ISO 4217 minor unit 2). */
export const CURRENCIES = ["EUR", "USD", "GBP", "CHF", "NOK", "SEK", "DKK", "CAD", "AUD"] as const;

const MAJOR = /^\d{1,9}(?:[.,]\d{1,2})?$/;

/** The largest single amount a person may type (10,000,000.00): money columns are 32-bit integers of minor units. */
export const MAX_AMOUNT_MINOR = 1_000_000_000;
export const MAX_AMOUNT_TEXT = "10,000,000.00";

/** "180.00" or "180,5" → 18000 / 18050 minor units; null when the text is not a plain amount. */
export function toMinorUnits(text: string): number | null {
  const t = text.trim();
  if (!MAJOR.test(t)) return null;
  const [whole, fraction = ""] = t.split(/[.,]/);
  // Integer arithmetic only: 0.1 + 0.2 must never reach the ledger.
  return Number(whole) * 100 + Number(fraction.padEnd(2, "0"));
}

/** 18000 → "180.00", for form fields. */
export function toMajorText(minor: number): string {
  return `${Math.trunc(minor / 100)}.${String(Math.abs(minor) % 100).padStart(2, "0")}`;
}

/** 18000, "EUR" → "€180.00": text without a viewer (e-mails, exports) in the default locale; screens use useFormat(). */
export function formatMoney(minor: number, currency: string, locale: SupportedLocale = DEFAULT_LOCALE): string {
  return formatterFor(locale).money(minor, currency);
}

/** The platform fee of an amount: basis points of the order, rounded to the nearest minor unit. */
export function platformFee(amountMinor: number, bps: number) {
  return Math.round((amountMinor * bps) / 10_000);
}

/**
 * The platform fee on a part of what the client paid: charged on the net part only, never on the tax in it
 * (docs/design.md#tax-on-invoices). The part's tax is its share of the order's tax, rounded to the minor unit;
 * an order without tax gives exactly `platformFee(grossPartMinor, bps)`.
 */
export function platformFeeOnPart(grossPartMinor: number, order: { amountMinor: number; taxMinor: number; platformFeeBps: number }) {
  const tax = order.taxMinor > 0 && order.amountMinor > 0 ? Math.round((grossPartMinor * order.taxMinor) / order.amountMinor) : 0;
  return platformFee(grossPartMinor - tax, order.platformFeeBps);
}
