// New request, step 3 (measurement): range of interest, source, temperatures, atmosphere, quality, deadline, budget.
import { getFormProps, getInputProps, getSelectProps, useForm } from "@conform-to/react";
import { DateField } from "~/components/date-field";
import { parseWithZod } from "@conform-to/zod/v4";
import { data, Form, useNavigation } from "react-router";
import { Options, WizardSteps } from "~/components/request-parts";
import { Field, FormError, PageHeader } from "~/components/ui";
import { CURRENCIES, toMajorText } from "~/domain/money";
import { ATMOSPHERES, MeasurementStepSchema, QUALITY_LEVELS, SOURCES } from "~/domain/request-forms";
import { notEditable, saveMeasurement } from "~/models/requests/requests.server";
import { requireOwnDraft } from "~/utils/permissions.server";
import { saveStep } from "~/models/requests/request-life.server";
import { redirectIfPublished, stepSaved } from "~/routes/client/request-wizard.server";
import { readForm } from "~/utils/form.server";
import type { Route } from "./+types/request-measurement";

export async function loader({ request, params }: Route.LoaderArgs) {
  const { row } = await requireOwnDraft(request, params.id);
  redirectIfPublished(row);
  return {
    requestId: row.id,
    reached: row.draftStep,
    published: row.state === "open",
    defaults: {
      rangeKind: row.rangeKind,
      rangeMin: row.rangeMin?.toString() ?? "10",
      rangeMax: row.rangeMax?.toString() ?? "120",
      preferredSource: row.preferredSource,
      temperaturePoints: row.temperaturePointsK.join(", "),
      atmosphere: row.atmosphere,
      quality: row.quality,
      deadline: row.deadline ?? "",
      budget: row.budgetMinor === null ? "" : toMajorText(row.budgetMinor),
      currency: row.currency,
    },
  };
}

export async function action({ request, params }: Route.ActionArgs) {
  const { row, actor } = await requireOwnDraft(request, params.id);
  const submission = parseWithZod(await readForm(request), { schema: MeasurementStepSchema });
  const locked = notEditable(row);
  if (locked) return data({ result: submission.reply({ formErrors: [locked] }) }, { status: 400 });
  if (submission.status !== "success") return data({ result: submission.reply() }, { status: 400 });
  const { revision } = await saveStep(row, actor.user.id, () => saveMeasurement(row, submission.value));
  return stepSaved(row, revision, "labs");
}

export default function RequestMeasurement({ loaderData, actionData }: Route.ComponentProps) {
  const { requestId, reached, published, defaults } = loaderData;
  const navigation = useNavigation();
  const [form, fields] = useForm({
    lastResult: actionData?.result,
    defaultValue: defaults,
    onValidate: ({ formData }) => parseWithZod(formData, { schema: MeasurementStepSchema }),
    shouldValidate: "onBlur",
    shouldRevalidate: "onInput",
  });
  const unit = fields.rangeKind.value === "d_spacing" ? "Å" : "°";
  return (
    <div>
      <PageHeader title="Measurement needs" subtitle="What the data must cover; labs are matched against it." />
      <WizardSteps requestId={requestId} current="measurement" reached={reached} />
      <Form method="post" {...getFormProps(form)} className="card space-y-2">
        <div className="grid gap-4 sm:grid-cols-3">
          <Field label="Range of interest in" id={fields.rangeKind.id} errors={fields.rangeKind.errors}>
            <select className="input" {...getSelectProps(fields.rangeKind)}>
              <option value="two_theta">2θ (degrees)</option>
              <option value="d_spacing">d-spacing (Å)</option>
            </select>
          </Field>
          <Field label={`From (${unit})`} id={fields.rangeMin.id} errors={fields.rangeMin.errors}>
            <input className="input" inputMode="decimal" {...getInputProps(fields.rangeMin, { type: "text" })} />
          </Field>
          <Field label={`To (${unit})`} id={fields.rangeMax.id} errors={fields.rangeMax.errors}>
            <input className="input" inputMode="decimal" {...getInputProps(fields.rangeMax, { type: "text" })} />
          </Field>
          <Field label="Preferred source" id={fields.preferredSource.id} errors={fields.preferredSource.errors}>
            <select className="input" {...getSelectProps(fields.preferredSource)}>
              {SOURCES.map((s) => (
                <option key={s} value={s}>
                  {s === "any" ? "Any source" : `${s} Kα`}
                </option>
              ))}
            </select>
          </Field>
          <Field
            label="Temperature points (K)"
            id={fields.temperaturePoints.id}
            errors={fields.temperaturePoints.errors}
            hint="Empty for room temperature; e.g. 298, 573, 873."
          >
            <input className="input" {...getInputProps(fields.temperaturePoints, { type: "text" })} />
          </Field>
          <Field label="Atmosphere" id={fields.atmosphere.id} errors={fields.atmosphere.errors}>
            <select className="input" {...getSelectProps(fields.atmosphere)}>
              <Options list={ATMOSPHERES} />
            </select>
          </Field>
          <Field label="Quality level" id={fields.quality.id} errors={fields.quality.errors}>
            <select className="input" {...getSelectProps(fields.quality)}>
              <Options list={QUALITY_LEVELS} />
            </select>
          </Field>
          <Field label="Deadline" id={fields.deadline.id} errors={fields.deadline.errors}>
            <DateField {...getInputProps(fields.deadline, { type: "text" })} />
          </Field>
          <div className="grid grid-cols-[2fr_1fr] gap-2">
            <Field label="Budget (optional)" id={fields.budget.id} errors={fields.budget.errors}>
              <input className="input" inputMode="decimal" {...getInputProps(fields.budget, { type: "text" })} />
            </Field>
            <Field label="Currency" id={fields.currency.id} errors={fields.currency.errors}>
              <select className="input" {...getSelectProps(fields.currency)}>
                <Options list={CURRENCIES} />
              </select>
            </Field>
          </div>
        </div>
        <FormError errors={form.errors} />
        <div className="flex justify-end">
          <button type="submit" className="btn-primary" disabled={navigation.state !== "idle"}>
            {published ? "Save changes" : "Save and continue to labs"}
          </button>
        </div>
      </Form>
    </div>
  );
}

export function meta(_: Route.MetaArgs) {
  return [
    { title: "Measurement needs — Diffractory" },
    { name: "description", content: "New request, step 3: 2θ or d-spacing range, source, temperatures, atmosphere, quality, deadline and budget." },
  ];
}
