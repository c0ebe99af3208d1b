// The demo organisations' profiles: invented legal names, billing addresses, tax ids of the right format for their
// countries (an EU VAT number for the Portuguese lab, other countries' ids as written there), invoice e-mails and
// parcel addresses with contact and opening hours. Every street, person and number here is invented. Idempotent:
// the profile fields are set again, an address is added only when the organisation has none of its kind.
import { and, eq } from "drizzle-orm";
import { db, schema } from "~/db/client.server";
import type { PostalAddress } from "~/db/schema";

interface DemoProfile {
  slug: string;
  legalName: string;
  billing: PostalAddress;
  taxId: string;
  invoiceEmail: string;
  clientKind?: "academic" | "non_profit" | "industry";
  /** The client's kind is confirmed by the demo admin. */
  confirmed?: boolean;
  parcels: { kind: "receiving" | "shipping"; label: string; address: PostalAddress; contactName: string; contactPhone: string; openingHours: string }[];
}

const PROFILES: DemoProfile[] = [
  {
    slug: "halvorsen-cathode-works",
    legalName: "Halvorsen Cathode Works AS",
    billing: { line1: "Fjordkanten 14", postcode: "9120", city: "Tromsvik", country: "NO" },
    // A Norwegian organisation number with the MVA suffix, as written there (Norway is not in the EU).
    taxId: "NO 912 345 678 MVA",
    invoiceEmail: "invoices@halvorsen.example",
    clientKind: "industry",
    confirmed: true,
    parcels: [
      {
        kind: "shipping",
        label: "Dispatch, building C",
        address: { line1: "Fjordkanten 14, building C", postcode: "9120", city: "Tromsvik", country: "NO" },
        contactName: "Tobias Rekdal",
        contactPhone: "+47 555 01 234",
        openingHours: "Mon–Fri 07:30–15:30",
      },
    ],
  },
  {
    slug: "pinecrest-solid-forms",
    legalName: "Pinecrest Solid Forms Ltd",
    billing: { line1: "7 Larchmere Row", postcode: "AV4 2QX", city: "Ashbourne Vale", country: "GB" },
    taxId: "GB 123 4567 89",
    invoiceEmail: "accounts@pinecrest.example",
    // Stated, not yet confirmed: the admin's users page offers the confirmation.
    clientKind: "industry",
    parcels: [
      {
        kind: "shipping",
        label: "Solid-form lab",
        address: { line1: "7 Larchmere Row, unit 3", postcode: "AV4 2QX", city: "Ashbourne Vale", country: "GB" },
        contactName: "Jonah Peverell",
        contactPhone: "+44 1632 960 118",
        openingHours: "Mon–Thu 09:00–17:00",
      },
    ],
  },
  {
    slug: "granite-ridge-characterisation",
    legalName: "Granite Ridge Characterisation Inc.",
    billing: { line1: "410 Quarrystone Avenue", postcode: "X0E 1B7", city: "Granite Falls", region: "Northwest Territories", country: "CA" },
    // A Canadian business number with its GST/HST program account, as written there.
    taxId: "123456789 RT0001",
    invoiceEmail: "billing@graniteridge.example",
    parcels: [
      {
        kind: "receiving",
        label: "Sample reception",
        address: { line1: "410 Quarrystone Avenue, loading bay 2", postcode: "X0E 1B7", city: "Granite Falls", region: "Northwest Territories", country: "CA" },
        contactName: "Priya Castellanos",
        contactPhone: "+1 867 555 0142",
        openingHours: "Mon–Fri 08:00–16:00, closed on public holidays",
      },
    ],
  },
  {
    slug: "lakeside-institute-x-ray-core",
    legalName: "Lakeside Institute of Materials Science",
    billing: { line1: "1200 Shoreline Drive", line2: "Research Finance Office", postcode: "55999", city: "Lakeside", region: "MN", country: "US" },
    // An employer identification number, as written there.
    taxId: "12-3456789",
    invoiceEmail: "xray-core-billing@lakeside.example",
    parcels: [
      {
        kind: "receiving",
        label: "X-ray core goods-in",
        address: { line1: "1200 Shoreline Drive, room B014", postcode: "55999", city: "Lakeside", region: "MN", country: "US" },
        contactName: "Dana Whitford",
        contactPhone: "+1 218 555 0107",
        openingHours: "Mon–Fri 09:00–15:00",
      },
    ],
  },
  {
    slug: "meridian-analytical",
    legalName: "Meridian Analytical, Lda.",
    billing: { line1: "Rua das Salinas Altas 88", postcode: "4999-012", city: "Porto Meridiano", country: "PT" },
    // PT followed by 9 digits: the Portuguese VAT number format (app/domain/tax-id.ts).
    taxId: "PT509876543",
    invoiceEmail: "faturas@meridian.example",
    parcels: [
      {
        kind: "receiving",
        label: "Receção de amostras",
        address: { line1: "Rua das Salinas Altas 88, piso 0", postcode: "4999-012", city: "Porto Meridiano", country: "PT" },
        contactName: "Tiago Amaral Sousa",
        contactPhone: "+351 255 000 417",
        openingHours: "Seg–Sex 09:00–17:00 (Mon–Fri)",
      },
    ],
  },
];

export async function seedDemoProfiles() {
  const [admin] = await db.select({ id: schema.users.id }).from(schema.users).where(eq(schema.users.email, "admin@diffractory.example"));
  for (const p of PROFILES) {
    const [org] = await db.select({ id: schema.organisations.id }).from(schema.organisations).where(eq(schema.organisations.slug, p.slug));
    if (!org) continue;
    await db
      .update(schema.organisations)
      .set({
        legalName: p.legalName,
        billingAddress: p.billing,
        taxId: p.taxId,
        invoiceEmail: p.invoiceEmail,
        ...(p.clientKind
          ? {
              clientKind: p.clientKind,
              clientKindConfirmedAt: p.confirmed ? new Date() : null,
              clientKindConfirmedBy: p.confirmed ? (admin?.id ?? null) : null,
            }
          : {}),
      })
      .where(eq(schema.organisations.id, org.id));
    for (const parcel of p.parcels) {
      const a = schema.organisationAddresses;
      const existing = await db
        .select({ id: a.id })
        .from(a)
        .where(and(eq(a.organisationId, org.id), eq(a.kind, parcel.kind)));
      if (existing.length === 0) await db.insert(a).values({ organisationId: org.id, ...parcel, isDefault: true });
    }
  }
  return { profiles: PROFILES.length };
}
