// An organisation's profile: legal name, billing address, invoice e-mail, tax id, the client's kind (confirmed by
// an admin) and purchase-order rule, and its parcel addresses. Every change is audit-logged (docs/design.md#profiles).
import { and, asc, desc, eq, ne } from "drizzle-orm";
import { db, schema } from "~/db/client.server";
import { type AddressInput, type AddressKind, addressLines, type ProfileInput } from "~/domain/profile-forms";
import { COUNTRY_CODES, countryName } from "~/domain/tax-id";
import { audit } from "~/models/audit.server";
import { NoSuchRecord } from "~/models/errors";

interface Actor {
  userId: string;
  clientAddress?: string | null;
}

/** The profile fields of an organisation and its parcel addresses, default first. */
export async function profileOf(organisationId: string) {
  const [org] = await db
    .select({
      kind: schema.organisations.kind,
      name: schema.organisations.name,
      legalName: schema.organisations.legalName,
      billingAddress: schema.organisations.billingAddress,
      taxId: schema.organisations.taxId,
      invoiceEmail: schema.organisations.invoiceEmail,
      clientKind: schema.organisations.clientKind,
      clientKindConfirmedAt: schema.organisations.clientKindConfirmedAt,
      requiresPurchaseOrder: schema.organisations.requiresPurchaseOrder,
    })
    .from(schema.organisations)
    .where(eq(schema.organisations.id, organisationId));
  if (!org) throw new NoSuchRecord("There is no such organisation.");
  const addresses = await addressesOf(organisationId);
  return { ...org, addresses };
}

/**
 * The countries for the forms' lists, named on the server: the browser's own names may differ from Node's and
 * would not match the page the server drew.
 */
export const countryOptions = () => COUNTRY_CODES.map((c) => ({ value: c, label: countryName(c) })).sort((a, b) => a.label.localeCompare(b.label, "en"));

/** The parcel addresses, each with its lines as written on a label (the country by name, named on the server). */
export async function addressesOf(organisationId: string, kind?: AddressKind) {
  const rows = await addressRows(organisationId, kind);
  return rows.map((r) => ({ ...r, lines: addressLines(r.address) }));
}

async function addressRows(organisationId: string, kind?: AddressKind) {
  const a = schema.organisationAddresses;
  return db
    .select({
      id: a.id,
      kind: a.kind,
      label: a.label,
      address: a.address,
      contactName: a.contactName,
      contactPhone: a.contactPhone,
      openingHours: a.openingHours,
      isDefault: a.isDefault,
    })
    .from(a)
    .where(kind ? and(eq(a.organisationId, organisationId), eq(a.kind, kind)) : eq(a.organisationId, organisationId))
    .orderBy(asc(a.kind), desc(a.isDefault), asc(a.createdAt));
}

/** The organisation's default address of a kind (the first added when none is marked default); undefined when it has none. */
export async function defaultAddressOf(organisationId: string, kind: AddressKind) {
  const [first] = await addressesOf(organisationId, kind);
  return first;
}

/**
 * Saves the profile. A client's kind that changes loses its admin confirmation; a lab keeps no kind or
 * purchase-order rule (those are a client's).
 */
export async function saveProfile(organisationId: string, input: ProfileInput, actor: Actor) {
  await db.transaction(async (tx) => {
    const [org] = await tx
      .select({ kind: schema.organisations.kind, clientKind: schema.organisations.clientKind })
      .from(schema.organisations)
      .where(eq(schema.organisations.id, organisationId))
      .for("update");
    if (!org) throw new NoSuchRecord("There is no such organisation.");
    const isClient = org.kind === "client";
    const kindChanged = isClient && input.clientKind !== org.clientKind;
    await tx
      .update(schema.organisations)
      .set({
        legalName: input.legalName,
        billingAddress: input.billingAddress,
        taxId: input.taxId,
        invoiceEmail: input.invoiceEmail,
        ...(isClient ? { clientKind: input.clientKind, requiresPurchaseOrder: input.requiresPurchaseOrder } : {}),
        ...(kindChanged ? { clientKindConfirmedAt: null, clientKindConfirmedBy: null } : {}),
      })
      .where(eq(schema.organisations.id, organisationId));
    await audit(
      {
        actorUserId: actor.userId,
        organisationId,
        action: "profile_saved",
        subjectType: "organisation",
        subjectId: organisationId,
        details: { taxId: input.taxId, ...(kindChanged ? { clientKind: input.clientKind } : {}) },
        clientAddress: actor.clientAddress ?? null,
      },
      tx,
    );
  });
}

type Tx = Parameters<Parameters<typeof db.transaction>[0]>[0];

/** Makes one address the default of its kind, the others of that kind not. */
async function makeDefault(tx: Tx, organisationId: string, kind: AddressKind, addressId: string) {
  const a = schema.organisationAddresses;
  await tx
    .update(a)
    .set({ isDefault: false })
    .where(and(eq(a.organisationId, organisationId), eq(a.kind, kind), ne(a.id, addressId)));
  await tx.update(a).set({ isDefault: true }).where(eq(a.id, addressId));
}

