// The organisation's profile, shared by the client and lab screens: legal name, billing address, invoice e-mail,
// tax id, (clients) kind and purchase-order rule, and the parcel addresses. Owners or managers edit; others read.
import { getFormProps, getInputProps, type SubmissionResult, useForm } from "@conform-to/react";
import { parseWithZod } from "@conform-to/zod/v4";
import { Form } from "react-router";
import type { PostalAddress } from "~/db/schema";
import { ADDRESS_KIND_LABELS, ADDRESS_KINDS, AddressSchema, CLIENT_KIND_LABELS, CLIENT_KINDS, ProfileSchema } from "~/domain/profile-forms";
import { SubmitButton } from "./pending";
import { SelectField } from "./select-field";
import { Badge, Field, FormError, PageHeader } from "./ui";

export interface ProfileAddress {
  id: string;
  kind: "receiving" | "shipping";
  label: string;
  address: PostalAddress;
  /** The address as written on a label, the country by name (named on the server). */
  lines: string[];
  contactName: string;
  contactPhone: string;
  openingHours: string;
  isDefault: boolean;
}

export interface ProfilePage {
  kind: "client" | "lab";
  name: string;
  legalName: string | null;
  billingAddress: PostalAddress | null;
  taxId: string | null;
  invoiceEmail: string | null;
  clientKind: string | null;
  clientKindConfirmedAt: Date | string | null;
  requiresPurchaseOrder: boolean;
  addresses: ProfileAddress[];
  canEdit: boolean;
  leadRole: string;
  countries: { value: string; label: string }[];
}

type ActionData = { formId: string; result: SubmissionResult<string[]> } | undefined;

type Countries = ProfilePage["countries"];
const withChoose = (countries: Countries) => [{ value: "", label: "Choose a country" }, ...countries];

function TextField({ meta, label, hint, type = "text" }: { meta: Parameters<typeof getInputProps>[0]; label: string; hint?: string; type?: "text" | "email" }) {
  return (
    <Field label={label} id={meta.id} errors={meta.errors} hint={hint}>
      <input className="input" {...getInputProps(meta, { type })} />
    </Field>
  );
}

export function ProfileScreen({ page, actionData }: { page: ProfilePage; actionData: ActionData }) {
  const isClient = page.kind === "client";
  // A saved profile draws the form afresh from what was stored (a VAT number as kept: compact, prefix first).
  const savedKey = JSON.stringify([page.legalName, page.billingAddress, page.taxId, page.invoiceEmail, page.clientKind, page.requiresPurchaseOrder]);
  return (
    <div className="space-y-6">
      <PageHeader title="Profile" subtitle={`The names, addresses and tax id of ${page.name} for invoices and parcels.`} />
      {page.canEdit ? null : (
        <p className="card text-sm text-ink-600" role="note">
          You can read the profile; only {page.leadRole === "owner" ? "an owner" : "a lab manager"} can change it.
        </p>
      )}
      <ProfileForm key={savedKey} page={page} actionData={actionData} />

      <section className="space-y-3" aria-labelledby="addresses-heading">
        <h2 id="addresses-heading" className="text-lg font-semibold">
          Parcel addresses
        </h2>
        <p className="text-sm text-ink-600">
          {isClient
            ? "Where your parcels leave from: the default shipping address is the sender on packing slips and parcel labels."
            : "Where samples come to: the default receiving address, with its contact and opening hours, is on every client's packing slip and parcel label."}
        </p>
        {actionData?.formId === "addresses" ? <FormError errors={actionData.result.error?.[""] ?? null} /> : null}
        {page.addresses.length === 0 ? <p className="text-sm text-ink-600">No addresses yet.</p> : null}
        <ul className="grid gap-3 sm:grid-cols-2">
          {page.addresses.map((a) => (
            <li key={a.id} className="card space-y-2" data-testid="profile-address">
              <p className="font-semibold">
                {a.label} {a.isDefault ? <Badge tone="brand">default {a.kind}</Badge> : <Badge>{a.kind}</Badge>}
              </p>
              <address className="text-sm not-italic">
                {a.lines.map((l) => (
                  <span key={l} className="block">
                    {l}
                  </span>
                ))}
              </address>
              {a.contactName || a.contactPhone ? <p className="text-sm">Contact: {[a.contactName, a.contactPhone].filter(Boolean).join(", ")}</p> : null}
              {a.openingHours ? <p className="text-sm">Hours: {a.openingHours}</p> : null}
              {page.canEdit ? (
                <div className="flex flex-wrap gap-2">
                  {a.isDefault ? null : (
                    <Form method="post">
                      <input type="hidden" name="intent" value="default-address" />
                      <input type="hidden" name="addressId" value={a.id} />
                      <SubmitButton className="btn-secondary py-1">Make default</SubmitButton>
                    </Form>
                  )}
                  <Form method="post">
                    <input type="hidden" name="intent" value="remove-address" />
                    <input type="hidden" name="addressId" value={a.id} />
                    <SubmitButton className="btn-secondary py-1">Remove</SubmitButton>
                  </Form>
                </div>
              ) : null}
              {page.canEdit ? (
                <details open={actionData?.formId === `address-${a.id}`}>
                  <summary className="cursor-pointer text-sm text-beam-700">Edit {a.label}</summary>
                  <AddressForm key={JSON.stringify(a)} address={a} defaultKind={a.kind} actionData={actionData} countries={page.countries} />
                </details>
              ) : null}
            </li>
          ))}
        </ul>
        {page.canEdit ? (
          <details key={page.addresses.length} className="card" open={actionData?.formId === "address-new"}>
            <summary className="cursor-pointer font-medium text-beam-700">Add an address</summary>
            <AddressForm key={page.addresses.length} defaultKind={isClient ? "shipping" : "receiving"} actionData={actionData} countries={page.countries} />
          </details>
        ) : null}
      </section>
    </div>
  );
}

