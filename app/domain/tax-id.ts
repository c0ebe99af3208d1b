// Tax ids on an organisation's profile: an EU VAT number is checked offline by its format for the member state
// (the country prefix and the national pattern); any other country's tax id is kept as written, trimmed.
// The format says nothing about whether the number is registered: that only the member state's register knows.

/** ISO 3166-1 alpha-2 codes (the standard's list of officially assigned codes; written from memory). */
export const COUNTRY_CODES = (
  "AD AE AF AG AI AL AM AO AQ AR AS AT AU AW AX AZ BA BB BD BE BF BG BH BI BJ BL BM BN BO BQ BR BS BT BV BW BY BZ " +
  "CA CC CD CF CG CH CI CK CL CM CN CO CR CU CV CW CX CY CZ DE DJ DK DM DO DZ EC EE EG EH ER ES ET FI FJ FK FM FO FR " +
  "GA GB GD GE GF GG GH GI GL GM GN GP GQ GR GS GT GU GW GY HK HM HN HR HT HU ID IE IL IM IN IO IQ IR IS IT JE JM JO JP " +
  "KE KG KH KI KM KN KP KR KW KY KZ LA LB LC LI LK LR LS LT LU LV LY MA MC MD ME MF MG MH MK ML MM MN MO MP MQ MR MS MT " +
  "MU MV MW MX MY MZ NA NC NE NF NG NI NL NO NP NR NU NZ OM PA PE PF PG PH PK PL PM PN PR PS PT PW PY QA RE RO RS RU RW " +
  "SA SB SC SD SE SG SH SI SJ SK SL SM SN SO SR SS ST SV SX SY SZ TC TD TF TG TH TJ TK TL TM TN TO TR TT TV TW TZ UA UG " +
  "UM US UY UZ VA VC VE VG VI VN VU WF WS YE YT ZA ZM ZW"
).split(" ");

const regionNames = new Intl.DisplayNames(["en"], { type: "region", fallback: "code" });
/** A country's English name from its ISO code ("DE" → "Germany"); the code itself when unknown. */
export function countryName(code: string): string {
  try {
    return regionNames.of(code) ?? code;
  } catch {
    return code;
  }
}

interface VatFormat {
  /** The country's name in the refusal sentence ("a German VAT number"). */
  adjective: string;
  /** The national part after the prefix. */
  pattern: RegExp;
  /** The national part in words, for the refusal. */
  shape: string;
  /** A made-up number of the right shape (prefix included). */
  example: string;
}

/**
 * The VAT number formats of the 27 member states and Northern Ireland, keyed by the VAT prefix (Greece uses EL,
 * Northern Ireland XI). Source: the European Commission's published VIES number formats (the "VAT number
 * structure" table of the VIES FAQ), written here from memory; the national patterns are the states' own.
 */
