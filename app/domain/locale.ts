// The viewer's locale: negotiated from Accept-Language against the locales Diffractory formats for, and the
// formatters for money, dates and counts in it. The server and the browser use the same locale (it travels in the
// root loader data) and the same time zone (UTC, named on every time of day), so the text the server renders is
// the text hydration renders.

/** Locales whose number and date conventions the screens follow; the words stay English. */
export const SUPPORTED_LOCALES = [
  "en-GB",
  "en-US",
  "en-CA",
  "en-AU",
  "en-IE",
  "de-DE",
  "de-AT",
  "de-CH",
  "fr-FR",
  "fr-CH",
  "fr-BE",
  "it-IT",
  "it-CH",
  "es-ES",
  "nl-NL",
  "nl-BE",
  "sv-SE",
  "da-DK",
  "nb-NO",
  "fi-FI",
  "pl-PL",
  "pt-PT",
  "cs-CZ",
] as const;
export type SupportedLocale = (typeof SUPPORTED_LOCALES)[number];
export const DEFAULT_LOCALE: SupportedLocale = "en-GB";
/** Every date and time is shown in UTC, on the server and in the browser alike. */
export const DISPLAY_TIME_ZONE = "UTC";

const BY_LOWER = new Map<string, SupportedLocale>(SUPPORTED_LOCALES.map((l) => [l.toLowerCase(), l]));
/** A bare language ("de") maps to the first supported locale of that language ("de-DE"). */
const BY_LANGUAGE = new Map<string, SupportedLocale>();
for (const l of SUPPORTED_LOCALES) {
  const lang = l.slice(0, 2).toLowerCase();
  if (!BY_LANGUAGE.has(lang)) BY_LANGUAGE.set(lang, l);
}
// Norwegian is tagged "no" and "nn" as often as "nb".
BY_LANGUAGE.set("no", "nb-NO");
BY_LANGUAGE.set("nn", "nb-NO");

/**
 * The best supported locale for an Accept-Language header (RFC 9110 §12.5.4): ranges in order of their q-value
 * (ties keep header order), an exact tag first, then the language's first supported region; q=0 means "not this".
 */
export function negotiateLocale(header: string | null | undefined): SupportedLocale {
  if (!header || header.length > 1000) return DEFAULT_LOCALE;
  const ranges = header
    .split(",")
    .map((part, index) => {
      const [tag, ...params] = part.trim().split(";");
      const q = params.map((p) => /^\s*q\s*=\s*([01](?:\.\d{0,3})?)\s*$/i.exec(p)).find(Boolean);
      return { tag: tag.trim().toLowerCase().replace(/_/g, "-"), q: q ? Number(q[1]) : 1, index };
    })
    .filter((r) => r.q > 0 && /^[a-z]{1,8}(?:-[a-z0-9]{1,8})*$/.test(r.tag))
    .sort((a, b) => b.q - a.q || a.index - b.index);
  for (const { tag } of ranges) {
    const exact = BY_LOWER.get(tag);
    if (exact) return exact;
    const [lang, ...rest] = tag.split("-");
    // "de-LI" has no formats of its own here: German as spoken in Germany is closer than English.
    const region = rest.find((s) => /^[a-z]{2}$/.test(s));
    const sameRegion = region ? BY_LOWER.get(`${lang}-${region}`) : undefined;
    const byLanguage = sameRegion ?? BY_LANGUAGE.get(lang);
    if (byLanguage) return byLanguage;
  }
  return DEFAULT_LOCALE;
}

/** The locale itself when supported (e.g. from loader data), otherwise the default. */
export function supportedLocale(value: unknown): SupportedLocale {
  return typeof value === "string" && BY_LOWER.has(value.toLowerCase()) ? BY_LOWER.get(value.toLowerCase())! : DEFAULT_LOCALE;
}

export interface Formatter {
  locale: SupportedLocale;
  /** Integer minor units in the currency's own style: 123450 EUR → "€1,234.50" (en-GB), "1.234,50 €" (de-DE). */
  money(minor: number, currency: string): string;
  /** A calendar day: "12 May 2026" (en-GB), "May 12, 2026" (en-US), "12.05.2026" (de-DE). */
  date(value: string | Date | number): string;
  /** A moment, with its zone named: "12 May 2026, 14:03 UTC". */
  dateTime(value: string | Date | number): string;
  /** A count with the locale's grouping: 12345 → "12,345" / "12.345". */
  number(value: number): string;
}

const cache = new Map<SupportedLocale, Formatter>();

/** The formatters of a locale, built once and shared. */
export function formatterFor(locale: SupportedLocale = DEFAULT_LOCALE): Formatter {
  const kept = cache.get(locale);
  if (kept) return kept;
  const moneyFormats = new Map<string, Intl.NumberFormat>();
  const money = (currency: string) => {
    let f = moneyFormats.get(currency);
    if (!f) {
      // Every currency a lab may price in has two decimal places (app/domain/money.ts).
      f = new Intl.NumberFormat(locale, { style: "currency", currency, minimumFractionDigits: 2, maximumFractionDigits: 2 });
      moneyFormats.set(currency, f);
    }
    return f;
  };
  const day = new Intl.DateTimeFormat(locale, { dateStyle: "medium", timeZone: DISPLAY_TIME_ZONE });
  const moment = new Intl.DateTimeFormat(locale, {
    day: "numeric",
    month: "short",
    year: "numeric",
    hour: "numeric",
    minute: "2-digit",
    timeZone: DISPLAY_TIME_ZONE,
    timeZoneName: "short",
  });
  const count = new Intl.NumberFormat(locale);
  const formatter: Formatter = {
    locale,
    // Minor units are integers; dividing by 100 is exact enough for display of amounts below 2^53 / 100.
    // "+ 0" turns a negative zero (a credit note's nil tax, negated) into zero: Node and the browsers' ICU disagree
    // on "-€0.00", which broke hydration, and a nil amount has no sign.
    money: (minor, currency) => money(currency).format(minor / 100 + 0),
    date: (value) => day.format(new Date(value)),
    dateTime: (value) => moment.format(new Date(value)),
    number: (value) => count.format(value),
  };
  cache.set(locale, formatter);
  return formatter;
}