function ProfileForm({ page, actionData }: { page: ProfilePage; actionData: ActionData }) {
  const isClient = page.kind === "client";
  const billing = page.billingAddress;
  const [form, fields] = useForm({
    id: "profile",
    lastResult: actionData?.formId === "profile" ? actionData.result : undefined,
    defaultValue: {
      legalName: page.legalName ?? "",
      line1: billing?.line1 ?? "",
      line2: billing?.line2 ?? "",
      postcode: billing?.postcode ?? "",
      city: billing?.city ?? "",
      region: billing?.region ?? "",
      country: billing?.country ?? "",
      invoiceEmail: page.invoiceEmail ?? "",
      taxId: page.taxId ?? "",
      clientKind: page.clientKind ?? "",
      requiresPurchaseOrder: page.requiresPurchaseOrder ? "on" : undefined,
    },
    onValidate: ({ formData }) => parseWithZod(formData, { schema: ProfileSchema }),
    shouldValidate: "onSubmit",
    shouldRevalidate: "onInput",
  });
  const kindLabel = page.clientKind ? (CLIENT_KIND_LABELS[page.clientKind as keyof typeof CLIENT_KIND_LABELS] ?? page.clientKind) : null;
  return (
    <Form method="post" className="space-y-6" {...getFormProps(form)}>
      <input type="hidden" name="intent" value="profile" />
      <fieldset disabled={!page.canEdit} className="space-y-6">
        <section className="card space-y-2" aria-labelledby="billing-heading">
          <h2 id="billing-heading" className="text-lg font-semibold">
            Invoicing
          </h2>
          <div className="grid gap-3 sm:grid-cols-2">
            <TextField meta={fields.legalName} label="Legal name" hint="As registered, when it differs from the name people use." />
            <TextField meta={fields.invoiceEmail} label="Invoice e-mail" type="email" hint="Where invoices and credit notes go." />
            <TextField meta={fields.line1} label="Billing address: street and number" />
            <TextField meta={fields.line2} label="Second line (optional)" />
            <TextField meta={fields.postcode} label="Postcode" />
            <TextField meta={fields.city} label="City" />
            <TextField meta={fields.region} label="Region (optional)" />
            <SelectField label="Country" meta={fields.country} options={withChoose(page.countries)} />
            <TextField
              meta={fields.taxId}
              label="Tax id"
              hint="In the EU your VAT number, e.g. DE123456789 (checked by its format for the billing country); elsewhere as your tax office writes it."
            />
          </div>
        </section>
        {isClient ? (
          <section className="card space-y-3" aria-labelledby="kind-heading">
            <h2 id="kind-heading" className="text-lg font-semibold">
              Kind of client and purchase orders
            </h2>
            <p className="text-sm text-ink-700" data-testid="client-kind-status">
              {kindLabel ? (
                <>
                  Stated kind: {kindLabel}{" "}
                  {page.clientKindConfirmedAt ? <Badge tone="ok">confirmed</Badge> : <Badge tone="caution">awaiting confirmation</Badge>}
                </>
              ) : (
                "No kind stated yet."
              )}
            </p>
            <SelectField
              label="Kind"
              meta={fields.clientKind}
              className="input max-w-60"
              options={[{ value: "", label: "Not stated" }, ...CLIENT_KINDS.map((k) => ({ value: k, label: CLIENT_KIND_LABELS[k] }))]}
            />
            <p className="text-xs text-ink-500">Labs may price by kind; an admin confirms it, and changing it asks for a new confirmation.</p>
            <label className="flex items-center gap-2 text-sm">
              <input {...getInputProps(fields.requiresPurchaseOrder, { type: "checkbox" })} />
              Require a purchase-order number on every accepted quote
            </label>
          </section>
        ) : null}
      </fieldset>
      <FormError errors={form.errors} />
      {page.canEdit ? (
        <SubmitButton className="btn-primary" pendingText="Saving…">
          Save profile
        </SubmitButton>
      ) : null}
    </Form>
  );
}

