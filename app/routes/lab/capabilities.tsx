// The capabilities editor: instruments with their sources, ranges and stages, and the hazards the lab accepts.
import { getCollectionProps, getFormProps, getInputProps, useForm, type SubmissionResult } from "@conform-to/react";
import { useFormat } from "~/components/locale";
import type { Formatter } from "~/domain/locale";
import { parseWithZod } from "@conform-to/zod/v4";
import { data, Form, Link, useActionData, useNavigation, useSearchParams } from "react-router";
import type { z } from "zod";
import { CalibrationStateBadge } from "~/components/calibration-state";
import { GhsIcon } from "~/components/ghs-icon";
import { SelectField } from "~/components/select-field";
import { Badge, EmptyState, Field, FieldErrors, FormError, PageHeader, SafetyNotice } from "~/components/ui";
import type { Instrument, SampleStage } from "~/db/schema";
import { ANODE_LINES } from "~/diffraction/wavelengths";
import {
  ANODE_CHOICES,
  ATMOSPHERE_LABELS,
  ATMOSPHERES,
  DETECTOR_KINDS,
  DETECTOR_LABELS,
  CalibrationProfileSchema,
  HazardAcceptanceSchema,
  InstrumentSchema,
  instrumentWavelength,
  MONOCHROMATION_LABELS,
  MONOCHROMATION_OPTIONS,
  RemoveSchema,
  SAMPLE_HOLDER_OPTIONS,
  SAMPLE_FORM_LABELS,
  SAMPLE_FORMS,
  StageSchema,
  TECHNIQUE_LABELS,
  TECHNIQUES,
} from "~/domain/capabilities";
import {
  getHazardAcceptance,
  listInstruments,
  ProfileNotSaved,
  removeInstrument,
  removeStage,
  saveHazardAcceptance,
  saveCalibrationProfile,
  saveInstrument,
  saveStage,
} from "~/models/labs/capabilities.server";
import { dSpacingCoverage } from "~/domain/coverage";
import { CALIBRATION_STATE_LABELS, withdrawalReason } from "~/domain/calibration-record";
import { GHS_PICTOGRAMS, SPECIAL_CATEGORIES } from "~/domain/hazard-codes";
import { getOrCreateLab } from "~/models/labs/vetting.server";
import { orNotFound, requireOrgRole } from "~/utils/permissions.server";
import { redirectWithToast } from "~/utils/toast.server";
import { readForm } from "~/utils/form.server";
import type { Route } from "./+types/capabilities";
import { SubmitButton } from "~/components/pending";

export async function loader({ request }: Route.LoaderArgs) {
  const { membership } = await requireOrgRole(request, "lab");
  const lab = await getOrCreateLab(membership.organisation.id);
  return {
    canEdit: membership.role === "manager",
    instruments: await listInstruments(lab.organisationId),
    hazards: await getHazardAcceptance(lab.organisationId),
  };
}

type Intent = "save-instrument" | "remove-instrument" | "save-stage" | "remove-stage" | "save-hazards" | "save-calibration-profile";

