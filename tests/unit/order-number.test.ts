// Order numbers people read: the prefix from an organisation's name and the printed form (docs/design.md#order-numbers).
// The expected values are the project's own rule worked by hand; the names are invented.
import { describe, expect, it } from "vitest";
import { derivePrefix, formatOrderNumber, parseOrderNumber, prefixCandidate } from "~/domain/order-number";

describe("the order-number prefix", () => {
  it("takes the initials of the name's words", () => {
    expect(derivePrefix("Halvorsen Cathode Works")).toBe("HCW");
    expect(derivePrefix("Pinecrest Solid Forms")).toBe("PSF");
    expect(derivePrefix("halvorsen cathode works")).toBe("HCW");
  });

  it("skips joining words and punctuation, and keeps at most four letters", () => {
    expect(derivePrefix("Institute of Materials and the Crystal Bench")).toBe("IMCB");
    expect(derivePrefix("Brightwater-Olsen Powder & Film Testing Group")).toBe("BOPF");
    expect(derivePrefix("  Nordvik   Ceramics, Ltd.  ")).toBe("NCL");
  });

  it("spells accented Latin letters plainly (Unicode NFD, common practice for ASCII identifiers)", () => {
    expect(derivePrefix("Ångström Øresund Labs")).toBe("AOL");
    expect(derivePrefix("Élan Materiaux Sàrl")).toBe("EMS");
  });

  it("gives a one-word name its first three letters and a name without Latin letters ORG", () => {
    expect(derivePrefix("Kestrel")).toBe("KES");
    expect(derivePrefix("Xu")).toBe("XU");
    expect(derivePrefix("株式会社")).toBe("ORG");
    expect(derivePrefix("")).toBe("ORG");
  });

  it("numbers the next candidates when a prefix is taken", () => {
    expect([1, 2, 3].map((n) => prefixCandidate("HCW", n))).toEqual(["HCW", "HCW2", "HCW3"]);
  });
});

describe("the printed order number", () => {
  it("is prefix, year and a four-digit sequence", () => {
    expect(formatOrderNumber("HCW", 2026, 42)).toBe("HCW-2026-0042");
    expect(formatOrderNumber("PSF", 2027, 1)).toBe("PSF-2027-0001");
    expect(formatOrderNumber("HCW2", 2026, 9999)).toBe("HCW2-2026-9999");
  });

  it("grows past 9999 instead of wrapping or cutting digits", () => {
    expect(formatOrderNumber("HCW", 2026, 10_000)).toBe("HCW-2026-10000");
  });

  it("reads back into its parts", () => {
    expect(parseOrderNumber("HCW-2026-0042")).toEqual({ prefix: "HCW", year: 2026, seq: 42 });
    expect(parseOrderNumber("HCW2-2026-10000")).toEqual({ prefix: "HCW2", year: 2026, seq: 10_000 });
    expect(parseOrderNumber("3f2a9c1e")).toBeNull();
    expect(parseOrderNumber("hcw-2026-0042")).toBeNull();
  });
});
