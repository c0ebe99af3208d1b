// The lab's price list: per-sample prices by technique, surcharges, rush multiplier and turnaround, in the lab's currency;
// optional tiers by client kind (docs/design.md#price-tiers), each empty field falling back to the base price.
import { getFormProps, getInputProps, useForm } from "@conform-to/react";
import { parseWithZod } from "@conform-to/zod/v4";
import { data, Form, useNavigation } from "react-router";
import { SelectField } from "~/components/select-field";
import { Field, FormError, PageHeader } from "~/components/ui";
import { TECHNIQUE_LABELS, TECHNIQUES } from "~/domain/capabilities";
import { getPriceList, savePriceList } from "~/models/labs/capabilities.server";
import { getOrCreateLab } from "~/models/labs/vetting.server";
import { CURRENCIES, toMajorText } from "~/domain/money";
import { PriceListSchema, tiersToForm } from "~/domain/price-list";
import { CLIENT_KIND_LABELS, CLIENT_KINDS } from "~/domain/profile-forms";
import { requireOrgRole } from "~/utils/permissions.server";
import { redirectWithToast } from "~/utils/toast.server";
import { readForm } from "~/utils/form.server";
import type { Route } from "./+types/price-list";

export async function loader({ request }: Route.LoaderArgs) {
  const { membership } = await requireOrgRole(request, "lab");
  const lab = await getOrCreateLab(membership.organisation.id);
  const prices = await getPriceList(lab.organisationId);
  return {
    canEdit: membership.role === "manager",
    saved: prices !== null,
    hasTiers: Object.keys(prices?.tiers ?? {}).length > 0,
    // Amounts go back to the form in major units, as they are typed.
    values: prices
      ? {
          currency: prices.currency,
          perSample: Object.fromEntries(Object.entries(prices.perSampleMinor).map(([t, v]) => [t, toMajorText(v ?? 0)])),
          perExtraTemperaturePoint: toMajorText(prices.perExtraTemperaturePointMinor),
          perInstrumentHour: toMajorText(prices.perInstrumentHourMinor),
          samplePreparation: toMajorText(prices.samplePreparationMinor),
          hazardousHandling: toMajorText(prices.hazardousHandlingMinor),
          rushMultiplier: prices.rushMultiplier,
          turnaroundDays: String(prices.turnaroundDays),
          tiers: tiersToForm(prices.tiers),
        }
      : {
          currency: "EUR",
          perSample: {},
          perExtraTemperaturePoint: "0.00",
          perInstrumentHour: "0.00",
          samplePreparation: "0.00",
          hazardousHandling: "0.00",
          rushMultiplier: "1.50",
          turnaroundDays: "10",
          tiers: tiersToForm({}),
        },
  };
}

export async function action({ request, context }: Route.ActionArgs) {
  const { user, membership } = await requireOrgRole(request, "lab", ["manager"]);
  const lab = await getOrCreateLab(membership.organisation.id);
  const submission = parseWithZod(await readForm(request), { schema: PriceListSchema });
  if (submission.status !== "success") return data({ result: submission.reply() }, { status: 400 });
  await savePriceList(lab.organisationId, submission.value, { userId: user.id, clientAddress: context.clientAddress });
  return redirectWithToast("/lab/price-list", { kind: "success", message: "Price list saved." });
}