export async function action({ request, context }: Route.ActionArgs) {
  const { user, membership } = await requireOrgRole(request, "lab", ["manager"]);
  const lab = await getOrCreateLab(membership.organisation.id);
  const labId = lab.organisationId;
  const actor = { userId: user.id, clientAddress: context.clientAddress };
  const formData = await readForm(request);
  const intent = String(formData.get("intent") ?? "") as Intent;
  // Each form on the page has its own id, so an answer goes back to the form that was sent.
  const formId = String(formData.get("formId") ?? intent);
  async function handle<S extends z.ZodType>(schema: S, run: (value: z.infer<S>) => Promise<unknown>, message: string) {
    const submission = parseWithZod(formData, { schema });
    if (submission.status !== "success") return data({ formId, result: submission.reply() }, { status: 400 });
    // An instrument or stage id that is not this lab's is the 404 of a missing page, not a form error.
    await orNotFound(run(submission.value));
    return redirectWithToast("/lab/capabilities", { kind: "success", message });
  }
  switch (intent) {
    case "save-instrument":
      return handle(InstrumentSchema, (v) => saveInstrument(labId, v, actor), "Instrument saved.");
    case "remove-instrument":
      return handle(RemoveSchema, (v) => removeInstrument(labId, v.id, actor), "Instrument removed.");
    case "save-stage":
      return handle(StageSchema, (v) => saveStage(labId, v, actor), "Sample stage saved.");
    case "remove-stage":
      return handle(RemoveSchema, (v) => removeStage(labId, v.id, actor), "Sample stage removed.");
    case "save-hazards":
      return handle(HazardAcceptanceSchema, (v) => saveHazardAcceptance(labId, v, actor), "Hazard acceptance saved.");
    case "save-calibration-profile": {
      // From the vetting screen: the U, V, W fitted to the calibration scan go onto the chosen instrument.
      const submission = parseWithZod(formData, { schema: CalibrationProfileSchema });
      if (submission.status !== "success") return data({ formId, result: submission.reply() }, { status: 400 });
      try {
        await orNotFound(saveCalibrationProfile(labId, submission.value.instrumentId, actor));
      } catch (err) {
        if (err instanceof ProfileNotSaved) return data({ formId, result: submission.reply({ formErrors: [err.message] }) }, { status: 400 });
        throw err;
      }
      return redirectWithToast("/lab/capabilities", { kind: "success", message: "Instrument profile from the calibration scan saved." });
    }
    default:
      return data({ formId, result: { status: "error", error: { "": ["This form cannot be handled here."] } } as SubmissionResult<string[]> }, { status: 400 });
  }
}

type InstrumentView = Instrument & { stages: SampleStage[] };

export default function Capabilities({ loaderData }: Route.ComponentProps) {
  const { canEdit, instruments, hazards } = loaderData;
  const [params] = useSearchParams();
  const editing = params.get("instrument");
  const editingInstrument = instruments.find((i) => i.id === editing);
  return (
    <div className="space-y-6">
      <PageHeader title="Capabilities" subtitle="Instruments, sources, sample stages and the hazards your lab accepts." />
      {canEdit ? null : (
        <p className="card text-sm text-ink-600" role="note">
          You can read the lab's capabilities; only a lab manager can change them.
        </p>
      )}
      <section aria-labelledby="instruments-heading" className="space-y-4">
        <h2 id="instruments-heading" className="text-lg font-semibold">
          Instruments
        </h2>
        {instruments.length === 0 ? (
          <EmptyState title="No instruments published">Describe each diffractometer: its technique, source, 2θ range and sample stages.</EmptyState>
        ) : (
          instruments.map((i) => <InstrumentCard key={i.id} instrument={i} canEdit={canEdit} editStage={params.get("stage")} />)
        )}
        {canEdit ? <InstrumentForm key={editingInstrument?.id ?? `new-${instruments.length}`} instrument={editingInstrument} /> : null}
      </section>
      <HazardForm hazards={hazards} canEdit={canEdit} />
    </div>
  );
}

/** The d-spacing range of an instrument by Bragg's law, in words. */
function coverageText(i: Pick<Instrument, "anode" | "customWavelength" | "twoThetaMin" | "twoThetaMax">) {
  const wavelength = instrumentWavelength(i);
  if (!wavelength) return "—";
  const { dMin, dMax } = dSpacingCoverage(wavelength, i.twoThetaMin, i.twoThetaMax);
  return `d ${dMin.toFixed(4)}–${Number.isFinite(dMax) ? dMax.toFixed(2) : "∞"} Å`;
}

function profileText(i: Pick<Instrument, "cagliotiU" | "cagliotiV" | "cagliotiW" | "profileSource">) {
  if (i.cagliotiU == null || i.cagliotiV == null || i.cagliotiW == null) return "Not given (crystallite sizes include the instrument's own broadening)";
  return `U ${i.cagliotiU}, V ${i.cagliotiV}, W ${i.cagliotiW} degrees²${i.profileSource ? ` · ${i.profileSource}` : ""}`;
}

