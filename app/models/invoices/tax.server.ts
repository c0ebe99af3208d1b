// The tax between a lab and a client, decided from their organisations' billing countries and tax ids
// (docs/design.md#tax-on-invoices): shown on the quote cards and fixed on the order when a quote is accepted.
import { inArray } from "drizzle-orm";
import { db, schema, type Tx } from "~/db/client.server";
import { decideTax, type TaxDecision, type TaxParty } from "~/domain/vat";

type Organisation = { billingAddress: { country?: string | null } | null; country: string | null; taxId: string | null };

/** An organisation as a party to the tax: its billing address's country (none without a billing address) and its tax id. */
export const taxPartyOf = (org: Organisation | undefined): TaxParty => ({
  country: org?.billingAddress?.country?.toUpperCase() ?? null,
  taxId: org?.taxId ?? null,
});

/** The treatment and rate for a lab's service to a client organisation. */
export async function decideTaxBetween(labId: string, clientOrganisationId: string, tx: Tx | typeof db = db): Promise<TaxDecision> {
  const rows = await tx
    .select({
      id: schema.organisations.id,
      billingAddress: schema.organisations.billingAddress,
      country: schema.organisations.country,
      taxId: schema.organisations.taxId,
    })
    .from(schema.organisations)
    .where(inArray(schema.organisations.id, [labId, clientOrganisationId]));
  const byId = new Map(rows.map((r) => [r.id, r]));
  return decideTax(taxPartyOf(byId.get(labId)), taxPartyOf(byId.get(clientOrganisationId)));
}

/** Each lab's decision for one client, for the quote cards of a request. */
export async function taxDecisionsFor(labIds: string[], clientOrganisationId: string): Promise<Map<string, TaxDecision>> {
  const out = new Map<string, TaxDecision>();
  for (const labId of new Set(labIds)) out.set(labId, await decideTaxBetween(labId, clientOrganisationId));
  return out;
}