export const VAT_FORMATS: Record<string, VatFormat> = {
  AT: { adjective: "An Austrian", pattern: /^U\d{8}$/, shape: "U followed by 8 digits", example: "ATU12345678" },
  BE: { adjective: "A Belgian", pattern: /^[01]\d{9}$/, shape: "10 digits starting with 0 or 1", example: "BE0123456789" },
  BG: { adjective: "A Bulgarian", pattern: /^\d{9,10}$/, shape: "9 or 10 digits", example: "BG123456789" },
  CY: { adjective: "A Cypriot", pattern: /^\d{8}[A-Z]$/, shape: "8 digits and a letter", example: "CY12345678X" },
  CZ: { adjective: "A Czech", pattern: /^\d{8,10}$/, shape: "8, 9 or 10 digits", example: "CZ12345678" },
  DE: { adjective: "A German", pattern: /^\d{9}$/, shape: "9 digits", example: "DE123456789" },
  DK: { adjective: "A Danish", pattern: /^\d{8}$/, shape: "8 digits", example: "DK12345678" },
  EE: { adjective: "An Estonian", pattern: /^\d{9}$/, shape: "9 digits", example: "EE123456789" },
  EL: { adjective: "A Greek", pattern: /^\d{9}$/, shape: "9 digits (the prefix is EL, not GR)", example: "EL123456789" },
  ES: {
    adjective: "A Spanish",
    // A letter or digit, 7 digits, a letter or digit; not digits at both ends.
    pattern: /^(?:[A-Z]\d{7}[A-Z0-9]|\d{8}[A-Z])$/,
    shape: "9 characters: 7 digits between a letter or digit at each end, at least one end a letter",
    example: "ESX1234567X",
  },
  FI: { adjective: "A Finnish", pattern: /^\d{8}$/, shape: "8 digits", example: "FI12345678" },
  // The two leading characters are digits or letters other than I and O.
  FR: { adjective: "A French", pattern: /^[0-9A-HJ-NP-Z]{2}\d{9}$/, shape: "2 digits or letters followed by 9 digits", example: "FRXX123456789" },
  HR: { adjective: "A Croatian", pattern: /^\d{11}$/, shape: "11 digits", example: "HR12345678901" },
  HU: { adjective: "A Hungarian", pattern: /^\d{8}$/, shape: "8 digits", example: "HU12345678" },
  IE: {
    adjective: "An Irish",
    pattern: /^(?:\d{7}[A-W][A-IW]?|\d[A-Z+*]\d{5}[A-W])$/,
    shape: "7 digits and 1 or 2 letters (or the older digit, letter, 5 digits, letter)",
    example: "IE1234567WA",
  },
  IT: { adjective: "An Italian", pattern: /^\d{11}$/, shape: "11 digits", example: "IT12345678901" },
  LT: { adjective: "A Lithuanian", pattern: /^(?:\d{9}|\d{12})$/, shape: "9 or 12 digits", example: "LT123456789" },
  LU: { adjective: "A Luxembourg", pattern: /^\d{8}$/, shape: "8 digits", example: "LU12345678" },
  LV: { adjective: "A Latvian", pattern: /^\d{11}$/, shape: "11 digits", example: "LV12345678901" },
  MT: { adjective: "A Maltese", pattern: /^\d{8}$/, shape: "8 digits", example: "MT12345678" },
  NL: { adjective: "A Dutch", pattern: /^\d{9}B\d{2}$/, shape: "9 digits, the letter B and 2 digits", example: "NL123456789B01" },
  PL: { adjective: "A Polish", pattern: /^\d{10}$/, shape: "10 digits", example: "PL1234567890" },
  PT: { adjective: "A Portuguese", pattern: /^\d{9}$/, shape: "9 digits", example: "PT123456789" },
  RO: { adjective: "A Romanian", pattern: /^[1-9]\d{1,9}$/, shape: "2 to 10 digits, not starting with 0", example: "RO1234567" },
  SE: { adjective: "A Swedish", pattern: /^\d{10}01$/, shape: "12 digits ending in 01", example: "SE123456789001" },
  SI: { adjective: "A Slovenian", pattern: /^\d{8}$/, shape: "8 digits", example: "SI12345678" },
  SK: { adjective: "A Slovak", pattern: /^\d{10}$/, shape: "10 digits", example: "SK1234567890" },
  XI: {
    adjective: "A Northern Ireland",
    pattern: /^(?:\d{9}|\d{12}|GD\d{3}|HA\d{3})$/,
    shape: "9 or 12 digits (or GD or HA and 3 digits)",
    example: "XI123456789",
  },
};

/** The VAT prefix of an ISO country code, for the member states (Greece is EL); undefined elsewhere. */
export function vatPrefixOf(country: string): string | undefined {
  const code = country.toUpperCase();
  if (code === "GR") return "EL";
  return code in VAT_FORMATS && code !== "XI" && code !== "EL" ? code : undefined;
}

export const TAX_ID_MAX_LENGTH = 40;

export type TaxIdCheck = { ok: true; value: string } | { ok: false; error: string };

/**
 * Checks a tax id against the billing country. A value starting with an EU VAT prefix (or written for a member
 * state without its prefix) is checked against that state's format and kept without spaces, dots or dashes, prefix
 * first; a Northern Ireland number (XI) is accepted from a GB address. Anything else is free text, trimmed.
 */
export function checkTaxId(country: string, raw: string): TaxIdCheck {
  const text = raw.trim();
  if (!text) return { ok: false, error: "Enter the tax id, or leave the field empty." };
  if (text.length > TAX_ID_MAX_LENGTH) return { ok: false, error: `A tax id is at most ${TAX_ID_MAX_LENGTH} characters.` };
  const compact = text.toUpperCase().replace(/[\s.\-/]/g, "");
  const written = compact.slice(0, 2);
  const home = vatPrefixOf(country);
  const prefix = written in VAT_FORMATS ? written : home;
  if (!prefix) return { ok: true, value: text };
  const format = VAT_FORMATS[prefix];
  const national = written === prefix ? compact.slice(2) : compact;
  if (!format.pattern.test(national)) {
    return { ok: false, error: `${format.adjective} VAT number is ${prefix} followed by ${format.shape}, e.g. ${format.example}.` };
  }
  return { ok: true, value: prefix + national };
}
