// New request, step 1 (samples): title, technique and each sample's formula, form, mass, main phase and approximate
// cell, with any further expected phases, candidate forms of the main phase and an acceptance window on its cell.
import { getFormProps, getInputProps, getSelectProps, useForm, type FieldMetadata } from "@conform-to/react";
import { parseWithZod } from "@conform-to/zod/v4";
import { data, Form, redirect, useNavigation } from "react-router";
import { Options, WizardSteps } from "~/components/request-parts";
import { Field, FieldErrors, FormError, PageHeader } from "~/components/ui";
import { CENTERINGS, CRYSTAL_SYSTEMS, type CrystalSystem } from "~/diffraction/cell";
import type { CellKey } from "~/diffraction/phases";
import { freeCellParameters } from "~/diffraction/window";
import type { SamplePhase } from "~/db/schema";
import {
  CELL_PARAMETER_LABELS,
  MAX_CANDIDATES,
  MAX_EXPECTED_PHASES,
  SAMPLE_FORMS,
  SamplesStepSchema,
  TECHNIQUES,
  type PhaseRow,
  type SamplesStep,
} from "~/domain/request-forms";
import { createDraft, notEditable, samplesOf, saveSamples } from "~/models/requests/requests.server";
import { saveStep } from "~/models/requests/request-life.server";
import { redirectIfPublished, stepSaved } from "~/routes/client/request-wizard.server";
import { requireOrgRole, requireOwnDraft } from "~/utils/permissions.server";
import { readForm } from "~/utils/form.server";
import type { Route } from "./+types/request-samples";

type SampleStep = SamplesStep["samples"][number];
type PhaseDefaults = Partial<Record<keyof PhaseRow, string>>;
type WindowDefaults = Partial<Record<CellKey, { plusMinus?: string; unit?: string }>>;
type SampleDefaults = Partial<Record<Exclude<keyof SampleStep, "phases" | "candidates" | "window">, string>> & {
  phases?: PhaseDefaults[];
  candidates?: PhaseDefaults[];
  window?: WindowDefaults;
};
const EMPTY_PHASE: PhaseDefaults = { cellAlpha: "90", cellBeta: "90", cellGamma: "90" };
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
  const { requestId, reached, published, defaults } = loaderData;
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
            {published ? "Save changes" : "Save and continue to hazards"}
          </button>
        </div>
      </Form>
    </div>
  );
}

type SampleForm = ReturnType<typeof useForm<SamplesStep>>[0];
type CellFieldset = Pick<ReturnType<FieldMetadata<PhaseRow>["getFieldset"]>, "cellA" | "cellB" | "cellC" | "cellAlpha" | "cellBeta" | "cellGamma">;