function calibrationText(i: Pick<Instrument, "calibrationState" | "calibrationDueAt" | "calibrationIntervalDays">, fmt: Formatter) {
  const withdrawn = withdrawalReason(i.calibrationState);
  const due = i.calibrationDueAt
    ? `next scan due ${fmt.date(i.calibrationDueAt)}, every ${i.calibrationIntervalDays} days`
    : `every ${i.calibrationIntervalDays} days`;
  return withdrawn ? `${withdrawn} (${due})` : `${CALIBRATION_STATE_LABELS[i.calibrationState]} (${due})`;
}

function sourceText(i: Pick<Instrument, "anode" | "customWavelength" | "monochromation">) {
  if (i.anode) return `${i.anode} anode, Kα1 ${ANODE_LINES[i.anode].kAlpha1} Å · ${MONOCHROMATION_LABELS[i.monochromation]}`;
  return `Custom wavelength ${i.customWavelength} Å`;
}

// The page holds several forms, some nested two components deep; each picks its own answer out of the action's.
function useFormResult(formId: string) {
  const actionData = useActionData<typeof action>();
  return actionData && "formId" in actionData && actionData.formId === formId ? actionData.result : undefined;
}

function InstrumentCard({ instrument: i, canEdit, editStage }: { instrument: InstrumentView; canEdit: boolean; editStage: string | null }) {
  const fmt = useFormat();
  const facts: [string, string][] = [
    ["Technique", TECHNIQUE_LABELS[i.technique]],
    ["Source", sourceText(i)],
    ["2θ range", `${i.twoThetaMin}°–${i.twoThetaMax}°, smallest step ${i.smallestStep}°`],
    ["d-spacing covered", `${coverageText(i)} (Bragg's law, λ = 2d sin θ)`],
    ["Detector", `${DETECTOR_LABELS[i.detector]}${i.energyDiscrimination ? ", energy-discriminating" : ", no energy discrimination"}`],
    ["Sample forms", i.sampleForms.map((f) => SAMPLE_FORM_LABELS[f as keyof typeof SAMPLE_FORM_LABELS] ?? f).join(", ") || "—"],
    ["Sample holder", SAMPLE_HOLDER_OPTIONS.find((h) => h.value === i.sampleHolder)?.label ?? "Not stated"],
    ["Instrument profile", profileText(i)],
    ["Calibration", calibrationText(i, fmt)],
  ];
  const stageBeingEdited = i.stages.find((s) => s.id === editStage);
  const newStageResult = useFormResult(`stage-new-${i.id}`);
  return (
    <article className="card space-y-4" aria-label={`Instrument ${i.name}`}>
      <div className="flex flex-wrap items-start justify-between gap-3">
        <div className="flex flex-wrap items-center gap-2">
          <h3 className="text-base font-semibold">{i.name}</h3>
          <CalibrationStateBadge state={i.calibrationState} />
          <Link to={`/lab/instruments/${i.id}/calibration`} className="text-sm text-beam-700 underline">
            Calibration record
          </Link>
        </div>
        {canEdit ? (
          <div className="flex gap-2">
            <Link to={`?instrument=${i.id}`} className="btn-secondary" aria-label={`Edit ${i.name}`}>
              Edit
            </Link>
            <Form method="post">
              <input type="hidden" name="intent" value="remove-instrument" />
              <input type="hidden" name="id" value={i.id} />
              <SubmitButton className="btn-quiet" aria-label={`Remove ${i.name}`} match={{ intent: "remove-instrument", id: i.id }} pendingText="Removing…">
                Remove
              </SubmitButton>
            </Form>
          </div>
        ) : null}
      </div>
      <dl className="grid gap-x-6 gap-y-1 text-sm sm:grid-cols-[10rem_1fr]">
        {facts.map(([k, v]) => (
          <div key={k} className="contents">
            <dt className="text-ink-500">{k}</dt>
            <dd>{v}</dd>
          </div>
        ))}
      </dl>
      <div>
        <h4 className="mb-2 text-sm font-semibold">Sample stages</h4>
        {i.stages.length === 0 ? <p className="text-sm text-ink-600">Room temperature in air only.</p> : null}
        <ul className="space-y-1 text-sm">
          {i.stages.map((s) => (
            <li key={s.id} className="flex flex-wrap items-center gap-3">
              <span className="font-medium">{s.name}</span>
              <span>
                {s.minTemperatureK}–{s.maxTemperatureK} K
              </span>
              <span className="flex gap-1">
                {s.atmospheres.map((a) => (
                  <Badge key={a}>{ATMOSPHERE_LABELS[a as keyof typeof ATMOSPHERE_LABELS] ?? a}</Badge>
                ))}
              </span>
              {canEdit ? (
                <span className="flex gap-1">
                  <Link to={`?stage=${s.id}`} className="btn-quiet" aria-label={`Edit stage ${s.name}`}>
                    Edit
                  </Link>
                  <Form method="post">
                    <input type="hidden" name="intent" value="remove-stage" />
                    <input type="hidden" name="id" value={s.id} />
                    <SubmitButton
                      className="btn-quiet"
                      aria-label={`Remove stage ${s.name}`}
                      match={{ intent: "remove-stage", id: s.id }}
                      pendingText="Removing…"
                    >
                      Remove
                    </SubmitButton>
                  </Form>
                </span>
              ) : null}
            </li>
          ))}
        </ul>
        {canEdit && stageBeingEdited ? <StageForm key={stageBeingEdited.id} instrument={i} stage={stageBeingEdited} /> : null}
        {canEdit && !stageBeingEdited ? (
          <details className="mt-3" open={!!newStageResult}>
            <summary className="cursor-pointer text-sm font-semibold text-beam-700">Add a sample stage</summary>
            <StageForm key={`new-${i.stages.length}`} instrument={i} />
          </details>
        ) : null}
      </div>
    </article>
  );
}

