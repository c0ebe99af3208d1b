// New request, step 2 (hazards): each sample's GHS pictograms, H-statements, special categories and safety data sheet.
import { getFormProps, getInputProps, getTextareaProps, useForm, type FieldMetadata } from "@conform-to/react";
import { parseWithZod } from "@conform-to/zod/v4";
import { useState } from "react";
import { data, Form, useNavigation } from "react-router";
import { DirectUpload, type UploadedFile } from "~/components/direct-upload";
import { GhsIcon } from "~/components/ghs-icon";
import { WizardSteps } from "~/components/request-parts";
import { Field, FieldErrors, FormError, PageHeader, SafetyNotice } from "~/components/ui";
import { GHS_PICTOGRAMS, SPECIAL_CATEGORIES } from "~/domain/hazard-codes";
import { AFTER_MEASUREMENT } from "~/domain/hazards";
import { HazardsStepSchema, type SampleHazardForm, type SampleHazardInput } from "~/domain/request-forms";
import { notEditable, samplesOf, saveHazards } from "~/models/requests/requests.server";
import { requireOwnDraft } from "~/utils/permissions.server";
import { saveStep } from "~/models/requests/request-life.server";
import { redirectIfPublished, stepSaved } from "~/routes/client/request-wizard.server";
import { readForm } from "~/utils/form.server";
import type { Route } from "./+types/request-hazards";

export async function loader({ request, params }: Route.LoaderArgs) {
  const { row } = await requireOwnDraft(request, params.id);
  redirectIfPublished(row);
  const samples = await samplesOf(row.id);
  return {
    requestId: row.id,
    reached: row.draftStep,
    published: row.state === "open",
    samples: samples.map((s) => ({ id: s.id, label: s.label, formula: s.formula, sdsFileName: s.sdsFileName })),
    defaults: {
      samples: samples.map((s) => ({
        id: s.id,
        ghs: s.ghsPictograms,
        hStatements: s.hStatements.join(", "),
        special: Object.fromEntries(
          s.specialHazards.map((h) => [h.category, { declared: "on", details: h.details, activityBq: h.activityBq ? String(h.activityBq) : undefined }]),
        ),
        handlingNotes: s.handlingNotes ?? "",
        afterMeasurement: s.afterMeasurement,
        sdsStorageKey: s.sdsStorageKey ?? "",
        sdsFileName: s.sdsFileName ?? "",
      })),
    },
  };
}

export async function action({ request, params }: Route.ActionArgs) {
  const { row, actor } = await requireOwnDraft(request, params.id);
  const submission = parseWithZod(await readForm(request), { schema: HazardsStepSchema });
  const locked = notEditable(row);
  if (locked) return data({ result: submission.reply({ formErrors: [locked] }) }, { status: 400 });
  if (submission.status !== "success") return data({ result: submission.reply() }, { status: 400 });
  const { result: saved, revision } = await saveStep(row, actor.user.id, () => saveHazards(row, submission.value.samples));
  if (saved.fieldErrors) return data({ result: submission.reply({ fieldErrors: saved.fieldErrors }) }, { status: 400 });
  return stepSaved(row, revision, "measurement");
}

export default function RequestHazards({ loaderData, actionData }: Route.ComponentProps) {
  const { requestId, reached, published, samples, defaults } = loaderData;
  const navigation = useNavigation();
  const [form, fields] = useForm<{ samples: SampleHazardForm[] }, { samples: SampleHazardInput[] }>({
    lastResult: actionData?.result,
    defaultValue: defaults,
    onValidate: ({ formData }) => parseWithZod(formData, { schema: HazardsStepSchema }),
    shouldValidate: "onSubmit",
    shouldRevalidate: "onInput",
  });
  const list = fields.samples.getFieldList();
  return (
    <div>
      <PageHeader title="Hazard declaration" subtitle="Declare every hazard of every sample. A safety data sheet is required whenever anything is declared." />
      <WizardSteps requestId={requestId} current="hazards" reached={reached} />
      <SafetyNotice className="mb-6" />
      <Form method="post" {...getFormProps(form)} className="space-y-6">
        {list.map((field, i) => (
          <SampleHazards key={field.key} field={field} sample={samples[i]} requestId={requestId} />
        ))}
        <FormError errors={form.errors} />
        <div className="flex justify-end">
          <button type="submit" className="btn-primary" disabled={navigation.state !== "idle"}>
            {published ? "Save changes" : "Save and continue to measurement"}
          </button>
        </div>
      </Form>
    </div>
  );
}

