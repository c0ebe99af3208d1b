// New request, step 1 (samples): title, technique and each sample's formula, form, mass, main phase and approximate
// cell, with any further expected phases, candidate forms of the main phase and an acceptance window on its cell.
import { getFormProps, getInputProps, getSelectProps, useForm, type FieldMetadata } from "@conform-to/react";
import { parseWithZod } from "@conform-to/zod/v4";
import { data, Form, redirect, useNavigation } from "react-router";
import { CellFields, EMPTY_PHASE, PhaseList, SystemFields, WindowFields, type PhaseDefaults, type WindowDefaults } from "~/components/declaration-fields";
import { Options, WizardSteps } from "~/components/request-parts";
import { Field, FieldErrors, FormError, PageHeader } from "~/components/ui";
import type { SamplePhase } from "~/db/schema";
import { MAX_CANDIDATES, MAX_EXPECTED_PHASES, SAMPLE_FORMS, SamplesStepSchema, TECHNIQUES, type SamplesStep } from "~/domain/request-forms";
import { materialNamesOfSamples } from "~/models/materials/materials.server";
import { createDraft, notEditable, samplesOf, saveSamples } from "~/models/requests/requests.server";
import { saveStep } from "~/models/requests/request-life.server";
import { redirectIfPublished, stepSaved } from "~/routes/client/request-wizard.server";
import { requireOrgRole, requireOwnDraft } from "~/utils/permissions.server";
import { readForm } from "~/utils/form.server";
import type { Route } from "./+types/request-samples";

type SampleStep = SamplesStep["samples"][number];
type SampleDefaults = Partial<Record<Exclude<keyof SampleStep, "phases" | "candidates" | "window">, string>> & {
  phases?: PhaseDefaults[];
  candidates?: PhaseDefaults[];
  window?: WindowDefaults;
};
const EMPTY_SAMPLE: SampleDefaults = { form: "powder", ...EMPTY_PHASE };
const str = (v: number | string | null | undefined) => (v === null || v === undefined ? undefined : String(v));

const phaseDefaults = (p: SamplePhase): PhaseDefaults => ({
  name: str(p.name),
  crystalSystem: p.crystalSystem,
  centering: p.centering,
  cellA: str(p.cellA),
  cellB: str(p.cellB),
  cellC: str(p.cellC),
  cellAlpha: str(p.cellAlpha),
  cellBeta: str(p.cellBeta),
  cellGamma: str(p.cellGamma),
});