function InstrumentForm({ instrument }: { instrument?: InstrumentView }) {
  const formId = instrument ? `instrument-${instrument.id}` : "instrument-new";
  const navigation = useNavigation();
  const [form, fields] = useForm({
    id: formId,
    lastResult: useFormResult(formId),
    defaultValue: instrument
      ? {
          id: instrument.id,
          name: instrument.name,
          technique: instrument.technique,
          sourceKind: instrument.anode ? "anode" : "custom",
          anode: instrument.anode ?? "Cu",
          customWavelength: instrument.customWavelength ? String(instrument.customWavelength) : "",
          monochromation: instrument.monochromation,
          twoThetaMin: String(instrument.twoThetaMin),
          twoThetaMax: String(instrument.twoThetaMax),
          smallestStep: String(instrument.smallestStep),
          detector: instrument.detector,
          energyDiscrimination: instrument.energyDiscrimination ? "on" : undefined,
          sampleForms: instrument.sampleForms,
          sampleHolder: instrument.sampleHolder ?? "none",
          cagliotiU: instrument.cagliotiU != null ? String(instrument.cagliotiU) : "",
          cagliotiV: instrument.cagliotiV != null ? String(instrument.cagliotiV) : "",
          cagliotiW: instrument.cagliotiW != null ? String(instrument.cagliotiW) : "",
        }
      : {
          technique: "powder_reflection",
          sourceKind: "anode",
          anode: "Cu",
          monochromation: "k_alpha_doublet",
          detector: "strip_1d",
          sampleForms: ["powder"],
          sampleHolder: "none",
        },
    onValidate: ({ formData }) => parseWithZod(formData, { schema: InstrumentSchema }),
    shouldValidate: "onSubmit",
    shouldRevalidate: "onInput",
  });
  const custom = fields.sourceKind.value === "custom";
  return (
    <Form method="post" className="card space-y-2" {...getFormProps(form)}>
      <h3 className="mb-2 text-base font-semibold">{instrument ? `Edit ${instrument.name}` : "Add an instrument"}</h3>
      <input type="hidden" name="intent" value="save-instrument" />
      <input type="hidden" name="formId" value={formId} />
      {instrument ? <input type="hidden" name={fields.id.name} value={instrument.id} /> : null}
      <div className="grid gap-3 sm:grid-cols-2">
        <Field label="Instrument name" id={fields.name.id} errors={fields.name.errors}>
          <input className="input" {...getInputProps(fields.name, { type: "text" })} />
        </Field>
        <SelectField label="Technique" meta={fields.technique} options={TECHNIQUES.map((t) => ({ value: t, label: TECHNIQUE_LABELS[t] }))} />
      </div>
      <fieldset>
        <legend className="label">Radiation source</legend>
        <div className="flex flex-wrap gap-4 text-sm">
          {(["anode", "custom"] as const).map((k) => (
            <label key={k} className="flex items-center gap-2">
              <input type="radio" name={fields.sourceKind.name} value={k} defaultChecked={fields.sourceKind.initialValue === k} />
              {k === "anode" ? "X-ray tube anode" : "Custom wavelength (synchrotron or neutron)"}
            </label>
          ))}
        </div>
        <FieldErrors id={fields.sourceKind.errorId} errors={fields.sourceKind.errors} />
      </fieldset>
      <div className="grid gap-3 sm:grid-cols-2">
        {custom ? (
          <Field label="Wavelength (Å)" id={fields.customWavelength.id} errors={fields.customWavelength.errors}>
            <input className="input" inputMode="decimal" {...getInputProps(fields.customWavelength, { type: "text" })} />
          </Field>
        ) : (
          <SelectField label="Anode" meta={fields.anode} options={ANODE_CHOICES.map((a) => ({ value: a, label: `${a} (Kα1 ${ANODE_LINES[a].kAlpha1} Å)` }))} />
        )}
        <SelectField label="Monochromation" meta={fields.monochromation} options={MONOCHROMATION_OPTIONS} />
      </div>
      <div className="grid gap-3 sm:grid-cols-3">
        <Field label="Smallest 2θ (°)" id={fields.twoThetaMin.id} errors={fields.twoThetaMin.errors}>
          <input className="input" inputMode="decimal" {...getInputProps(fields.twoThetaMin, { type: "text" })} />
        </Field>
        <Field label="Largest 2θ (°)" id={fields.twoThetaMax.id} errors={fields.twoThetaMax.errors}>
          <input className="input" inputMode="decimal" {...getInputProps(fields.twoThetaMax, { type: "text" })} />
        </Field>
        <Field label="Smallest step (° 2θ)" id={fields.smallestStep.id} errors={fields.smallestStep.errors}>
          <input className="input" inputMode="decimal" {...getInputProps(fields.smallestStep, { type: "text" })} />
        </Field>
      </div>
      <div className="grid gap-3 sm:grid-cols-2">
        <SelectField label="Detector" meta={fields.detector} options={DETECTOR_KINDS.map((d) => ({ value: d, label: DETECTOR_LABELS[d] }))} />
        <div className="pt-7">
          <label className="flex items-center gap-2 text-sm">
            <input {...getInputProps(fields.energyDiscrimination, { type: "checkbox" })} />
            Energy discrimination (suppresses sample fluorescence)
          </label>
          <FieldErrors id={fields.energyDiscrimination.errorId} errors={fields.energyDiscrimination.errors} />
        </div>
      </div>
      <CheckboxGroup
        legend="Sample forms accepted"
        field={fields.sampleForms}
        options={SAMPLE_FORMS.map((f) => ({ value: f, label: SAMPLE_FORM_LABELS[f] }))}
      />
      <SelectField label="Sample holder" meta={fields.sampleHolder} options={SAMPLE_HOLDER_OPTIONS} />
      <fieldset aria-describedby={`${formId}-profile-hint`}>
        <legend className="label">Instrument profile (optional)</legend>
        <p id={`${formId}-profile-hint`} className="mb-2 text-xs text-ink-600">
          Caglioti U, V and W in degrees² 2θ (FWHM² = U tan²θ + V tanθ + W), fitted to a line-profile standard; with them the crystallite sizes leave out the
          instrument&apos;s own peak width. Give all three or none.
        </p>
        <div className="grid gap-3 sm:grid-cols-3">
          {(["cagliotiU", "cagliotiV", "cagliotiW"] as const).map((k) => (
            <Field key={k} label={`Caglioti ${k.slice(-1)}`} id={fields[k].id} errors={fields[k].errors}>
              <input className="input" inputMode="decimal" {...getInputProps(fields[k], { type: "text" })} />
            </Field>
          ))}
        </div>
      </fieldset>
      <FormError errors={form.errors} />
      <div className="flex gap-2">
        <button type="submit" className="btn-primary" disabled={navigation.state !== "idle"}>
          {instrument ? "Save instrument" : "Add instrument"}
        </button>
        {instrument ? (
          <Link to="." className="btn-secondary">
            Cancel
          </Link>
        ) : null}
      </div>
    </Form>
  );
}

