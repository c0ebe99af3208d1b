// The tax treatment of a lab's service (app/domain/vat.ts) against Council Directive 2006/112/EC on the common
// system of value added tax (OJ L 347, 11.12.2006): Art. 44 (place of supply of services to a taxable person: where
// the customer is established), Art. 45 (to a non-taxable person: where the supplier is established), Art. 196
// (the customer liable for the tax under Art. 44 when the supplier is not established in its member state) and
// Art. 226(11a) (the invoice then says "Reverse charge"). Rates: the European Commission's table "VAT rates applied
// in the Member States of the European Union" (from memory, as in app/domain/vat.ts).
import { describe, expect, it } from "vitest";
import { platformFeeOnPart } from "~/domain/money";
import { EU_STANDARD_VAT_BPS, decideTax, ratePercent, taxLineText, taxOn } from "~/domain/vat";

const pt = { country: "PT", taxId: "PT509876543" }; // a Portuguese lab, VAT number of the PT format (9 digits)
const ptClient = { country: "PT", taxId: "PT123456789" };
const deBusiness = { country: "DE", taxId: "DE123456789" };
const deNoNumber = { country: "DE", taxId: null };
const norway = { country: "NO", taxId: "NO 912 345 678 MVA" };
const usa = { country: "US", taxId: "12-3456789" };

describe("decideTax", () => {
  it("domestic: seller and buyer in the same member state pay the seller's standard rate (Art. 45 / Art. 44 in one state)", () => {
    const d = decideTax(pt, ptClient);
    expect(d.treatment).toBe("domestic");
    expect(d.rateBps).toBe(2300); // Portugal's standard rate 23 % (Commission's table, from memory)
    expect(d.notes).toEqual([]);
  });

  it("reverse charge: a business buyer with a VAT number in another member state accounts for the VAT (Art. 44, 196, 226(11a))", () => {
    const d = decideTax(pt, deBusiness);
    expect(d.treatment).toBe("reverse_charge");
    expect(d.rateBps).toBe(0);
    // Art. 226(11a): the mention "Reverse charge".
    expect(d.notes[0]).toBe("Reverse charge");
    expect(d.notes.join(" ")).toMatch(/Article[s]? 44 and 196/);
  });

  it("a buyer elsewhere in the EU without a VAT number is taxed where the seller is (Art. 45)", () => {
    const d = decideTax(pt, deNoNumber);
    expect(d.treatment).toBe("domestic");
    expect(d.rateBps).toBe(2300);
  });

  it("a VAT number that does not match the buyer's country is not proof of a business there (Art. 45 applies)", () => {
    expect(decideTax(pt, { country: "DE", taxId: "FR12345678901" }).treatment).toBe("domestic");
  });

  it("a buyer established outside the EU: the place of supply is the buyer's, no EU VAT (Art. 44)", () => {
    for (const buyer of [norway, usa, { country: "GB", taxId: "GB 123 4567 89" }]) {
      const d = decideTax(pt, buyer);
      expect(d.treatment).toBe("outside_eu");
      expect(d.rateBps).toBe(0);
      expect(d.notes.join(" ")).toMatch(/Article 44/);
    }
  });

  it("a seller without an EU VAT number adds no VAT (the directive does not reach it; its local law applies)", () => {
    expect(decideTax({ country: "CA", taxId: "123456789 RT0001" }, ptClient).treatment).toBe("no_vat_seller");
    expect(decideTax({ country: "PT", taxId: null }, ptClient).treatment).toBe("no_vat_seller");
    expect(decideTax({ country: null, taxId: null }, ptClient).rateBps).toBe(0);
  });

  it("every member state has a standard rate between 15 % and 27 % (Art. 97 minimum; Hungary's 27 % the highest)", () => {
    expect(Object.keys(EU_STANDARD_VAT_BPS)).toHaveLength(27);
    for (const bps of Object.values(EU_STANDARD_VAT_BPS)) expect(bps >= 1500 && bps <= 2700).toBe(true);
  });
});

describe("taxOn: rounding to the cent (common practice: half away from zero)", () => {
  it("rounds the exact tax to the minor unit", () => {
    expect(taxOn(19_500, 2300)).toBe(4485); // 195.00 × 23 % = 44.85 exactly
    expect(taxOn(1_050, 2100)).toBe(221); // 10.50 × 21 % = 2.205 → 2.21 (half up)
    expect(taxOn(1_049, 2100)).toBe(220); // 10.49 × 21 % = 2.2029 → 2.20
    expect(taxOn(333, 2550)).toBe(85); // 3.33 × 25.5 % = 0.84915 → 0.85
    expect(taxOn(-1_050, 2100)).toBe(-221); // a negative line rounds away from zero too
    expect(taxOn(19_500, 0)).toBe(0);
  });

  it("writes rates as people read them", () => {
    expect(ratePercent(2100)).toBe("21 %");
    expect(ratePercent(2550)).toBe("25.5 %");
  });

  it("says what is added on a quote", () => {
    const money = (m: number) => `€${(m / 100).toFixed(2)}`;
    expect(taxLineText({ treatment: "domestic", rateBps: 2100 }, 4095, money)).toBe("plus VAT 21 %: €40.95");
    expect(taxLineText({ treatment: "reverse_charge", rateBps: 0 }, 0, money)).toMatch(/^Reverse charge: no VAT added/);
  });
});

describe("the platform fee is on the net part only", () => {
  it("charges the fee on the amount without its tax share; an order without tax as before", () => {
    const withTax = platformFeeOnPart(24_200, { amountMinor: 24_200, taxMinor: 4_200, platformFeeBps: 800 });
    const withoutTax = platformFeeOnPart(19_500, { amountMinor: 19_500, taxMinor: 0, platformFeeBps: 800 });
    // Half of the paid amount: half of the net.
    expect(platformFeeOnPart(12_100, { amountMinor: 24_200, taxMinor: 4_200, platformFeeBps: 800 })).toBe(800);
    expect(withTax).toBe(1600); // 8 % of the net 200.00 in a paid 242.00 (21 % VAT), common practice
    expect(withoutTax).toBe(1560); // 8 % of 195.00
  });
});
