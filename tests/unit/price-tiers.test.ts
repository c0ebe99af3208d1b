// Price tiers by client kind (docs/design.md#price-tiers): which prices a client gets, how a tier lies over the base
// list, and the price-list form's tier fields. The rule itself (confirmed kind → its tier, else the base list) is the
// product's own; the amounts are invented.
import { describe, expect, it } from "vitest";
import { PriceListSchema, tiersFromInput, tiersToForm } from "~/domain/price-list";
import { applyTier, chooseTier, pricesForClient, tierHasPrices, tiersToShow } from "~/domain/price-tiers";

const base = {
  currency: "EUR",
  perSampleMinor: { powder_reflection: 18_000, thin_film: 30_000 },
  perInstrumentHourMinor: 9_000,
  samplePreparationMinor: 1_500,
  tiers: {
    academic: { perSampleMinor: { powder_reflection: 9_000 }, perInstrumentHourMinor: 4_500 },
    non_profit: { perSampleMinor: { thin_film: 25_000 } },
  },
};
const confirmed = (kind: string) => ({ clientKind: kind, clientKindConfirmedAt: new Date("2026-11-02T10:00:00Z") });
const stated = (kind: string) => ({ clientKind: kind, clientKindConfirmedAt: null });

describe("chooseTier", () => {
  it("uses the tier of a confirmed kind", () => {
    const c = chooseTier(base, confirmed("academic"));
    expect(c).toMatchObject({ tier: "academic", statedKind: "academic", confirmed: true });
    expect(c.note).toContain("academic prices");
  });

  it("gives an unconfirmed kind the base list and says why", () => {
    const c = chooseTier(base, stated("academic"));
    expect(c).toMatchObject({ tier: null, statedKind: "academic", confirmed: false });
    expect(c.note).toContain("not confirmed");
  });

  it("gives a client with no kind, or an unknown one, the base list", () => {
    expect(chooseTier(base, { clientKind: null, clientKindConfirmedAt: null })).toMatchObject({ tier: null, statedKind: null, confirmed: false });
    expect(chooseTier(base, null).tier).toBeNull();
    // A kind the product does not know is treated as none, even if a date stands beside it.
    expect(chooseTier(base, confirmed("government")).tier).toBeNull();
  });

  it("falls back to the base list when the lab set no prices for the confirmed kind", () => {
    const c = chooseTier(base, confirmed("industry"));
    expect(c).toMatchObject({ tier: null, statedKind: "industry", confirmed: true });
    expect(c.note).toContain("no industry prices");
    // An empty tier object counts as no tier.
    expect(chooseTier({ ...base, tiers: { industry: { perSampleMinor: {} } } }, confirmed("industry")).tier).toBeNull();
  });

  it("accepts the confirmation date as text (as a loader sends it)", () => {
    expect(chooseTier(base, { clientKind: "non_profit", clientKindConfirmedAt: "2026-11-02T10:00:00.000Z" }).tier).toBe("non_profit");
  });
});

describe("applyTier", () => {
  it("lays the tier's prices over the base ones and keeps the rest", () => {
    const academic = applyTier(base, "academic");
    expect(academic.perSampleMinor).toEqual({ powder_reflection: 9_000, thin_film: 30_000 });
    expect(academic.perInstrumentHourMinor).toBe(4_500);
    expect(academic.samplePreparationMinor).toBe(1_500);
    const nonProfit = applyTier(base, "non_profit");
    expect(nonProfit.perSampleMinor).toEqual({ powder_reflection: 18_000, thin_film: 25_000 });
    expect(nonProfit.perInstrumentHourMinor).toBe(9_000);
  });

  it("never offers a technique the base list leaves out", () => {
    const odd = { ...base, tiers: { academic: { perSampleMinor: { single_crystal: 5_000 } } } };
    expect((applyTier(odd, "academic").perSampleMinor as Partial<Record<string, number>>).single_crystal).toBeUndefined();
  });

  it("leaves the list as it is for the base tier and does not change the stored one", () => {
    expect(applyTier(base, null)).toBe(base);
    applyTier(base, "academic");
    expect(base.perSampleMinor.powder_reflection).toBe(18_000);
  });

  it("pricesForClient: confirmed academic pays the academic price, unconfirmed the base price", () => {
    expect(pricesForClient(base, confirmed("academic")).prices?.perSampleMinor.powder_reflection).toBe(9_000);
    expect(pricesForClient(base, stated("academic")).prices?.perSampleMinor.powder_reflection).toBe(18_000);
    expect(pricesForClient(null, confirmed("academic")).prices).toBeNull();
  });
});

describe("tiers for showing", () => {
  it("lists the tiers with prices in a fixed order", () => {
    expect(tiersToShow(base.tiers).map((t) => t.label)).toEqual(["Academic", "Non-profit"]);
    expect(tiersToShow(undefined)).toEqual([]);
    expect(tierHasPrices({ perInstrumentHourMinor: 0 })).toBe(true);
    expect(tierHasPrices({})).toBe(false);
  });
});

describe("the price-list form's tiers", () => {
  const form = {
    currency: "EUR",
    perSample: { powder_reflection: "180.00" },
    perExtraTemperaturePoint: "0",
    perInstrumentHour: "90.00",
    samplePreparation: "0",
    hazardousHandling: "0",
    rushMultiplier: 1.5,
    turnaroundDays: 10,
  };

  it("stores filled fields in minor units and leaves empty ones (and empty tiers) out", () => {
    const parsed = PriceListSchema.safeParse({
      ...form,
      tiers: { academic: { perSample: { powder_reflection: "90.00" }, perInstrumentHour: "45" }, industry: {} },
    });
    expect(parsed.success).toBe(true);
    if (!parsed.success) return;
    expect(tiersFromInput(parsed.data.tiers)).toEqual({ academic: { perSampleMinor: { powder_reflection: 9_000 }, perInstrumentHourMinor: 4_500 } });
    // Back to the form: major units as typed, empty where the base price applies.
    const back = tiersToForm(tiersFromInput(parsed.data.tiers));
    expect(back.academic).toEqual({ perSample: { powder_reflection: "90.00" }, perInstrumentHour: "45.00" });
    expect(back.industry).toEqual({ perSample: {}, perInstrumentHour: "" });
  });

  it("a form without tiers is still valid", () => {
    const parsed = PriceListSchema.safeParse(form);
    expect(parsed.success).toBe(true);
    if (parsed.success) expect(tiersFromInput(parsed.data.tiers)).toEqual({});
  });

  it("refuses a tier price for a technique the base list does not offer, with a sentence on that field", () => {
    const parsed = PriceListSchema.safeParse({ ...form, tiers: { non_profit: { perSample: { thin_film: "100.00" } } } });
    expect(parsed.success).toBe(false);
    const issue = parsed.error?.issues.find((i) => i.path.join(".") === "tiers.non_profit.perSample.thin_film");
    expect(issue?.message).toBe("Give a base price for thin film first; the non-profit prices only change techniques you offer.");
  });

  it("refuses bad amounts with the tier named", () => {
    const bad = (v: string) =>
      PriceListSchema.safeParse({ ...form, tiers: { academic: { perSample: { powder_reflection: v } } } }).error?.issues.find((i) => i.path[0] === "tiers")
        ?.message;
    expect(bad("-5")).toBe("Prices cannot be negative.");
    expect(bad("12.345")).toBe("Write an amount like 180.00 (digits, at most two decimals).");
    expect(bad("0")).toBe("The academic price per sample must be more than 0.");
    expect(bad("20000000")).toBe("The academic price per sample is at most 10,000,000.00.");
  });
});