function SampleHazards({
  field,
  sample,
  requestId,
}: {
  field: FieldMetadata<SampleHazardForm>;
  sample: { id: string; label: string; formula: string; sdsFileName: string | null };
  requestId: string;
}) {
  const f = field.getFieldset();
  const special = f.special.getFieldset();
  const [uploaded, setUploaded] = useState<UploadedFile | null>(null);
  const chosen = new Set((f.ghs.initialValue as string[] | undefined) ?? []);
  return (
    <fieldset className="card space-y-4">
      <legend className="sr-only">Hazards of {sample.label}</legend>
      <h2 className="text-lg font-semibold">
        {sample.label} <span className="font-mono text-sm text-ink-500">{sample.formula}</span>
      </h2>
      <input type="hidden" name={f.id.name} value={sample.id} />
      <fieldset>
        <legend className="label">GHS pictograms</legend>
        <div className="grid gap-2 sm:grid-cols-3">
          {GHS_PICTOGRAMS.map((p) => (
            <label
              key={p.code}
              className="flex cursor-pointer items-center gap-2 rounded-lg border border-ink-200 p-2 has-[:checked]:border-beam-500 has-[:checked]:bg-beam-50"
            >
              <input
                type="checkbox"
                name={f.ghs.name}
                value={p.code}
                defaultChecked={chosen.has(p.code)}
                aria-label={`${p.code} ${p.name} (${sample.label})`}
              />
              <GhsIcon code={p.code} className="h-8 w-8" />
              <span className="text-xs">
                <span className="font-mono">{p.code}</span> {p.name}
              </span>
            </label>
          ))}
        </div>
        <FieldErrors id={`${f.ghs.id}-error`} errors={f.ghs.errors} />
      </fieldset>
      <Field
        label={`H-statements of ${sample.label}`}
        id={f.hStatements.id}
        errors={f.hStatements.errors}
        hint="Codes from the safety data sheet, separated by commas: H302, H315, H302+H312."
      >
        <input className="input font-mono" {...getInputProps(f.hStatements, { type: "text" })} />
      </Field>
      <fieldset>
        <legend className="label">Special categories</legend>
        <div className="space-y-2">
          {SPECIAL_CATEGORIES.map((c) => {
            const entry = special[c.code].getFieldset();
            return (
              <div key={c.code} className="grid items-start gap-2 sm:grid-cols-[12rem_1fr_12rem]">
                <label className="flex items-center gap-2 pt-2 text-sm">
                  <input
                    type="checkbox"
                    name={entry.declared.name}
                    defaultChecked={entry.declared.initialValue === "on"}
                    aria-label={`${c.label} (${sample.label})`}
                  />
                  {c.label}
                </label>
                <div>
                  <input
                    className="input"
                    placeholder="Details for the lab"
                    aria-label={`${c.label} details (${sample.label})`}
                    {...getInputProps(entry.details, { type: "text", ariaAttributes: true })}
                  />
                  <FieldErrors id={`${entry.details.id}-error`} errors={entry.details.errors} />
                </div>
                {c.code === "radioactive" ? (
                  <div>
                    <input
                      className="input"
                      inputMode="decimal"
                      placeholder="Activity (Bq)"
                      aria-label={`Activity in Bq (${sample.label})`}
                      {...getInputProps(entry.activityBq, { type: "text" })}
                    />
                    <FieldErrors id={`${entry.activityBq.id}-error`} errors={entry.activityBq.errors} />
                  </div>
                ) : (
                  <span />
                )}
              </div>
            );
          })}
        </div>
      </fieldset>
      <Field label={`Handling notes for ${sample.label}`} id={f.handlingNotes.id} errors={f.handlingNotes.errors}>
        <textarea className="input" rows={2} {...getTextareaProps(f.handlingNotes)} />
      </Field>
      <fieldset>
        <legend className="label">After measurement</legend>
        <div className="flex gap-4 text-sm">
          {AFTER_MEASUREMENT.map((o) => (
            <label key={o.value} className="flex items-center gap-2">
              <input type="radio" name={f.afterMeasurement.name} value={o.value} defaultChecked={(f.afterMeasurement.initialValue ?? "return") === o.value} />
              {o.label}
            </label>
          ))}
        </div>
        <FieldErrors id={`${f.afterMeasurement.id}-error`} errors={f.afterMeasurement.errors} />
      </fieldset>
      <div>
        <DirectUpload
          id={`sds-${sample.id}`}
          label={`Safety data sheet of ${sample.label} (PDF)`}
          accept="application/pdf,.pdf"
          targetAction={`/client/requests/${requestId}/sds-upload`}
          purpose="sds"
          onUploaded={setUploaded}
        />
        {sample.sdsFileName && !uploaded ? <p className="text-xs text-ink-600">On file: {sample.sdsFileName}. Upload again to replace it.</p> : null}
        <input type="hidden" name={f.sdsStorageKey.name} value={uploaded?.storageKey ?? String(f.sdsStorageKey.initialValue ?? "")} />
        <input type="hidden" name={f.sdsFileName.name} value={uploaded?.fileName ?? String(f.sdsFileName.initialValue ?? "")} />
        {uploaded ? <input type="hidden" name={f.sdsSha256.name} value={uploaded.sha256} /> : null}
        <FieldErrors id={`${field.id}-sds-error`} errors={field.allErrors[`${field.name}.sds`]} />
      </div>
    </fieldset>
  );
}

export function meta(_: Route.MetaArgs) {
  return [{ title: "Hazard declaration — Diffractory" }];
}
