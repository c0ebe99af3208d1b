// EU VAT numbers checked offline by format, per member state and Northern Ireland (XI); other countries' tax ids
// kept as written. The formats are those of the European Commission's published VIES number formats (the "VAT
// number structure" table of the VIES FAQ), written from memory; the numbers below are made up to fit (or break)
// each format, none is a real registration.
import { describe, expect, it } from "vitest";
import { ProfileSchema } from "~/domain/profile-forms";
import { checkTaxId, COUNTRY_CODES, VAT_FORMATS, vatPrefixOf } from "~/domain/tax-id";

// country (ISO 3166-1), valid numbers (as people type them), invalid ones.
const CASES: [string, string[], string[]][] = [
  ["AT", ["ATU12345678", "U12345678"], ["AT12345678", "ATU1234567"]],
  ["BE", ["BE0123456789", "BE 1234.567.890"], ["BE2123456789", "BE012345678"]],
  ["BG", ["BG123456789", "BG1234567890"], ["BG12345678", "BG12345678901"]],
  ["CY", ["CY12345678X"], ["CY123456789", "CY1234567X"]],
  ["CZ", ["CZ12345678", "CZ123456789", "CZ1234567890"], ["CZ1234567", "CZ12345678901"]],
  ["DE", ["DE123456789", "de 123 456 789", "123456789"], ["DE12345678", "DE1234567890", "DE12345678A"]],
  ["DK", ["DK12345678"], ["DK1234567"]],
  ["EE", ["EE123456789"], ["EE12345678"]],
  ["GR", ["EL123456789", "123456789"], ["GR123456789", "EL12345678"]],
  ["ES", ["ESX1234567X", "ES12345678Z", "ESA1234567B", "ESB12345678"], ["ES123456789", "ES1234567"]],
  ["FI", ["FI12345678"], ["FI123456789"]],
  ["FR", ["FRXX123456789", "FR12345678901", "FR1A123456789"], ["FRIO123456789", "FR1234567890", "FRXX12345678"]],
  ["HR", ["HR12345678901"], ["HR1234567890"]],
  ["HU", ["HU12345678"], ["HU123456789"]],
  ["IE", ["IE1234567WA", "IE1234567T", "IE1A23456B"], ["IE12345678", "IE1234567Z"]],
  ["IT", ["IT12345678901"], ["IT1234567890"]],
  ["LT", ["LT123456789", "LT123456789012"], ["LT1234567890"]],
  ["LU", ["LU12345678"], ["LU1234567"]],
  ["LV", ["LV12345678901"], ["LV1234567890"]],
  ["MT", ["MT12345678"], ["MT123456789"]],
  ["NL", ["NL123456789B01", "NL 1234.56.789.B.01"], ["NL123456789", "NL123456789A01", "NL12345678B01"]],
  ["PL", ["PL1234567890", "PL 123-456-78-90"], ["PL123456789"]],
  ["PT", ["PT123456789", "PT 509 876 543"], ["PT12345678", "PT1234567890"]],
  ["RO", ["RO12", "RO1234567890"], ["RO0123456", "RO12345678901", "RO1"]],
  ["SE", ["SE123456789001"], ["SE123456789002", "SE1234567890"]],
  ["SI", ["SI12345678"], ["SI123456789"]],
  ["SK", ["SK1234567890"], ["SK123456789"]],
];

