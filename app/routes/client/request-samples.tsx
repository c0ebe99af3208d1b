// New request, step 1 (samples): title, technique and each sample's formula, form, mass, phase and approximate cell.
import { getFormProps, getInputProps, getSelectProps, useForm, type FieldMetadata } from "@conform-to/react";
import { parseWithZod } from "@conform-to/zod/v4";
import { data, Form, redirect, useNavigation } from "react-router";
import { Options, WizardSteps } from "~/components/request-parts";
import { Field, FieldErrors, FormError, PageHeader } from "~/components/ui";
import { CENTERINGS, CRYSTAL_SYSTEMS } from "~/diffraction/cell";
import { SAMPLE_FORMS, SamplesStepSchema, TECHNIQUES, type SamplesStep } from "~/domain/request-forms";
import { createDraft, notEditable, samplesOf, saveSamples } from "~/models/requests/requests.server";
import { redirectIfPublished } from "~/routes/client/request-wizard.server";
import { requireOrgRole, requireOwnDraft } from "~/utils/permissions.server";
import { readForm } from "~/utils/form.server";
import type { Route } from "./+types/request-samples";

type SampleDefaults = Partial<Record<keyof SamplesStep["samples"][number], string>>;
const EMPTY_SAMPLE: SampleDefaults = { form: "powder", cellAlpha: "90", cellBeta: "90", cellGamma: "90" };
const str = (v: number | string | null | undefined) => (v === null || v === undefined ? undefined : String(v));

export async function loader({ request, params }: Route.LoaderArgs) {
  if (!params.id) {
    await requireOrgRole(request, "client");
    return { requestId: null, reached: "samples", defaults: { title: "", technique: "powder_reflection", samples: [EMPTY_SAMPLE] } };
  }
  const { row } = await requireOwnDraft(request, params.id);
  redirectIfPublished(row);
  const samples = await samplesOf(row.id);
  return {
    requestId: row.id,
    reached: row.draftStep,
    defaults: {
      title: row.title,
      technique: row.technique,
      samples: samples.map((s) => ({
        id: s.id,
        label: s.label,
        formula: s.formula,
        form: s.form,
        massMg: str(s.massMg),
        expectedPhase: str(s.expectedPhase),
        crystalSystem: str(s.crystalSystem),
        centering: str(s.centering),
        cellA: str(s.cellA),
        cellB: str(s.cellB),
        cellC: str(s.cellC),
        cellAlpha: str(s.cellAlpha),
        cellBeta: str(s.cellBeta),
        cellGamma: str(s.cellGamma),
      })),
    },
  };
}

export async function action({ request, params }: Route.ActionArgs) {
  const formData = await readForm(request);
  const submission = parseWithZod(formData, { schema: SamplesStepSchema });
  if (!params.id) {
    const { user, membership } = await requireOrgRole(request, "client");
    if (submission.status !== "success") return data({ result: submission.reply() }, { status: submission.status === "error" ? 400 : 200 });
    const created = await createDraft(membership.organisation.id, user.id, submission.value);
    return redirect(`/client/requests/${created.id}/edit/hazards`);
  }
  const { row } = await requireOwnDraft(request, params.id);
  const locked = notEditable(row);
  if (locked) return data({ result: submission.reply({ formErrors: [locked] }) }, { status: 400 });
  if (submission.status !== "success") return data({ result: submission.reply() }, { status: submission.status === "error" ? 400 : 200 });
  const saved = await saveSamples(row, submission.value);
  if (saved.fieldErrors) return data({ result: submission.reply({ fieldErrors: saved.fieldErrors }) }, { status: 400 });
  return redirect(`/client/requests/${row.id}/edit/hazards`);
}

export default function RequestSamples({ loaderData, actionData }: Route.ComponentProps) {
  const { requestId, reached, defaults } = loaderData;
  const navigation = useNavigation();
  const [form, fields] = useForm<SamplesStep>({
    lastResult: actionData?.result,
    defaultValue: defaults,
    onValidate: ({ formData }) => parseWithZod(formData, { schema: SamplesStepSchema }),
    shouldValidate: "onBlur",
    shouldRevalidate: "onInput",
  });
  const samples = fields.samples.getFieldList();
  return (
    <div>
      <PageHeader title={requestId ? "Edit request" : "New request"} subtitle="Describe the samples: what they are and the cell you expect." />
      <WizardSteps requestId={requestId} current="samples" reached={reached} />
      <Form method="post" {...getFormProps(form)} className="space-y-6">
        <div className="card grid gap-4 sm:grid-cols-[2fr_1fr]">
          <Field label="Request title" id={fields.title.id} errors={fields.title.errors}>
            <input className="input" {...getInputProps(fields.title, { type: "text" })} />
          </Field>
          <Field label="Technique" id={fields.technique.id} errors={fields.technique.errors}>
            <select className="input" {...getSelectProps(fields.technique)}>
              <Options list={TECHNIQUES} />
            </select>
          </Field>
        </div>
        {samples.map((sample, index) => (
          <SampleFieldset key={sample.key} sample={sample} index={index} removable={samples.length > 1} form={form} />
        ))}
        <FieldErrors id={`${fields.samples.id}-error`} errors={fields.samples.errors} />
        <button type="submit" className="btn-secondary" {...form.insert.getButtonProps({ name: fields.samples.name, defaultValue: EMPTY_SAMPLE })}>
          Add a sample
        </button>
        <FormError errors={form.errors} />
        <div className="flex justify-end">
          <button type="submit" className="btn-primary" disabled={navigation.state !== "idle"}>
            Save and continue to hazards
          </button>
        </div>
      </Form>
    </div>
  );
}

