// The fee invoice's arithmetic and the UTC months statements are cut by (app/domain/fee-invoice.ts).
import { describe, expect, it } from "vitest";
import { feeInvoiceDocument, isMonth, monthName, monthOf, monthRange, splitIncludedTax } from "~/domain/fee-invoice";
import { decideTax, taxOn } from "~/domain/vat";

describe("months in UTC", () => {
  it("runs from the first instant of the month to the first instant of the next, across a year's end", () => {
    expect(monthRange("2026-12")).toEqual({ from: new Date("2026-12-01T00:00:00Z"), to: new Date("2027-01-01T00:00:00Z") });
    // February of a leap year ends on the 29th (Gregorian calendar rule, common practice).
    expect(monthRange("2028-02").to).toEqual(new Date("2028-03-01T00:00:00Z"));
    expect(monthOf(new Date("2026-10-31T23:59:59.999Z"))).toBe("2026-10");
    expect(monthOf(new Date("2026-11-01T00:00:00Z"))).toBe("2026-11");
    expect(monthName("2026-11")).toBe("November 2026");
    expect(["2026-13", "2026-1", "26-01", ""].map(isMonth)).toEqual([false, false, false, false]);
  });
});

describe("a fee that includes VAT, split into net and tax", () => {
  it("keeps the whole to the minor unit and shares the net over the lines exactly", () => {
    // 21 %: the Dutch standard rate (European Commission VAT rates table, from memory as in app/domain/vat.ts).
    for (const fees of [[1560, 988, 2400], [1, 1, 1], [2667], [999_999, 3, 7, 11], [0, 5]]) {
      const split = splitIncludedTax(fees, 2100);
      const gross = fees.reduce((s, f) => s + f, 0);
      expect(split.netMinor + split.taxMinor).toBe(gross);
      expect(split.netMinors.reduce((s, n) => s + n, 0)).toBe(split.netMinor);
      // Net × rate, rounded, is the tax within one minor unit (the split rounds the net, not the tax).
      expect(Math.abs(split.taxMinor - taxOn(split.netMinor, 2100))).toBeLessThanOrEqual(1);
    }
    // €26.67 kept: net 26.67 / 1.21 = 22.04, VAT 4.63 (worked by hand).
    expect(splitIncludedTax([2667], 2100)).toEqual({ netMinors: [2204], netMinor: 2204, taxMinor: 463 });
    expect(splitIncludedTax([1560, 988], 0)).toEqual({ netMinors: [1560, 988], netMinor: 2548, taxMinor: 0 });
  });
});

describe("the fee invoice document", () => {
  const base = {
    number: "FEE-2026-0003",
    issuedAt: new Date("2026-12-01T00:15:00Z"),
    month: "2026-11",
    currency: "EUR",
    seller: { name: "Diffractory Marketplace B.V.", address: null, taxId: "NL864207531B01" },
    fees: [
      { orderNumber: "HCW-2026-0002", feeMinor: 988, at: new Date("2026-11-20T10:00:00Z") },
      { orderNumber: "HCW-2026-0001", feeMinor: 1560, at: new Date("2026-11-03T10:00:00Z") },
    ],
    formatMoney: (minor: number, currency: string) => `${currency} ${(minor / 100).toFixed(2)}`,
  };
  const platform = { country: "NL", taxId: "NL864207531B01" };

  it("a lab with a VAT number in another member state: reverse charge, the total is the fees kept (Directive 2006/112/EC Art. 196)", () => {
    const decision = decideTax(platform, { country: "DE", taxId: "DE123456789" });
    const doc = feeInvoiceDocument({ ...base, buyer: { name: "Lab GmbH", address: null, taxId: "DE123456789" }, decision });
    expect(doc.treatment).toBe("reverse_charge");
    expect(doc.totals).toEqual({ netMinor: 2548, taxMinor: 0, grossMinor: 2548 });
    expect(doc.notes).toContain("Reverse charge");
    // Lines in the order the fees were kept; the period and its last day as the date of supply (Art. 226(7)).
    expect(doc.lines.map((l) => l.description)).toEqual([
      "Platform fee on order HCW-2026-0001, kept from the payout of 3 November 2026",
      "Platform fee on order HCW-2026-0002, kept from the payout of 20 November 2026",
    ]);
    expect(doc.period).toBe("2026-11");
    expect(doc.supplyDate).toBe("2026-11-30");
    expect(doc.issueDate).toBe("2026-12-01");
    expect(doc.notes.at(-1)).toBe("Settled: the EUR 25.48 was kept from your payouts in November 2026; nothing is left to pay.");
  });

  it("a lab in the platform's member state: the VAT is inside the fees kept, never on top", () => {
    const decision = decideTax(platform, { country: "NL", taxId: null });
    const doc = feeInvoiceDocument({ ...base, buyer: { name: "Lab B.V.", address: null, taxId: null }, decision });
    expect(doc.treatment).toBe("domestic");
    expect(doc.totals.grossMinor).toBe(2548);
    expect(doc.totals.netMinor).toBe(Math.round((2548 * 10_000) / 12_100));
    expect(doc.taxPerRate).toEqual([{ taxRateBps: 2100, netMinor: doc.totals.netMinor, taxMinor: doc.totals.taxMinor }]);
    expect(doc.lines.every((l) => l.taxRateBps === 2100)).toBe(true);
  });
});