type CollectionField = Parameters<typeof getCollectionProps>[0];

function CheckboxGroup({
  legend,
  field,
  options,
  disabled,
}: {
  legend: string;
  field: CollectionField;
  options: { value: string; label: string }[];
  disabled?: boolean;
}) {
  return (
    <fieldset disabled={disabled}>
      <legend className="label">{legend}</legend>
      <div className="flex flex-wrap gap-x-4 gap-y-1 text-sm">
        {getCollectionProps(field, { type: "checkbox", options: options.map((o) => o.value) }).map(({ key, ...props }) => (
          <label key={key} className="flex items-center gap-2">
            <input {...props} />
            {options.find((o) => o.value === props.value)?.label}
          </label>
        ))}
      </div>
      <FieldErrors id={field.errorId} errors={field.errors} />
    </fieldset>
  );
}

function StageForm({ instrument, stage }: { instrument: InstrumentView; stage?: SampleStage }) {
  const formId = stage ? `stage-${stage.id}` : `stage-new-${instrument.id}`;
  const [form, fields] = useForm({
    id: formId,
    lastResult: useFormResult(formId),
    defaultValue: stage
      ? {
          id: stage.id,
          instrumentId: instrument.id,
          name: stage.name,
          minTemperatureK: String(stage.minTemperatureK),
          maxTemperatureK: String(stage.maxTemperatureK),
          atmospheres: stage.atmospheres,
        }
      : { instrumentId: instrument.id, atmospheres: ["air"] },
    onValidate: ({ formData }) => parseWithZod(formData, { schema: StageSchema }),
    shouldValidate: "onSubmit",
    shouldRevalidate: "onInput",
  });
  return (
    <Form
      method="post"
      className="mt-3 space-y-2 rounded-lg border border-ink-200 p-4"
      aria-label={stage ? `Edit stage ${stage.name}` : `Add a stage to ${instrument.name}`}
      {...getFormProps(form)}
    >
      {stage ? <p className="text-sm font-semibold">Edit stage {stage.name}</p> : null}
      <input type="hidden" name="intent" value="save-stage" />
      <input type="hidden" name="formId" value={formId} />
      <input type="hidden" name={fields.instrumentId.name} value={instrument.id} />
      {stage ? <input type="hidden" name={fields.id.name} value={stage.id} /> : null}
      <div className="grid gap-3 sm:grid-cols-3">
        <Field label="Stage name" id={fields.name.id} errors={fields.name.errors}>
          <input className="input" {...getInputProps(fields.name, { type: "text" })} />
        </Field>
        <Field label="Lowest temperature (K)" id={fields.minTemperatureK.id} errors={fields.minTemperatureK.errors}>
          <input className="input" inputMode="decimal" {...getInputProps(fields.minTemperatureK, { type: "text" })} />
        </Field>
        <Field label="Highest temperature (K)" id={fields.maxTemperatureK.id} errors={fields.maxTemperatureK.errors}>
          <input className="input" inputMode="decimal" {...getInputProps(fields.maxTemperatureK, { type: "text" })} />
        </Field>
      </div>
      <CheckboxGroup legend="Atmospheres" field={fields.atmospheres} options={ATMOSPHERES.map((a) => ({ value: a, label: ATMOSPHERE_LABELS[a] }))} />
      <FormError errors={form.errors} />
      <div className="flex gap-2">
        <SubmitButton className="btn-secondary" match={{ intent: "save-stage" }} pendingText="Saving…">
          {stage ? "Save stage" : "Add stage"}
        </SubmitButton>
        {stage ? (
          <Link to="." className="btn-quiet">
            Cancel
          </Link>
        ) : null}
      </div>
    </Form>
  );
}