function SampleFieldset({
  sample,
  index,
  removable,
  form,
}: {
  sample: FieldMetadata<SamplesStep["samples"][number]>;
  index: number;
  removable: boolean;
  form: ReturnType<typeof useForm<SamplesStep>>[0];
}) {
  const f = sample.getFieldset();
  const cellFields = [
    ["a (Å)", f.cellA],
    ["b (Å)", f.cellB],
    ["c (Å)", f.cellC],
    ["α (°)", f.cellAlpha],
    ["β (°)", f.cellBeta],
    ["γ (°)", f.cellGamma],
  ] as const;
  return (
    <fieldset className="card space-y-2">
      <legend className="sr-only">Sample {index + 1}</legend>
      <div className="flex items-center justify-between">
        <h2 className="text-lg font-semibold">Sample {index + 1}</h2>
        {removable ? (
          <button type="submit" className="btn-quiet" {...form.remove.getButtonProps({ name: "samples", index })}>
            Remove sample {index + 1}
          </button>
        ) : null}
      </div>
      <input type="hidden" name={f.id.name} value={f.id.initialValue ?? ""} />
      <FieldErrors id={`${sample.id}-error`} errors={sample.errors} />
      <div className="grid gap-3 sm:grid-cols-3">
        <Field label="Label" id={f.label.id} errors={f.label.errors} hint="Your own name for it, e.g. LFP-batch-12.">
          <input className="input" {...getInputProps(f.label, { type: "text" })} />
        </Field>
        <Field label="Chemical formula" id={f.formula.id} errors={f.formula.errors} hint="e.g. LiFePO4, Ca10(PO4)6(OH)2, CuSO4·5H2O">
          <input className="input font-mono" {...getInputProps(f.formula, { type: "text" })} />
        </Field>
        <Field label="Form" id={f.form.id} errors={f.form.errors}>
          <select className="input" {...getSelectProps(f.form)}>
            <Options list={SAMPLE_FORMS} />
          </select>
        </Field>
        <Field label="Mass (mg)" id={f.massMg.id} errors={f.massMg.errors}>
          <input className="input" inputMode="decimal" {...getInputProps(f.massMg, { type: "text" })} />
        </Field>
        <Field label="Expected phase" id={f.expectedPhase.id} errors={f.expectedPhase.errors} hint="e.g. olivine LiFePO4">
          <input className="input" {...getInputProps(f.expectedPhase, { type: "text" })} />
        </Field>
        <div className="grid grid-cols-2 gap-3">
          <Field label="Crystal system" id={f.crystalSystem.id} errors={f.crystalSystem.errors}>
            <select className="input" {...getSelectProps(f.crystalSystem)}>
              <option value="">Choose…</option>
              <Options list={CRYSTAL_SYSTEMS} />
            </select>
          </Field>
          <Field label="Centering" id={f.centering.id} errors={f.centering.errors}>
            <select className="input" {...getSelectProps(f.centering)}>
              <option value="">Choose…</option>
              <Options list={CENTERINGS} />
            </select>
          </Field>
        </div>
      </div>
      <fieldset>
        <legend className="label">Approximate cell (trigonal and rhombohedral on hexagonal axes)</legend>
        <div className="grid grid-cols-3 gap-3 sm:grid-cols-6">
          {cellFields.map(([label, field]) => (
            <div key={field.name}>
              <label htmlFor={field.id} className="text-xs text-ink-600">
                {label}
              </label>
              <input className="input" inputMode="decimal" {...getInputProps(field, { type: "text" })} />
            </div>
          ))}
        </div>
        <FieldErrors
          id={`${f.cellA.id}-cell-error`}
          errors={[f.cellA, f.cellB, f.cellC, f.cellAlpha, f.cellBeta, f.cellGamma].flatMap((c) => c.errors ?? [])}
        />
      </fieldset>
    </fieldset>
  );
}

export function meta(_: Route.MetaArgs) {
  return [{ title: "Request samples — Diffractory" }];
}
