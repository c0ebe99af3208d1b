// The viewer's locale from Accept-Language (RFC 9110 §12.5.4 q-values) and the text of money and dates in it.
// Expected strings are the CLDR conventions as Node's ICU renders them (the browser tests check Chromium agrees).
import { describe, expect, it } from "vitest";
import { dayPatternOf, formatterFor, isoDayInLocale, negotiateLocale, parseLocaleDay, supportedLocale } from "~/domain/locale";

describe("negotiateLocale", () => {
  it("takes an exact supported tag, case-insensitively", () => {
    expect(negotiateLocale("de-DE")).toBe("de-DE");
    expect(negotiateLocale("en-us")).toBe("en-US");
  });
  it("orders by q-value and keeps header order on ties", () => {
    expect(negotiateLocale("fr-FR;q=0.5, de-DE;q=0.9")).toBe("de-DE");
    expect(negotiateLocale("nl-NL, de-DE")).toBe("nl-NL");
  });
  it("maps a bare language or an unsupported region to that language", () => {
    expect(negotiateLocale("de")).toBe("de-DE");
    expect(negotiateLocale("de-LI")).toBe("de-DE");
    expect(negotiateLocale("fr-CA")).toBe("fr-FR");
    expect(negotiateLocale("no")).toBe("nb-NO");
  });
  it("falls back to en-GB for nothing, wildcards, unknown languages, q=0 and junk", () => {
    for (const h of [null, "", "*", "xx-YY", "de-DE;q=0", "<script>", "x".repeat(2000)]) expect(negotiateLocale(h)).toBe("en-GB");
    expect(negotiateLocale("xx, en-US;q=0.1")).toBe("en-US");
  });
  it("accepts only supported locales back from loader data", () => {
    expect(supportedLocale("de-DE")).toBe("de-DE");
    expect(supportedLocale("tlh-KX")).toBe("en-GB");
    expect(supportedLocale(undefined)).toBe("en-GB");
  });
});

describe("formatterFor", () => {
  const at = "2026-05-12T14:03:00Z";
  it("writes money in the currency's style of each locale", () => {
    expect(formatterFor("en-GB").money(123450, "EUR")).toBe("€1,234.50");
    expect(formatterFor("en-US").money(123450, "USD")).toBe("$1,234.50");
    expect(formatterFor("de-DE").money(123450, "EUR")).toBe("1.234,50\u00a0€");
    expect(formatterFor("de-CH").money(123450, "CHF")).toBe("CHF\u00a01'234.50");
    expect(formatterFor("en-GB").money(-500, "GBP")).toBe("-£5.00");
    // A negated nil amount (a credit note's tax of 0) is written as zero, never "-€0.00" (common practice).
    expect(formatterFor("en-GB").money(-0, "EUR")).toBe("€0.00");
    expect(formatterFor("de-DE").money(-1 * 0, "EUR")).toBe("0,00\u00a0€");
  });
  it("writes days in the locale's order and times in UTC with the zone named", () => {
    expect(formatterFor("en-GB").date(at)).toBe("12 May 2026");
    expect(formatterFor("en-US").date(at)).toBe("May 12, 2026");
    expect(formatterFor("de-DE").date(at)).toBe("12.05.2026");
    expect(formatterFor("en-GB").dateTime(at)).toBe("12 May 2026, 14:03 UTC");
    expect(formatterFor("en-US").dateTime(at)).toBe("May 12, 2026, 2:03 PM UTC");
    expect(formatterFor("de-DE").dateTime(at)).toBe("12. Mai 2026, 14:03 UTC");
  });
  it("groups counts", () => {
    expect(formatterFor("en-GB").number(12345)).toBe("12,345");
    expect(formatterFor("de-DE").number(12345)).toBe("12.345");
  });
});

// The numeric day of each locale as CLDR writes it (common practice: day/month/year in Britain and most of Europe,
// month/day/year in the United States, day.month.year in German, year-month-day in Swedish as in ISO 8601).
describe("the date field's pattern and reading", () => {
  it("orders day, month and year as the locale does", () => {
    expect(dayPatternOf("en-GB")).toEqual({ order: ["day", "month", "year"], pattern: "DD/MM/YYYY", example: "30/06/2099" });
    expect(dayPatternOf("en-US")).toEqual({ order: ["month", "day", "year"], pattern: "MM/DD/YYYY", example: "06/30/2099" });
    expect(dayPatternOf("de-DE")).toEqual({ order: ["day", "month", "year"], pattern: "DD.MM.YYYY", example: "30.06.2099" });
    expect(dayPatternOf("sv-SE").order).toEqual(["year", "month", "day"]);
  });
  it("shows an ISO day in the locale's figures", () => {
    expect(isoDayInLocale("2026-03-07", "en-GB")).toBe("07/03/2026");
    expect(isoDayInLocale("2026-03-07", "en-US")).toBe("03/07/2026");
    expect(isoDayInLocale("2026-03-07", "de-DE")).toBe("07.03.2026");
    expect(isoDayInLocale("", "de-DE")).toBe("");
  });
  it("reads a typed day back into ISO, in the locale's order or as ISO itself", () => {
    expect(parseLocaleDay("07/03/2026", "en-GB")).toBe("2026-03-07");
    expect(parseLocaleDay("03/07/2026", "en-US")).toBe("2026-03-07");
    expect(parseLocaleDay("7.3.2026", "de-DE")).toBe("2026-03-07");
    expect(parseLocaleDay(" 2026-03-07 ", "en-US")).toBe("2026-03-07");
    expect(parseLocaleDay("2026-03-07", "de-DE")).toBe("2026-03-07");
  });
  it("refuses days that are not on the calendar, short years and words", () => {
    expect(parseLocaleDay("30/02/2031", "en-GB")).toBeNull();
    expect(parseLocaleDay("13/30/2026", "en-US")).toBeNull();
    expect(parseLocaleDay("07/03/26", "en-GB")).toBeNull();
    expect(parseLocaleDay("next Tuesday", "en-GB")).toBeNull();
    expect(parseLocaleDay("", "en-GB")).toBeNull();
    // 2028 is a leap year, 2100 is not (Gregorian rule).
    expect(parseLocaleDay("29/02/2028", "en-GB")).toBe("2028-02-29");
    expect(parseLocaleDay("29/02/2100", "en-GB")).toBeNull();
  });
});