function AddressForm({
  address,
  defaultKind,
  actionData,
  countries,
}: {
  address?: ProfileAddress;
  defaultKind: "receiving" | "shipping";
  actionData: ActionData;
  countries: Countries;
}) {
  const formId = address ? `address-${address.id}` : "address-new";
  const [form, fields] = useForm({
    id: formId,
    lastResult: actionData?.formId === formId ? actionData.result : undefined,
    defaultValue: {
      kind: address?.kind ?? defaultKind,
      label: address?.label ?? "",
      line1: address?.address.line1 ?? "",
      line2: address?.address.line2 ?? "",
      postcode: address?.address.postcode ?? "",
      city: address?.address.city ?? "",
      region: address?.address.region ?? "",
      country: address?.address.country ?? "",
      contactName: address?.contactName ?? "",
      contactPhone: address?.contactPhone ?? "",
      openingHours: address?.openingHours ?? "",
      isDefault: address?.isDefault ? "on" : undefined,
    },
    onValidate: ({ formData }) => parseWithZod(formData, { schema: AddressSchema }),
    shouldValidate: "onSubmit",
    shouldRevalidate: "onInput",
  });
  return (
    <Form method="post" className="mt-3 space-y-2" {...getFormProps(form)} aria-label={address ? `Edit ${address.label}` : "New address"}>
      <input type="hidden" name="intent" value={address ? "edit-address" : "add-address"} />
      {address ? <input type="hidden" name="addressId" value={address.id} /> : null}
      <div className="grid gap-3 sm:grid-cols-2">
        <SelectField label="Kind" meta={fields.kind} options={ADDRESS_KINDS.map((k) => ({ value: k, label: ADDRESS_KIND_LABELS[k] }))} />
        <TextField meta={fields.label} label="Name of the address" hint="e.g. Sample reception, Goods-in dock 2." />
        <TextField meta={fields.line1} label="Street and number" />
        <TextField meta={fields.line2} label="Second line (optional)" />
        <TextField meta={fields.postcode} label="Postcode" />
        <TextField meta={fields.city} label="City" />
        <TextField meta={fields.region} label="Region (optional)" />
        <SelectField label="Country" meta={fields.country} options={withChoose(countries)} />
        <TextField meta={fields.contactName} label="Contact person" />
        <TextField meta={fields.contactPhone} label="Contact phone" />
        <TextField meta={fields.openingHours} label="Opening hours" hint="e.g. Mon–Fri 08:00–16:00, closed on public holidays." />
      </div>
      <label className="flex items-center gap-2 text-sm">
        <input {...getInputProps(fields.isDefault, { type: "checkbox" })} />
        The default address of its kind
      </label>
      <FormError errors={form.errors} />
      <SubmitButton className="btn-primary" pendingText="Saving…">
        {address ? "Save address" : "Add address"}
      </SubmitButton>
    </Form>
  );
}