describe("EU VAT number formats", () => {
  it("cover the 27 member states and Northern Ireland", () => {
    // 27 member states (Greece under EL) and XI: the VIES list, from memory.
    expect(Object.keys(VAT_FORMATS).sort()).toHaveLength(28);
    expect(CASES).toHaveLength(27);
    for (const code of Object.keys(VAT_FORMATS)) expect(COUNTRY_CODES.includes(code === "EL" ? "GR" : code === "XI" ? "GB" : code)).toBe(true);
  });

  for (const [country, valid, invalid] of CASES) {
    const prefix = vatPrefixOf(country) ?? "";
    it(`${country}: accepts ${valid.join(", ")}`, () => {
      for (const v of valid) {
        const checked = checkTaxId(country, v);
        expect(checked, v).toMatchObject({ ok: true });
        if (checked.ok) expect(checked.value).toMatch(new RegExp(`^${prefix}[0-9A-Z+*]+$`));
      }
    });
    it(`${country}: refuses ${invalid.join(", ")} with one sentence naming the format`, () => {
      for (const v of invalid) {
        const checked = checkTaxId(country, v);
        expect(checked.ok, v).toBe(false);
        if (!checked.ok) expect(checked.error).toMatch(/VAT number is [A-Z]{2} followed by .+, e\.g\. [A-Z]{2}[0-9A-Z]+\.$/);
      }
    });
  }

  it("stores the number compact, prefix first", () => {
    expect(checkTaxId("DE", "de 123.456-789")).toEqual({ ok: true, value: "DE123456789" });
    expect(checkTaxId("NL", "123456789b01")).toEqual({ ok: true, value: "NL123456789B01" });
    expect(checkTaxId("GR", "123456789")).toEqual({ ok: true, value: "EL123456789" });
  });

  it("checks a number written with another member state's prefix against that state", () => {
    expect(checkTaxId("DE", "ATU12345678")).toEqual({ ok: true, value: "ATU12345678" });
    expect(checkTaxId("DE", "FR123")).toMatchObject({ ok: false });
  });

  it("checks Northern Ireland (XI) numbers from a United Kingdom address: 9 or 12 digits, GD or HA and 3 digits", () => {
    for (const v of ["XI123456789", "XI123456789012", "XIGD123", "XIHA499"]) expect(checkTaxId("GB", v), v).toMatchObject({ ok: true });
    for (const v of ["XI12345678", "XIAB123"]) expect(checkTaxId("GB", v).ok, v).toBe(false);
  });
});

describe("other countries' tax ids", () => {
  it("keep the text as written, trimmed", () => {
    expect(checkTaxId("NO", "  NO 912 345 678 MVA ")).toEqual({ ok: true, value: "NO 912 345 678 MVA" });
    expect(checkTaxId("GB", "GB 123 4567 89")).toEqual({ ok: true, value: "GB 123 4567 89" });
    expect(checkTaxId("CH", "CHE-123.456.789 MWST")).toEqual({ ok: true, value: "CHE-123.456.789 MWST" });
    expect(checkTaxId("US", "12-3456789")).toEqual({ ok: true, value: "12-3456789" });
  });
  it("refuse an over-long id in one sentence", () => {
    expect(checkTaxId("US", "9".repeat(41))).toEqual({ ok: false, error: "A tax id is at most 40 characters." });
  });
});

describe("the profile form", () => {
  const base = { line1: "Hauptstraße 1", city: "Musterstadt", country: "DE" };
  it("refuses a bad VAT number under the tax id field and keeps the rest", () => {
    const r = ProfileSchema.safeParse({ ...base, taxId: "DE1234" });
    expect(r.success).toBe(false);
    expect(r.error?.issues.map((i) => i.path.join("."))).toEqual(["taxId"]);
  });
  it("needs a billing country to check a tax id against", () => {
    const r = ProfileSchema.safeParse({ taxId: "DE123456789" });
    expect(r.error?.issues[0].message).toBe("Give the billing address first: the tax id is checked against its country.");
  });
  it("stores the VAT number in its compact form with the address", () => {
    const r = ProfileSchema.parse({ ...base, taxId: "de 123 456 789", invoiceEmail: "Rechnungen@Example.org" });
    expect(r).toMatchObject({ taxId: "DE123456789", invoiceEmail: "rechnungen@example.org", billingAddress: { line1: "Hauptstraße 1", country: "DE" } });
  });
  it("asks for the street and city of a half-given billing address", () => {
    const r = ProfileSchema.safeParse({ country: "FR" });
    expect(r.error?.issues.map((i) => i.path[0]).sort()).toEqual(["city", "line1"]);
  });
});
