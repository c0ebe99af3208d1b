// Which tax an invoice carries (docs/design.md#tax-on-invoices): the plain rules of Council Directive 2006/112/EC
// for services between businesses, applied to the seller's and the buyer's billing country and VAT number. They
// cover the usual cases of a lab selling measurements; anything unusual (an exempt seller, a special scheme) is for
// the parties' tax advisers and local law, which the invoice screens say.
import type { TaxTreatment } from "~/domain/invoice-document";
import { checkTaxId, vatPrefixOf } from "~/domain/tax-id";

/**
 * The standard VAT rate of each member state in basis points, by ISO country code. From the European
 * Commission's table "VAT rates applied in the Member States of the European Union" as remembered for
 * 1 January 2026 (from memory: check against the current table before relying on it). Reduced rates do not
 * apply to laboratory services.
 */
export const EU_STANDARD_VAT_BPS: Readonly<Record<string, number>> = {
  AT: 2000,
  BE: 2100,
  BG: 2000,
  CY: 1900,
  CZ: 2100,
  DE: 1900,
  DK: 2500,
  EE: 2400,
  ES: 2100,
  FI: 2550,
  FR: 2000,
  GR: 2400,
  HR: 2500,
  HU: 2700,
  IE: 2300,
  IT: 2200,
  LT: 2100,
  LU: 1700,
  LV: 2100,
  MT: 1800,
  NL: 2100,
  PL: 2300,
  PT: 2300,
  RO: 2100,
  SE: 2500,
  SI: 2200,
  SK: 2300,
};

export const isEuMemberState = (country: string | null | undefined) => Boolean(country && country.toUpperCase() in EU_STANDARD_VAT_BPS);

export interface TaxParty {
  /** ISO code of the billing address's country; null when the profile has no billing address. */
  country: string | null;
  taxId: string | null;
}

export interface TaxDecision {
  treatment: TaxTreatment;
  rateBps: number;
  /** The sentences the invoice must carry for this treatment. */
  notes: string[];
}

/** A VAT number in the format of an EU member state (the buyer's proof of acting as a business there). */
function euVatNumber(party: TaxParty): boolean {
  if (!party.country || !party.taxId || !isEuMemberState(party.country)) return false;
  const checked = checkTaxId(party.country, party.taxId);
  return checked.ok && checked.value.slice(0, 2) === vatPrefixOf(party.country);
}

/**
 * The tax treatment of a lab's service to a client:
 * - a seller without an EU VAT number adds no VAT (its own country's rules apply);
 * - a buyer established outside the EU: the place of supply is the buyer's (Art. 44), no EU VAT;
 * - a buyer in the seller's member state: the seller's standard rate;
 * - a buyer with a VAT number of another member state: reverse charge, the buyer accounts for the VAT
 *   (Art. 44 and Art. 196), and the invoice says "Reverse charge" (Art. 226(11a));
 * - a buyer in another member state without a VAT number: treated as a non-business customer, the seller's
 *   rate (Art. 45).
 */
export function decideTax(seller: TaxParty, buyer: TaxParty): TaxDecision {
  if (!euVatNumber(seller) || !seller.country) return { treatment: "no_vat_seller", rateBps: 0, notes: TREATMENT_NOTES.no_vat_seller };
  const sellerCountry = seller.country.toUpperCase();
  const rateBps = EU_STANDARD_VAT_BPS[sellerCountry];
  if (buyer.country && !isEuMemberState(buyer.country)) return { treatment: "outside_eu", rateBps: 0, notes: TREATMENT_NOTES.outside_eu };
  if (buyer.country && buyer.country.toUpperCase() !== sellerCountry && euVatNumber(buyer)) {
    return { treatment: "reverse_charge", rateBps: 0, notes: TREATMENT_NOTES.reverse_charge };
  }
  return { treatment: "domestic", rateBps, notes: TREATMENT_NOTES.domestic };
}

/** The sentences an invoice carries for each treatment (Art. 226(11) and (11a)); the same whenever it is issued. */
export const TREATMENT_NOTES: Readonly<Record<TaxTreatment, string[]>> = {
  no_vat_seller: ["No VAT is charged: the seller has no VAT number in the European Union. Any tax due follows the local law of the seller and the buyer."],
  outside_eu: ["Not subject to EU VAT: the buyer is established outside the European Union (Council Directive 2006/112/EC, Article 44)."],
  reverse_charge: ["Reverse charge", "The buyer accounts for the VAT (Council Directive 2006/112/EC, Articles 44 and 196)."],
  domestic: [],
};

/** The tax on a net amount at a rate, rounded half away from zero to the minor unit (common practice). */
export function taxOn(netMinor: number, rateBps: number): number {
  const exact = (netMinor * rateBps) / 10_000;
  return Math.sign(exact) * Math.round(Math.abs(exact));
}

/** 2100 → "21 %", 2550 → "25.5 %". */
export const ratePercent = (bps: number) => `${(bps / 100).toLocaleString("en-GB", { maximumFractionDigits: 2 })} %`;

/** What a quote card says about the tax the order will carry, in the words of the treatment; `money` formats minor units. */
export function taxLineText(decision: Pick<TaxDecision, "treatment" | "rateBps">, taxMinor: number, money: (minor: number) => string): string {
  switch (decision.treatment) {
    case "domestic":
      return `plus VAT ${ratePercent(decision.rateBps)}: ${money(taxMinor)}`;
    case "reverse_charge":
      return "Reverse charge: no VAT added; your organisation accounts for it.";
    case "outside_eu":
      return "No EU VAT added: your organisation is established outside the European Union.";
    case "no_vat_seller":
      return "No VAT added: the lab has no VAT number in the European Union.";
  }
}