export default function PriceList({ loaderData, actionData }: Route.ComponentProps) {
  const { canEdit, saved, values, hasTiers } = loaderData;
  const navigation = useNavigation();
  const [form, fields] = useForm({
    id: "price-list",
    lastResult: actionData?.result,
    defaultValue: values,
    onValidate: ({ formData }) => parseWithZod(formData, { schema: PriceListSchema }),
    shouldValidate: "onSubmit",
    shouldRevalidate: "onInput",
  });
  const perSample = fields.perSample.getFieldset();
  const tiers = fields.tiers.getFieldset();
  // The tiers stay folded away until the lab has some, or one of them needs correcting.
  const tierErrors = Object.keys(fields.tiers.allErrors ?? {}).length > 0;
  const currency = fields.currency.value ?? values.currency;
  const amount = (field: (typeof fields)["perInstrumentHour"], label: string, hint?: string) => (
    <Field label={`${label} (${currency})`} id={field.id} errors={field.errors} hint={hint}>
      <input className="input" inputMode="decimal" placeholder="0.00" {...getInputProps(field, { type: "text" })} />
    </Field>
  );
  return (
    <div className="space-y-6">
      <PageHeader title="Price list" subtitle="Amounts in your currency's major units, e.g. 180.00; quotes are drafted from these." />
      {canEdit ? null : (
        <p className="card text-sm text-ink-600" role="note">
          You can read the price list; only a lab manager can change it.
        </p>
      )}
      {!saved ? <p className="text-sm text-ink-600">No prices are saved yet; clients see no price estimate for your lab until you save them.</p> : null}
      <Form method="post" className="space-y-6" {...getFormProps(form)}>
        <fieldset disabled={!canEdit} className="space-y-6">
          <section className="card space-y-2">
            <SelectField label="Currency" meta={fields.currency} className="input max-w-40" options={CURRENCIES.map((c) => ({ value: c, label: c }))} />
          </section>
          <section className="card space-y-2" aria-labelledby="per-sample-heading">
            <h2 id="per-sample-heading" className="text-lg font-semibold">
              Price per sample, by technique
            </h2>
            <p className="text-xs text-ink-600">Leave a technique empty if you do not offer it.</p>
            <div className="grid gap-3 sm:grid-cols-2">
              {TECHNIQUES.map((t) => (
                <Field key={t} label={`${TECHNIQUE_LABELS[t]} (${currency})`} id={perSample[t].id} errors={perSample[t].errors}>
                  <input className="input" inputMode="decimal" placeholder="not offered" {...getInputProps(perSample[t], { type: "text" })} />
                </Field>
              ))}
            </div>
            <div role={fields.perSample.errors?.length ? "alert" : undefined} className="min-h-5 text-xs text-danger-700">
              {fields.perSample.errors?.join(" ")}
            </div>
          </section>
          <section className="card space-y-2" aria-labelledby="surcharges-heading">
            <h2 id="surcharges-heading" className="text-lg font-semibold">
              Surcharges and terms
            </h2>
            <div className="grid gap-3 sm:grid-cols-2">
              {amount(fields.perExtraTemperaturePoint, "Per extra temperature point")}
              {amount(fields.perInstrumentHour, "Per instrument hour", "For long or unusual measurements billed by time.")}
              {amount(fields.samplePreparation, "Sample-preparation fee")}
              {amount(fields.hazardousHandling, "Hazardous-handling fee", "Per sample that declares a hazard.")}
              <Field label="Rush multiplier" id={fields.rushMultiplier.id} errors={fields.rushMultiplier.errors} hint="1.50 = 50 % on top for a rush order.">
                <input className="input" inputMode="decimal" {...getInputProps(fields.rushMultiplier, { type: "text" })} />
              </Field>
              <Field label="Turnaround (days)" id={fields.turnaroundDays.id} errors={fields.turnaroundDays.errors}>
                <input className="input" inputMode="numeric" {...getInputProps(fields.turnaroundDays, { type: "text" })} />
              </Field>
            </div>
          </section>
          <details className="card space-y-3" open={hasTiers || tierErrors}>
            <summary className="cursor-pointer text-lg font-semibold">Prices by client kind (optional)</summary>
            <p className="text-xs text-ink-600">
              Clients state whether they are academic, non-profit or industry, and Diffractory confirms it. A quote for a confirmed client is drafted from its
              kind&apos;s prices; an empty field here, or a client whose kind is not confirmed yet, gets the base price above.
            </p>
            {CLIENT_KINDS.map((kind) => {
              const tier = tiers[kind].getFieldset();
              const tierSample = tier.perSample.getFieldset();
              const who = `${CLIENT_KIND_LABELS[kind].toLowerCase()} clients`;
              return (
                <fieldset key={kind} className="space-y-2 border-t border-ink-100 pt-3">
                  <legend className="font-medium">{CLIENT_KIND_LABELS[kind]} clients</legend>
                  <div className="grid gap-3 sm:grid-cols-2">
                    {TECHNIQUES.map((t) => (
                      <Field key={t} label={`${TECHNIQUE_LABELS[t]} for ${who} (${currency})`} id={tierSample[t].id} errors={tierSample[t].errors}>
                        <input className="input" inputMode="decimal" placeholder="base price" {...getInputProps(tierSample[t], { type: "text" })} />
                      </Field>
                    ))}
                    <Field label={`Per instrument hour for ${who} (${currency})`} id={tier.perInstrumentHour.id} errors={tier.perInstrumentHour.errors}>
                      <input className="input" inputMode="decimal" placeholder="base price" {...getInputProps(tier.perInstrumentHour, { type: "text" })} />
                    </Field>
                  </div>
                </fieldset>
              );
            })}
          </details>
        </fieldset>
        <FormError errors={form.errors} />
        {canEdit ? (
          <button type="submit" className="btn-primary" disabled={navigation.state !== "idle"}>
            Save price list
          </button>
        ) : null}
      </Form>
    </div>
  );
}

export function meta(_: Route.MetaArgs) {
  return [
    { title: "Price list — Diffractory" },
    { name: "description", content: "Your lab's per-sample prices by technique, surcharges, rush multiplier, turnaround and tiers by client kind." },
  ];
}