async function ownAddress(tx: Tx, organisationId: string, addressId: string) {
  const a = schema.organisationAddresses;
  const [row] = await tx
    .select({ id: a.id, kind: a.kind, label: a.label, isDefault: a.isDefault })
    .from(a)
    .where(and(eq(a.id, addressId), eq(a.organisationId, organisationId)))
    .for("update");
  if (!row) throw new NoSuchRecord("There is no such address on this profile.");
  return row;
}

/** Adds a parcel address; the first of its kind, or one marked so, becomes the default. */
export async function addAddress(organisationId: string, input: AddressInput, actor: Actor) {
  return db.transaction(async (tx) => {
    const a = schema.organisationAddresses;
    const existing = await tx
      .select({ id: a.id })
      .from(a)
      .where(and(eq(a.organisationId, organisationId), eq(a.kind, input.kind)));
    const [row] = await tx
      .insert(a)
      .values({ organisationId, ...input, isDefault: false })
      .returning({ id: a.id });
    if (input.isDefault || existing.length === 0) await makeDefault(tx, organisationId, input.kind, row.id);
    await auditAddress(tx, actor, organisationId, "profile_address_added", row.id, input);
    return row.id;
  });
}

/** Changes a parcel address of this organisation (its kind included); marking it default unmarks the others. */
export async function updateAddress(organisationId: string, addressId: string, input: AddressInput, actor: Actor) {
  await db.transaction(async (tx) => {
    const before = await ownAddress(tx, organisationId, addressId);
    const a = schema.organisationAddresses;
    const { isDefault, ...fields } = input;
    const keepDefault = before.isDefault && before.kind === input.kind;
    await tx
      .update(a)
      .set({ ...fields, isDefault: keepDefault })
      .where(eq(a.id, addressId));
    if (isDefault) await makeDefault(tx, organisationId, input.kind, addressId);
    if (before.isDefault && before.kind !== input.kind) await promoteFirst(tx, organisationId, before.kind);
    await auditAddress(tx, actor, organisationId, "profile_address_changed", addressId, input);
  });
}

/** One audit row for a change to a parcel address, named by its label and kind. */
async function auditAddress(tx: Tx, actor: Actor, organisationId: string, action: string, addressId: string, address: { label: string; kind: string }) {
  await audit(
    {
      actorUserId: actor.userId,
      organisationId,
      action,
      subjectType: "organisation_address",
      subjectId: addressId,
      details: { label: address.label, kind: address.kind },
      clientAddress: actor.clientAddress ?? null,
    },
    tx,
  );
}

/** After the default of a kind went away, the oldest remaining address of that kind becomes the default. */
async function promoteFirst(tx: Tx, organisationId: string, kind: AddressKind) {
  const a = schema.organisationAddresses;
  const [next] = await tx
    .select({ id: a.id })
    .from(a)
    .where(and(eq(a.organisationId, organisationId), eq(a.kind, kind)))
    .orderBy(asc(a.createdAt))
    .limit(1);
  if (next) await makeDefault(tx, organisationId, kind, next.id);
}

export async function removeAddress(organisationId: string, addressId: string, actor: Actor) {
  await db.transaction(async (tx) => {
    const before = await ownAddress(tx, organisationId, addressId);
    await tx.delete(schema.organisationAddresses).where(eq(schema.organisationAddresses.id, addressId));
    if (before.isDefault) await promoteFirst(tx, organisationId, before.kind);
    await auditAddress(tx, actor, organisationId, "profile_address_removed", addressId, before);
  });
}

export async function setDefaultAddress(organisationId: string, addressId: string, actor: Actor) {
  await db.transaction(async (tx) => {
    const row = await ownAddress(tx, organisationId, addressId);
    await makeDefault(tx, organisationId, row.kind, addressId);
    await auditAddress(tx, actor, organisationId, "profile_address_default", addressId, row);
  });
}

/** Client organisations that state a kind, confirmed or awaiting an admin's confirmation, for the admin's list. */
export async function statedClientKinds() {
  const o = schema.organisations;
  const rows = await db
    .select({ id: o.id, name: o.name, clientKind: o.clientKind, confirmedAt: o.clientKindConfirmedAt })
    .from(o)
    .where(eq(o.kind, "client"))
    .orderBy(asc(o.name));
  return rows.filter((r) => r.clientKind !== null);
}

/** An admin confirms the kind a client states; refused when the client states none or changed it meanwhile. */
export async function confirmClientKind(organisationId: string, statedKind: string, actor: Actor): Promise<string | null> {
  return db.transaction(async (tx) => {
    const o = schema.organisations;
    const [org] = await tx
      .select({ kind: o.kind, clientKind: o.clientKind })
      .from(o)
      .where(and(eq(o.id, organisationId), eq(o.kind, "client")))
      .for("update");
    if (!org) throw new NoSuchRecord("There is no such client organisation.");
    if (!org.clientKind) return "This client has not stated its kind yet.";
    if (org.clientKind !== statedKind) return "The client changed its kind meanwhile; look at it again before confirming.";
    await tx.update(o).set({ clientKindConfirmedAt: new Date(), clientKindConfirmedBy: actor.userId }).where(eq(o.id, organisationId));
    await audit(
      {
        actorUserId: actor.userId,
        organisationId,
        action: "client_kind_confirmed",
        subjectType: "organisation",
        subjectId: organisationId,
        details: { clientKind: org.clientKind },
        clientAddress: actor.clientAddress ?? null,
      },
      tx,
    );
    return null;
  });
}