function HazardForm({ hazards, canEdit }: { hazards: { pictograms: string[]; specialCategories: string[] }; canEdit: boolean }) {
  const formId = "hazards";
  const [form, fields] = useForm({
    id: formId,
    lastResult: useFormResult(formId),
    defaultValue: hazards,
    onValidate: ({ formData }) => parseWithZod(formData, { schema: HazardAcceptanceSchema }),
    shouldValidate: "onSubmit",
  });
  return (
    <section aria-labelledby="hazards-heading" className="card space-y-4">
      <h2 id="hazards-heading" className="text-lg font-semibold">
        Hazards accepted
      </h2>
      <p className="text-sm text-ink-600">Requests whose samples declare a hazard you do not accept are not offered to your lab.</p>
      <SafetyNotice />
      <Form method="post" className="space-y-4" {...getFormProps(form)}>
        <input type="hidden" name="intent" value="save-hazards" />
        <input type="hidden" name="formId" value={formId} />
        <fieldset disabled={!canEdit}>
          <legend className="label">GHS pictograms</legend>
          <div className="grid gap-2 sm:grid-cols-3">
            {getCollectionProps(fields.pictograms, { type: "checkbox", options: GHS_PICTOGRAMS.map((p) => p.code) }).map(({ key, ...props }) => {
              const p = GHS_PICTOGRAMS.find((g) => g.code === props.value)!;
              return (
                <label
                  key={key}
                  className="flex items-center gap-3 rounded-lg border border-ink-200 p-2 text-sm has-[:checked]:border-beam-500 has-[:checked]:bg-beam-50"
                >
                  <input {...props} aria-describedby={`${props.id}-covers`} />
                  <GhsIcon code={p.code} className="h-9 w-9 shrink-0" />
                  <span>
                    <span className="block font-medium">
                      {p.code} {p.name}
                    </span>
                    <span id={`${props.id}-covers`} className="block text-xs text-ink-500">
                      {p.covers}
                    </span>
                  </span>
                </label>
              );
            })}
          </div>
          <FieldErrors id={fields.pictograms.errorId} errors={fields.pictograms.errors} />
        </fieldset>
        <CheckboxGroup
          legend="Special categories"
          field={fields.specialCategories}
          options={SPECIAL_CATEGORIES.map((c) => ({ value: c.code, label: c.label }))}
          disabled={!canEdit}
        />
        <FormError errors={form.errors} />
        {canEdit ? (
          <SubmitButton match={{ intent: "save-hazards" }} pendingText="Saving…">
            Save hazard acceptance
          </SubmitButton>
        ) : null}
      </Form>
    </section>
  );
}

export function meta(_: Route.MetaArgs) {
  return [
    { title: "Capabilities — Diffractory" },
    { name: "description", content: "Your lab's instruments with their sources, ranges and stages, and the hazards the lab accepts." },
  ];
}