export async function loader({ request, params }: Route.LoaderArgs) {
  if (!params.id) {
    await requireOrgRole(request, "client");
    return {
      requestId: null,
      reached: "samples",
      lots: {} as Record<string, string>,
      published: false,
      defaults: { title: "", technique: "powder_reflection", samples: [EMPTY_SAMPLE] as SampleDefaults[] },
    };
  }
  const { row } = await requireOwnDraft(request, params.id);
  redirectIfPublished(row);
  const samples = await samplesOf(row.id);
  return {
    requestId: row.id,
    reached: row.draftStep,
    published: row.state === "open",
    // Samples that are lots of a material: the material's name, by sample id.
    lots: (await materialNamesOfSamples(samples)) as Record<string, string>,
    defaults: {
      title: row.title,
      technique: row.technique,
      samples: samples.map((s) => ({
        id: s.id,
        label: s.label,
        lotCode: s.materialId ? (s.lotCode ?? "") : undefined,
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
        phases: s.phases.filter((p) => p.role === "expected").map(phaseDefaults),
        candidates: s.phases.filter((p) => p.role === "candidate").map(phaseDefaults),
        window: Object.fromEntries(
          Object.entries(s.acceptanceWindow ?? {}).map(([key, w]) => [key, { plusMinus: str(w?.plusMinus), unit: w?.unit }]),
        ) as WindowDefaults,
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
  const { row, actor } = await requireOwnDraft(request, params.id);
  const locked = notEditable(row);
  if (locked) return data({ result: submission.reply({ formErrors: [locked] }) }, { status: 400 });
  if (submission.status !== "success") return data({ result: submission.reply() }, { status: submission.status === "error" ? 400 : 200 });
  const { result: saved, revision } = await saveStep(row, actor.user.id, () => saveSamples(row, submission.value));
  if (saved.fieldErrors) return data({ result: submission.reply({ fieldErrors: saved.fieldErrors }) }, { status: 400 });
  return stepSaved(row, revision, "hazards");
}

export default function RequestSamples({ loaderData, actionData }: Route.ComponentProps) {
  const { requestId, reached, published, lots, defaults } = loaderData;
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
          <SampleFieldset
            key={sample.key}
            sample={sample}
            index={index}
            removable={samples.length > 1}
            form={form}
            lotOf={lots[String(sample.getFieldset().id.initialValue ?? "")]}
          />
        ))}
        <FieldErrors id={`${fields.samples.id}-error`} errors={fields.samples.errors} />
        <button type="submit" className="btn-secondary" {...form.insert.getButtonProps({ name: fields.samples.name, defaultValue: EMPTY_SAMPLE })}>
          Add a sample
        </button>
        <FormError errors={form.errors} />
        <div className="flex justify-end">
          <button type="submit" className="btn-primary" disabled={navigation.state !== "idle"}>
            {published ? "Save changes" : "Save and continue to hazards"}
          </button>
        </div>
      </Form>
    </div>
  );
}

type SampleForm = ReturnType<typeof useForm<SamplesStep>>[0];

function SampleFieldset({
  sample,
  index,
  removable,
  form,
  lotOf,
}: {
  sample: FieldMetadata<SampleStep>;
  index: number;
  removable: boolean;
  form: SampleForm;
  /** The material's name when the sample is a lot of one. */
  lotOf?: string;
}) {
  const f = sample.getFieldset();
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
      {lotOf ? (
        <div className="grid items-end gap-3 rounded-md bg-beam-50 p-3 sm:grid-cols-[2fr_1fr]">
          <p className="text-sm">
            Lot of <span className="font-medium">{lotOf}</span>: its phases, window and hazards come from the material; change them here for this lot only.
          </p>
          <Field label="Lot code" id={f.lotCode.id} errors={f.lotCode.errors}>
            <input className="input font-mono" {...getInputProps(f.lotCode, { type: "text" })} />
          </Field>
        </div>
      ) : null}
      <div className="grid gap-3 sm:grid-cols-3">
        <Field label="Label" id={f.label.id} errors={f.label.errors} hint="Your own name for it, e.g. LFP-batch-12.">
          <input className="input" {...getInputProps(f.label, { type: "text" })} />
        </Field>
        <Field label="Chemical formula" id={f.formula.id} errors={f.formula.errors} hint="e.g. LiFePO4, Ca10(PO4)6(OH)2, CuSO4·5H2O">
          <input className="input" {...getInputProps(f.formula, { type: "text" })} />
        </Field>
        <Field label="Form" id={f.form.id} errors={f.form.errors}>
          <select className="input" {...getSelectProps(f.form)}>
            <Options list={SAMPLE_FORMS} />
          </select>
        </Field>
        <Field label="Mass (mg)" id={f.massMg.id} errors={f.massMg.errors}>
          <input className="input" inputMode="decimal" {...getInputProps(f.massMg, { type: "text" })} />
        </Field>
        <Field
          label="Expected phase (main)"
          id={f.expectedPhase.id}
          errors={f.expectedPhase.errors}
          hint="The phase the sample should be, e.g. olivine LiFePO4"
        >
          <input className="input" {...getInputProps(f.expectedPhase, { type: "text" })} />
        </Field>
        <SystemFields system={f.crystalSystem} centering={f.centering} />
      </div>
      <CellFields cell={f} legend="Approximate cell of the main phase (trigonal and rhombohedral on hexagonal axes)" />
      <PhaseList
        list={f.phases}
        form={form}
        title="Further expected phases"
        explanation="Other phases the scan should show besides the main one, e.g. an impurity or a second component."
        rowLabel="Further phase"
        addLabel="Add a further phase"
        max={MAX_EXPECTED_PHASES}
      />
      <PhaseList
        list={f.candidates}
        form={form}
        title="Candidate forms"
        explanation="Alternatives to the main phase, e.g. two polymorphs — the check says which one explains the scan."
        rowLabel="Candidate form"
        addLabel="Add a candidate form"
        max={MAX_CANDIDATES}
      />
      <WindowFields window={f.window} system={f.crystalSystem.value} />
    </fieldset>
  );
}

export function meta(_: Route.MetaArgs) {
  return [
    { title: "Request samples — Diffractory" },
    { name: "description", content: "New request, step 1: title, technique and each sample's formula, form, mass, main phase and cell." },
  ];
}
