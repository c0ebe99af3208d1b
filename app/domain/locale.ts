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

/** How a locale writes a calendar day in figures: the order of day, month and year and what stands between them. */
export interface DayPattern {
  order: ("day" | "month" | "year")[];
  /** The pattern people read beside the field: "DD/MM/YYYY" (en-GB), "MM/DD/YYYY" (en-US), "DD.MM.YYYY" (de-DE). */
  pattern: string;
  /** 30 June 2099 written that way, for the sentence that asks for a date again. */
  example: string;
}

const dayPatterns = new Map<SupportedLocale, DayPattern>();
const NUMERIC_DAY = { day: "2-digit", month: "2-digit", year: "numeric", timeZone: "UTC" } as const;

/** The locale's numeric day (CLDR's short date with a four-figure year), read from Intl so it matches the formatters. */
export function dayPatternOf(locale: SupportedLocale = DEFAULT_LOCALE): DayPattern {
  const kept = dayPatterns.get(locale);
  if (kept) return kept;
  const parts = new Intl.DateTimeFormat(locale, NUMERIC_DAY).formatToParts(new Date(Date.UTC(2099, 5, 30)));
  const order: DayPattern["order"] = [];
  let pattern = "";
  let example = "";
  for (const p of parts) {
    example += p.value;
    if (p.type === "day" || p.type === "month" || p.type === "year") {
      order.push(p.type);
      pattern += p.type === "day" ? "DD" : p.type === "month" ? "MM" : "YYYY";
    } else pattern += p.value;
  }
  const made = { order, pattern, example };
  dayPatterns.set(locale, made);
  return made;
}

const ISO_DAY = /^(\d{4})-(\d{2})-(\d{2})$/;

/** An ISO day (YYYY-MM-DD) in the locale's figures ("30/06/2099"); anything else is returned as it is. */
export function isoDayInLocale(iso: string | null | undefined, locale: SupportedLocale = DEFAULT_LOCALE): string {
  if (!iso) return "";
  const m = ISO_DAY.exec(iso);
  if (!m) return iso;
  return new Intl.DateTimeFormat(locale, NUMERIC_DAY).format(new Date(Date.UTC(Number(m[1]), Number(m[2]) - 1, Number(m[3]))));
}

/**
 * A day typed in the locale's figures ("30/06/2099", "06/30/2099", "30.6.2099") or as ISO ("2099-06-30") read
 * into ISO YYYY-MM-DD; null when it is not a real calendar day. A group of four figures first is always
 * year-month-day (ISO 8601), whatever the locale.
 */
export function parseLocaleDay(text: string, locale: SupportedLocale = DEFAULT_LOCALE): string | null {
  const groups = text
    .trim()
    .split(/[^0-9]+/)
    .filter(Boolean);
  if (groups.length !== 3) return null;
  let order = dayPatternOf(locale).order;
  if (groups[0].length === 4) order = ["year", "month", "day"];
  const value: Record<string, string> = {};
  order.forEach((k, i) => {
    value[k] = groups[i];
  });
  if (value.year?.length !== 4 || !value.month || value.month.length > 2 || !value.day || value.day.length > 2) return null;
  const [y, mo, d] = [Number(value.year), Number(value.month), Number(value.day)];
  const at = new Date(Date.UTC(y, mo - 1, d));
  if (y < 1000 || at.getUTCFullYear() !== y || at.getUTCMonth() !== mo - 1 || at.getUTCDate() !== d) return null;
  return `${value.year}-${String(mo).padStart(2, "0")}-${String(d).padStart(2, "0")}`;
}
