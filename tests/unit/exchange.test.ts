// Indicative currency conversion: exact decimal rates, integer minor units, one rounding half away from zero.
import { describe, expect, it } from "vitest";
import {
  convertMinor,
  convertMinorInverse,
  divideRounded,
  indicativeConversion,
  latestRateBetween,
  MINOR_DIGITS,
  parseRate,
  quoteCurrencyNotes,
  rateText,
  type RateRow,
} from "~/domain/exchange";
import { CURRENCIES } from "~/domain/money";

describe("minor units", () => {
  it("follows ISO 4217 list one for the currencies labs price in and for JPY and KWD", () => {
    // ISO 4217 list one (SIX, maintenance agency), "Minor unit" column: EUR, USD, GBP, CHF, NOK, SEK, DKK, CAD, AUD 2; JPY 0; KWD 3.
    for (const c of CURRENCIES) expect(MINOR_DIGITS[c], c).toBe(2);
    expect(MINOR_DIGITS.JPY).toBe(0);
    expect(MINOR_DIGITS.KWD).toBe(3);
  });
});

describe("rates as exact decimals", () => {
  it("reads plain positive decimals up to numeric(18, 8) and refuses the rest", () => {
    expect(parseRate("1.0850")).toBe(108_500_000n);
    expect(parseRate("1,085")).toBe(108_500_000n);
    expect(parseRate("160")).toBe(16_000_000_000n);
    expect(parseRate("0.00000001")).toBe(1n);
    for (const bad of ["", "0", "0.0", "-1.2", "1e3", "1.123456789", "12345678901", "abc", "1.2.3"]) expect(parseRate(bad), bad).toBeNull();
    expect(rateText(108_500_000n)).toBe("1.085");
    expect(rateText(16_000_000_000n)).toBe("160.0");
  });
});

describe("rounding half away from zero (common practice for money)", () => {
  it("sends ties away from zero, not to even", () => {
    expect(divideRounded(1n, 2n)).toBe(1n); // 0.5
    expect(divideRounded(3n, 2n)).toBe(2n); // 1.5
    expect(divideRounded(5n, 2n)).toBe(3n); // 2.5, where banker's rounding would give 2
    expect(divideRounded(-5n, 2n)).toBe(-3n);
    expect(divideRounded(-1n, 2n)).toBe(-1n);
    expect(divideRounded(7n, 3n)).toBe(2n); // 2.33…
    expect(divideRounded(8n, 3n)).toBe(3n); // 2.66…
  });
});

describe("conversion in minor units", () => {
  // Hand arithmetic (from memory of the definitions): one unit of base is `rate` units of quote.
  it("multiplies for a rate quoted from the amount's currency", () => {
    // 100.00 EUR at 1 EUR = 1.0850 USD → 108.50 USD.
    expect(convertMinor(10_000, "EUR", "USD", parseRate("1.0850")!)).toBe(10_850);
    // 0.01 EUR → 0.01085 USD → 0.01 USD.
    expect(convertMinor(1, "EUR", "USD", parseRate("1.0850")!)).toBe(1);
    // 12.34 EUR at 1 EUR = 160.5 JPY → 1980.57 JPY → 1981 JPY (no minor unit).
    expect(convertMinor(1234, "EUR", "JPY", parseRate("160.5")!)).toBe(1981);
    // 1.234 KWD at 1 KWD = 3.25 USD → 4.0105 USD → 4.01 USD.
    expect(convertMinor(1234, "KWD", "USD", parseRate("3.25")!)).toBe(401);
  });

  it("divides for a rate quoted the other way round", () => {
    // 210.00 USD at 1 EUR = 1.0850 USD → 193.5483… EUR → 193.55 EUR.
    expect(convertMinorInverse(21_000, "USD", "EUR", parseRate("1.0850")!)).toBe(19_355);
    // 1000 JPY at 1 EUR = 160 JPY → 6.25 EUR exactly.
    expect(convertMinorInverse(1000, "JPY", "EUR", parseRate("160")!)).toBe(625);
    // A tie in the last place: 0.25 USD at 1 EUR = 2 USD → 0.125 EUR → 0.13 EUR (half away from zero).
    expect(convertMinorInverse(25, "USD", "EUR", parseRate("2")!)).toBe(13);
  });
});

describe("the latest rate and the quote cards' notes", () => {
  const rates: RateRow[] = [
    { base: "EUR", quote: "USD", rate: "1.0700", asOf: "2026-11-02", source: "old", setAt: "2026-11-02T10:00:00Z" },
    { base: "EUR", quote: "USD", rate: "1.0850", asOf: "2026-12-01", source: "demo rate", setAt: "2026-12-01T09:00:00Z" },
    { base: "USD", quote: "EUR", rate: "0.9000", asOf: "2026-11-20", source: "older the other way", setAt: "2026-12-02T09:00:00Z" },
    { base: "GBP", quote: "EUR", rate: "1.1500", asOf: "2026-12-03", source: "unrelated", setAt: "2026-12-03T09:00:00Z" },
  ];

  it("takes the latest day in either direction", () => {
    expect(latestRateBetween(rates, "USD", "EUR")?.source).toBe("demo rate");
    expect(latestRateBetween(rates, "EUR", "CHF")).toBeNull();
  });

  it("says plainly which currency each quote is in and converts into the request's", () => {
    const notes = quoteCurrencyNotes(
      [
        { id: "a", currency: "EUR", totalMinor: 19_500 },
        { id: "b", currency: "USD", totalMinor: 21_000 },
      ],
      "EUR",
      rates,
    );
    expect(notes.a).toEqual({ note: "Quoted in EUR; the others in USD", conversion: null });
    expect(notes.b.note).toBe("Quoted in USD; the others in EUR");
    expect(notes.b.conversion).toMatchObject({ kind: "converted", amountMinor: 19_355, currency: "EUR" });
  });

  it("says that no rate is set instead of converting", () => {
    expect(indicativeConversion(5000, "CHF", "EUR", rates)).toEqual({ kind: "no_rate", from: "CHF", to: "EUR" });
  });

  it("adds nothing when every quote is in the request's currency", () => {
    const notes = quoteCurrencyNotes([{ id: "a", currency: "EUR", totalMinor: 1 }], "EUR", rates);
    expect(notes.a).toEqual({ note: null, conversion: null });
  });
});