function SampleFieldset({ sample, index, removable, form }: { sample: FieldMetadata<SampleStep>; index: number; removable: boolean; form: SampleForm }) {
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

/** The crystal system and lattice centering selects of a phase. */
function SystemFields({ system, centering }: { system: FieldMetadata<string>; centering: FieldMetadata<string> }) {
  return (
    <div className="grid grid-cols-2 gap-3">
      <Field label="Crystal system" id={system.id} errors={system.errors}>
        <select className="input" {...getSelectProps(system)}>
          <option value="">Choose…</option>
          <Options list={CRYSTAL_SYSTEMS} />
        </select>
      </Field>
      <Field label="Centering" id={centering.id} errors={centering.errors}>
        <select className="input" {...getSelectProps(centering)}>
          <option value="">Choose…</option>
          <Options list={CENTERINGS} />
        </select>
      </Field>
    </div>
  );
}

/** The six cell fields of a phase; the crystal system's rules are checked with the rest of the form. */
function CellFields({ cell, legend }: { cell: CellFieldset; legend: string }) {
  const cellFields = [
    ["a (Å)", cell.cellA],
    ["b (Å)", cell.cellB],
    ["c (Å)", cell.cellC],
    ["α (°)", cell.cellAlpha],
    ["β (°)", cell.cellBeta],
    ["γ (°)", cell.cellGamma],
  ] as const;
  return (
    <fieldset>
      <legend className="label">{legend}</legend>
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
      <FieldErrors id={`${cell.cellA.id}-cell-error`} errors={cellFields.flatMap(([, c]) => c.errors ?? [])} />
    </fieldset>
  );
}

/** A sample's further expected phases or its candidate forms: rows of name, system, centering and cell. */
function PhaseList({
  list,
  form,
  title,
  explanation,
  rowLabel,
  addLabel,
  max,
}: {
  list: FieldMetadata<PhaseRow[]>;
  form: SampleForm;
  title: string;
  explanation: string;
  rowLabel: string;
  addLabel: string;
  max: number;
}) {
  const rows = list.getFieldList();
  return (
    <fieldset className="space-y-2 border-t border-ink-100 pt-3">
      <legend className="text-sm font-semibold text-ink-700">{title}</legend>
      <p className="text-xs text-ink-500">
        {explanation} Optional; up to {max}.
      </p>
      {rows.map((row, i) => {
        const p = row.getFieldset();
        return (
          <fieldset key={row.key} className="space-y-2 rounded-md border border-ink-200 p-3" aria-label={`${rowLabel} ${i + 1}`}>
            <div className="flex items-center justify-between">
              <span className="text-sm font-medium">
                {rowLabel} {i + 1}
              </span>
              <button type="submit" className="btn-quiet" {...form.remove.getButtonProps({ name: list.name, index: i })}>
                Remove {rowLabel.toLowerCase()} {i + 1}
              </button>
            </div>
            <FieldErrors id={`${row.id}-error`} errors={row.errors} />
            <div className="grid gap-3 sm:grid-cols-3">
              <Field label="Name (optional)" id={p.name.id} errors={p.name.errors} hint="e.g. Li3PO4, Form II">
                <input className="input" {...getInputProps(p.name, { type: "text" })} />
              </Field>
              <SystemFields system={p.crystalSystem} centering={p.centering} />
            </div>
            <CellFields cell={p} legend="Approximate cell" />
          </fieldset>
        );
      })}
      <FieldErrors id={`${list.id}-error`} errors={list.errors} />
      {rows.length < max ? (
        <button type="submit" className="btn-secondary" {...form.insert.getButtonProps({ name: list.name, defaultValue: EMPTY_PHASE })}>
          {addLabel}
        </button>
      ) : null}
    </fieldset>
  );
}

/** The optional acceptance window: ± an amount or a percentage on each cell parameter the crystal system leaves free. */
function WindowFields({ window, system }: { window: FieldMetadata<SampleStep["window"]>; system: string | undefined }) {
  const w = window.getFieldset();
  const free = CRYSTAL_SYSTEMS.includes(system as CrystalSystem) ? freeCellParameters(system as CrystalSystem) : [];
  return (
    <fieldset className="space-y-2 border-t border-ink-100 pt-3">
      <legend className="text-sm font-semibold text-ink-700">Acceptance window</legend>
      <p className="text-xs text-ink-500">
        Optional. How far the main phase's refined cell may lie from the declared one: give ± an amount or a percentage for any parameter you care about; the
        parameters the crystal system fixes take none. A refined value exactly on a limit counts as inside.
      </p>
      {free.length === 0 ? (
        <p className="text-xs text-ink-600">Choose the main phase's crystal system to set a window.</p>
      ) : (
        <div className="grid gap-3 sm:grid-cols-3">
          {free.map((key) => {
            const entry = w[key].getFieldset();
            const angle = key === "alpha" || key === "beta" || key === "gamma";
            return (
              <div key={key}>
                <label htmlFor={entry.plusMinus.id} className="text-xs text-ink-600">
                  {CELL_PARAMETER_LABELS[key]} ±
                </label>
                <div className="flex gap-2">
                  <input className="input" inputMode="decimal" placeholder="no limit" {...getInputProps(entry.plusMinus, { type: "text" })} />
                  <select className="input w-20" aria-label={`Unit of the window on ${CELL_PARAMETER_LABELS[key]}`} {...getSelectProps(entry.unit)}>
                    <option value="absolute">{angle ? "°" : "Å"}</option>
                    <option value="percent">%</option>
                  </select>
                </div>
                <FieldErrors id={`${entry.plusMinus.id}-error`} errors={[...(entry.plusMinus.errors ?? []), ...(entry.unit.errors ?? [])]} />
              </div>
            );
          })}
        </div>
      )}
      <FieldErrors id={`${window.id}-error`} errors={window.errors} />
    </fieldset>
  );
}

export function meta(_: Route.MetaArgs) {
  return [{ title: "Request samples — Diffractory" }];
}
