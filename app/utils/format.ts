// Money and dates for display, in the viewer's locale (integer minor units in, text out).

const FRACTION_DIGITS: Record<string, number> = { JPY: 0, KRW: 0 };

export function formatMoney(minor: number, currency: string, locale?: string) {
  const digits = FRACTION_DIGITS[currency] ?? 2;
  return new Intl.NumberFormat(locale, { style: "currency", currency, minimumFractionDigits: digits, maximumFractionDigits: digits }).format(minor / 10 ** digits);
}

export function formatDate(value: string | Date, locale?: string) {
  return new Intl.DateTimeFormat(locale, { dateStyle: "medium" }).format(new Date(value));
}
