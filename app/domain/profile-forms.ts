// The forms of an organisation's profile: legal name, billing address, invoice e-mail, tax id, the client's kind
// and purchase-order rule, and the parcel addresses (receiving and shipping) with contact and opening hours.
import type { PostalAddress } from "~/db/schema";
import { z } from "zod";
import { checkTaxId, COUNTRY_CODES, countryName } from "./tax-id";

export const CLIENT_KINDS = ["academic", "non_profit", "industry"] as const;
export type ClientKind = (typeof CLIENT_KINDS)[number];
export const CLIENT_KIND_LABELS: Record<ClientKind, string> = { academic: "Academic", non_profit: "Non-profit", industry: "Industry" };

export const ADDRESS_KINDS = ["receiving", "shipping"] as const;
export type AddressKind = (typeof ADDRESS_KINDS)[number];
export const ADDRESS_KIND_LABELS: Record<AddressKind, string> = { receiving: "Receiving (parcels come here)", shipping: "Shipping (parcels leave from here)" };

const text = (what: string, max: number) =>
  z
    .string()
    .trim()
    .max(max, `${what} is at most ${max} characters.`)
    .optional()
    .transform((v) => v || null);
const required = (missing: string, what: string, max: number) =>
  z.string({ error: missing }).trim().min(1, missing).max(max, `${what} is at most ${max} characters.`);
const country = z.enum(COUNTRY_CODES as [string, ...string[]], { error: "Choose the country from the list." });

/** The address fields of one postal address, as the forms send them. */
const addressFields = {
  line1: text("The street and number", 200),
  line2: text("The second address line", 200),
  postcode: text("The postcode", 20),
  city: text("The city", 100),
  region: text("The region", 100),
  country: country.optional(),
};

export const ProfileSchema = z
  .object({
    legalName: text("The legal name", 200),
    ...addressFields,
    invoiceEmail: z
      .email("Write the invoice e-mail like accounts@example.org, or leave it empty.")
      .max(254, "An e-mail address is at most 254 characters.")
      .optional()
      .transform((v) => v?.toLowerCase() ?? null),
    taxId: text("A tax id", 40),
    clientKind: z.enum(CLIENT_KINDS, { error: "Choose academic, non-profit or industry." }).optional(),
    requiresPurchaseOrder: z.boolean().optional().default(false),
  })
  .superRefine((v, ctx) => {
    const anyAddress = v.line1 || v.line2 || v.postcode || v.city || v.region || v.country;
    if (anyAddress) {
      if (!v.line1) ctx.addIssue({ code: "custom", path: ["line1"], message: "Enter the street and number of the billing address." });
      if (!v.city) ctx.addIssue({ code: "custom", path: ["city"], message: "Enter the city of the billing address." });
      if (!v.country) ctx.addIssue({ code: "custom", path: ["country"], message: "Choose the country of the billing address." });
    }
    if (v.taxId) {
      if (!v.country) ctx.addIssue({ code: "custom", path: ["taxId"], message: "Give the billing address first: the tax id is checked against its country." });
      else {
        const checked = checkTaxId(v.country, v.taxId);
        if (!checked.ok) ctx.addIssue({ code: "custom", path: ["taxId"], message: checked.error });
      }
    }
  })
  .transform((v) => ({
    legalName: v.legalName,
    billingAddress:
      v.line1 && v.city && v.country ? { line1: v.line1, line2: v.line2, postcode: v.postcode, city: v.city, region: v.region, country: v.country } : null,
    invoiceEmail: v.invoiceEmail,
    taxId: v.taxId && v.country ? (checkTaxId(v.country, v.taxId) as { ok: true; value: string }).value : null,
    clientKind: v.clientKind ?? null,
    requiresPurchaseOrder: v.requiresPurchaseOrder,
  }));
export type ProfileInput = z.infer<typeof ProfileSchema>;

export const AddressSchema = z
  .object({
    kind: z.enum(ADDRESS_KINDS, { error: "Choose whether parcels come to or leave from this address." }),
    label: required("Give the address a short name, e.g. Sample reception.", "The name", 100),
    line1: required("Enter the street and number.", "The street and number", 200),
    line2: text("The second address line", 200),
    postcode: text("The postcode", 20),
    city: required("Enter the city.", "The city", 100),
    region: text("The region", 100),
    country,
    contactName: text("The contact's name", 120),
    contactPhone: z
      .string()
      .trim()
      .max(40, "A phone number is at most 40 characters.")
      .regex(/^[+0-9 ()./-]*$/, "Write the phone number with digits, spaces and + ( ) - only, e.g. +47 555 01 234.")
      .optional()
      .transform((v) => v || null),
    openingHours: text("The opening hours", 200),
    isDefault: z.boolean().optional().default(false),
  })
  .transform((v) => ({
    kind: v.kind,
    label: v.label,
    address: { line1: v.line1, line2: v.line2, postcode: v.postcode, city: v.city, region: v.region, country: v.country },
    contactName: v.contactName ?? "",
    contactPhone: v.contactPhone ?? "",
    openingHours: v.openingHours ?? "",
    isDefault: v.isDefault,
  }));
export type AddressInput = z.infer<typeof AddressSchema>;

/** A postal address as lines for a label or a page, the country by its name. */
export function addressLines(a: PostalAddress): string[] {
  return [a.line1, a.line2, [a.postcode, a.city].filter(Boolean).join(" "), a.region, countryName(a.country)].filter((l): l is string => Boolean(l));
}
