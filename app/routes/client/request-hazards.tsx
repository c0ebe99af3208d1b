// New request, step 2 (hazards): each sample's GHS pictograms, H-statements, special categories and safety data sheet.
import { Formula } from "~/components/symbols";
import { getFormProps, useForm, type FieldMetadata } from "@conform-to/react";
import { parseWithZod } from "@conform-to/zod/v4";
import { data, Form, useNavigation } from "react-router";
import { HazardFields, hazardDefaults } from "~/components/hazard-fields";
import { WizardSteps } from "~/components/request-parts";
import { FormError, PageHeader, SafetyNotice } from "~/components/ui";
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
      samples: samples.map((s) => ({ id: s.id, ...hazardDefaults(s) })),
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
  return (
    <fieldset className="card space-y-4">
      <legend className="sr-only">Hazards of {sample.label}</legend>
      <h2 className="text-lg font-semibold">
        {sample.label}{" "}
        <span className="text-sm text-ink-500">
          <Formula>{sample.formula}</Formula>
        </span>
      </h2>
      <input type="hidden" name={f.id.name} value={sample.id} />
      <HazardFields
        fields={f}
        label={sample.label}
        sds={{
          uploadId: `sds-${sample.id}`,
          targetAction: `/client/requests/${requestId}/sds-upload`,
          onFile: sample.sdsFileName,
          errors: field.allErrors[`${field.name}.sds`],
          errorId: `${field.id}-sds-error`,
        }}
      />
    </fieldset>
  );
}

export function meta(_: Route.MetaArgs) {
  return [
    { title: "Hazard declaration — Diffractory" },
    { name: "description", content: "New request, step 2: each sample's GHS pictograms, hazard statements, special categories and safety data sheet." },
  ];
}
