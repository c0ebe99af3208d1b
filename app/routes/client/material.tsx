// A client's material, new or saved (docs/design.md#materials-and-lots): product code and name, the declaration a
// sample makes (formula, form, mass, main phase and cell, further phases, candidate forms, window), the usual
// measurement, hazards with the safety data sheet and the QC people; archive and restore; and "Request a lot
// measurement", which makes a draft request with one sample per lot code, filled from the material.
import { getFormProps, getInputProps, getSelectProps, getTextareaProps, useForm } from "@conform-to/react";
import { parseWithZod } from "@conform-to/zod/v4";
import { data, Form, Link, redirect, useNavigation } from "react-router";
import { CheckStateBadge, WindowBadge } from "~/components/check-status";
import { CellFields, EMPTY_PHASE, PhaseList, SystemFields, WindowFields, type PhaseDefaults } from "~/components/declaration-fields";
import { HazardFields, hazardDefaults } from "~/components/hazard-fields";
import { useFormat } from "~/components/locale";
import { Options } from "~/components/request-parts";
import { WindowValues } from "~/components/symbol-values";
import { Badge, Field, FieldErrors, FormError, PageHeader, SafetyNotice, TableCard } from "~/components/ui";
import type { Material, MaterialPhase } from "~/db/schema";
import { LotCodesSchema, MaterialSchema, type MaterialForm, type MaterialInput } from "~/domain/material-forms";
import { MAX_CANDIDATES, MAX_EXPECTED_PHASES, QUALITY_LEVELS, SAMPLE_FORMS, SOURCES, TECHNIQUES } from "~/domain/request-forms";
import { lotsOfMaterial, materialOf, organisationMembers, requestFromMaterial, saveMaterial, setArchived } from "~/models/materials/materials.server";
import { readForm } from "~/utils/form.server";
import { notFound, requireOrgRole } from "~/utils/permissions.server";
import { redirectWithToast } from "~/utils/toast.server";
import type { Route } from "./+types/material";

const str = (v: number | string | null | undefined) => (v === null || v === undefined ? undefined : String(v));
const phaseDefaults = (p: MaterialPhase): PhaseDefaults => ({
  name: str(p.name),
  crystalSystem: p.crystalSystem,
  centering: p.centering,
  cellA: str(p.cell.a),
  cellB: str(p.cell.b),
  cellC: str(p.cell.c),
  cellAlpha: str(p.cell.alpha),
  cellBeta: str(p.cell.beta),
  cellGamma: str(p.cell.gamma),
});

function materialDefaults(m: Material) {
  return {
    productCode: m.productCode,
    name: m.name,
    formula: m.formula,
    form: m.form,
    massMg: str(m.massMg),
    expectedPhase: str(m.expectedPhase),
    crystalSystem: str(m.crystalSystem),
    centering: str(m.centering),
    cellA: str(m.cellA),
    cellB: str(m.cellB),
    cellC: str(m.cellC),
    cellAlpha: str(m.cellAlpha),
    cellBeta: str(m.cellBeta),
    cellGamma: str(m.cellGamma),
    phases: m.furtherPhases.filter((p) => p.role === "expected").map(phaseDefaults),
    candidates: m.furtherPhases.filter((p) => p.role === "candidate").map(phaseDefaults),
    window: Object.fromEntries(Object.entries(m.acceptanceWindow ?? {}).map(([key, w]) => [key, { plusMinus: str(w?.plusMinus), unit: w?.unit }])),
    technique: m.technique,
    rangeMin: str(m.rangeMin),
    rangeMax: str(m.rangeMax),
    quality: m.quality,
    preferredSource: m.preferredSource,
    ...hazardDefaults(m),
    qcUserIds: m.qcUserIds,
  };
}

const NEW_DEFAULTS = {
  form: "powder",
  ...EMPTY_PHASE,
  technique: "powder_reflection",
  rangeMin: "10",
  rangeMax: "90",
  quality: "standard",
  preferredSource: "any",
  afterMeasurement: "return",
};

/** The organisation's own material of the URL, or 404 (another organisation's looks the same as none). */
async function ownMaterial(request: Request, id: string | undefined) {
  const actor = await requireOrgRole(request, "client");
  const material = await materialOf(id, actor.membership.organisation.id);
  if (!material) notFound("There is no such material.");
  return { actor, material };
}

export async function loader({ request, params }: Route.LoaderArgs) {
  if (!params.id) {
    const { membership } = await requireOrgRole(request, "client");
    return { material: null, lots: [], members: await organisationMembers(membership.organisation.id), defaults: NEW_DEFAULTS as Record<string, unknown> };
  }
  const { actor, material } = await ownMaterial(request, params.id);
  const lots = await lotsOfMaterial(material.id);
  return {
    material: {
      id: material.id,
      productCode: material.productCode,
      name: material.name,
      archived: !!material.archivedAt,
      acceptanceWindow: material.acceptanceWindow,
    },
    // Newest first on this page; the trend reads them oldest first.
    lots: lots
      .slice()
      .reverse()
      .map((l) => ({
        id: l.id,
        lotCode: l.lotCode,
        measuredAt: l.measuredAt,
        orderId: l.orderId,
        orderNumber: l.orderNumber,
        verdict: l.verdict,
        withinWindow: l.withinWindow,
      })),
    members: await organisationMembers(actor.membership.organisation.id),
    defaults: materialDefaults(material) as Record<string, unknown>,
  };
}

export async function action({ request, params }: Route.ActionArgs) {
  const formData = await readForm(request);
  const intent = String(formData.get("intent") ?? "save");
  if (!params.id) {
    const { user, membership } = await requireOrgRole(request, "client");
    const submission = parseWithZod(formData, { schema: MaterialSchema });
    if (submission.status !== "success") return data({ form: "material", result: submission.reply() }, { status: 400 });
    const saved = await saveMaterial(membership.organisation.id, user.id, submission.value);
    if (saved.fieldErrors) return data({ form: "material", result: submission.reply({ fieldErrors: saved.fieldErrors }) }, { status: 400 });
    return redirectWithToast(`/client/materials/${saved.material.id}`, { kind: "success", message: `${saved.material.productCode} saved.` });
  }
  const { actor, material } = await ownMaterial(request, params.id);
  if (intent === "archive" || intent === "restore") {
    await setArchived(material, actor.user.id, intent === "archive");
    return redirectWithToast(`/client/materials/${material.id}`, {
      kind: "success",
      message: intent === "archive" ? `${material.productCode} archived; its record stays.` : `${material.productCode} restored.`,
    });
  }
  if (intent === "request-lot") {
    const submission = parseWithZod(formData, { schema: LotCodesSchema });
    if (submission.status !== "success") return data({ form: "lots", result: submission.reply() }, { status: 400 });
    const made = await requestFromMaterial(material.id, submission.value.lotCodes, { userId: actor.user.id, organisationId: material.organisationId });
    if (!made.ok) return data({ form: "lots", result: submission.reply({ formErrors: [made.error] }) }, { status: 400 });
    return redirect(`/client/requests/${made.requestId}/edit/samples`);
  }
  if (intent !== "save") return data({ form: "material", result: { status: "error" as const, error: { "": ["This form does not exist."] } } }, { status: 400 });
  const submission = parseWithZod(formData, { schema: MaterialSchema });
  if (submission.status !== "success") return data({ form: "material", result: submission.reply() }, { status: 400 });
  const saved = await saveMaterial(material.organisationId, actor.user.id, submission.value, material);
  if (saved.fieldErrors) return data({ form: "material", result: submission.reply({ fieldErrors: saved.fieldErrors }) }, { status: 400 });
  return redirectWithToast(`/client/materials/${material.id}`, { kind: "success", message: `${saved.material.productCode} saved.` });
}

export default function MaterialPage({ loaderData, actionData }: Route.ComponentProps) {
  const { material, lots, members, defaults } = loaderData;
  const navigation = useNavigation();
  const fmt = useFormat();
  const [form, fields] = useForm<MaterialForm, MaterialInput>({
    lastResult: actionData?.form === "material" ? actionData.result : undefined,
    defaultValue: defaults,
    onValidate: ({ formData }) => parseWithZod(formData, { schema: MaterialSchema }),
    shouldValidate: "onBlur",
    shouldRevalidate: "onInput",
  });
  const [lotForm, lotFields] = useForm<{ lotCodes: string }, { lotCodes: string[] }>({
    lastResult: actionData?.form === "lots" ? actionData.result : undefined,
    onValidate: ({ formData }) => parseWithZod(formData, { schema: LotCodesSchema }),
    shouldValidate: "onSubmit",
  });
  const busy = navigation.state !== "idle";
  const chosenQc = new Set((fields.qcUserIds.initialValue as string[] | undefined) ?? []);
  return (
    <div className="space-y-6">
      <PageHeader
        title={material ? `${material.productCode} — ${material.name}` : "New material"}
        subtitle={
          material ? (
            <span className="flex items-center gap-2">
              {material.archived ? <Badge tone="neutral">Archived</Badge> : null}
              <Link to="/client/materials" className="text-beam-700 underline">
                All materials
              </Link>
            </span>
          ) : (
            "Declare a product once; every lot is requested and recorded against it."
          )
        }
      />
      {material && !material.archived ? (
        <section className="card space-y-3" aria-labelledby="request-lot-title">
          <h2 id="request-lot-title" className="text-lg font-semibold">
            Request a lot measurement
          </h2>
          <p className="text-sm text-ink-600">
            A draft request with one sample per lot, filled from this material: phases, window (<WindowValues window={material.acceptanceWindow} />
            ), usual measurement, hazards and safety data sheet. You check it in the request wizard and publish it as any other.
          </p>
          <Form method="post" {...getFormProps(lotForm)} className="space-y-2">
            <input type="hidden" name="intent" value="request-lot" />
            <Field label="Lot codes" id={lotFields.lotCodes.id} errors={lotFields.lotCodes.errors} hint="One per line or separated by commas, e.g. B-2041.">
              <textarea className="input font-mono" rows={2} {...getTextareaProps(lotFields.lotCodes)} />
            </Field>
            <FormError errors={lotForm.errors} />
            <button type="submit" className="btn-primary" disabled={busy}>
              Request a lot measurement
            </button>
          </Form>
        </section>
      ) : null}
      {material ? (
        <section aria-labelledby="lots-title" className="space-y-2">
          <h2 id="lots-title" className="text-lg font-semibold">
            Lots on record ({lots.length})
          </h2>
          {lots.length === 0 ? (
            <p className="text-sm text-ink-600">No lot has been checked yet. Each checked scan of a lot of this material adds a line here.</p>
          ) : (
            <TableCard columns={["Lot", "Checked", "Order", "Verdict", "Window"]} caption="Lots on record">
              {lots.map((l) => (
                <tr key={l.id}>
                  <td className="font-mono">{l.lotCode}</td>
                  <td>{fmt.date(l.measuredAt)}</td>
                  <td>
                    {l.orderId && l.orderNumber ? (
                      <Link to={`/client/orders/${l.orderId}`} className="text-beam-700 underline">
                        {l.orderNumber}
                      </Link>
                    ) : (
                      "—"
                    )}
                  </td>
                  <td>
                    <CheckStateBadge status="done" verdict={l.verdict} />
                  </td>
                  <td>{l.withinWindow === null ? "no window" : <WindowBadge withinWindow={l.withinWindow} />}</td>
                </tr>
              ))}
            </TableCard>
          )}
        </section>
      ) : null}
      <Form method="post" {...getFormProps(form)} className="space-y-6">
        <input type="hidden" name="intent" value="save" />
        <fieldset className="card space-y-2">
          <legend className="sr-only">The material</legend>
          <h2 className="text-lg font-semibold">The material</h2>
          <div className="grid gap-3 sm:grid-cols-3">
            <Field label="Product code" id={fields.productCode.id} errors={fields.productCode.errors} hint="Your own code, unique in your organisation.">
              <input className="input font-mono" {...getInputProps(fields.productCode, { type: "text" })} />
            </Field>
            <Field label="Name" id={fields.name.id} errors={fields.name.errors}>
              <input className="input" {...getInputProps(fields.name, { type: "text" })} />
            </Field>
            <Field label="Chemical formula" id={fields.formula.id} errors={fields.formula.errors} hint="e.g. LiFePO4">
              <input className="input" {...getInputProps(fields.formula, { type: "text" })} />
            </Field>
            <Field label="Form" id={fields.form.id} errors={fields.form.errors}>
              <select className="input" {...getSelectProps(fields.form)}>
                <Options list={SAMPLE_FORMS} />
              </select>
            </Field>
            <Field label="Mass per lot (mg)" id={fields.massMg.id} errors={fields.massMg.errors}>
              <input className="input" inputMode="decimal" {...getInputProps(fields.massMg, { type: "text" })} />
            </Field>
            <Field label="Main phase" id={fields.expectedPhase.id} errors={fields.expectedPhase.errors} hint="e.g. olivine LiFePO4">
              <input className="input" {...getInputProps(fields.expectedPhase, { type: "text" })} />
            </Field>
            <SystemFields system={fields.crystalSystem} centering={fields.centering} />
          </div>
          <CellFields cell={fields} legend="Approximate cell of the main phase (trigonal and rhombohedral on hexagonal axes)" />
          <PhaseList
            list={fields.phases}
            form={form}
            title="Further expected phases"
            explanation="Other phases every lot should show besides the main one."
            rowLabel="Further phase"
            addLabel="Add a further phase"
            max={MAX_EXPECTED_PHASES}
          />
          <PhaseList
            list={fields.candidates}
            form={form}
            title="Candidate forms"
            explanation="Alternatives to the main phase — the check says which one explains a lot's scan."
            rowLabel="Candidate form"
            addLabel="Add a candidate form"
            max={MAX_CANDIDATES}
          />
          <WindowFields window={fields.window} system={fields.crystalSystem.value} />
        </fieldset>
        <fieldset className="card space-y-2">
          <legend className="sr-only">Usual measurement</legend>
          <h2 className="text-lg font-semibold">Usual measurement</h2>
          <div className="grid gap-3 sm:grid-cols-5">
            <Field label="Technique" id={fields.technique.id} errors={fields.technique.errors}>
              <select className="input" {...getSelectProps(fields.technique)}>
                <Options list={TECHNIQUES} />
              </select>
            </Field>
            <Field label="2θ from (°)" id={fields.rangeMin.id} errors={fields.rangeMin.errors}>
              <input className="input" inputMode="decimal" {...getInputProps(fields.rangeMin, { type: "text" })} />
            </Field>
            <Field label="2θ to (°)" id={fields.rangeMax.id} errors={fields.rangeMax.errors}>
              <input className="input" inputMode="decimal" {...getInputProps(fields.rangeMax, { type: "text" })} />
            </Field>
            <Field label="Quality" id={fields.quality.id} errors={fields.quality.errors}>
              <select className="input" {...getSelectProps(fields.quality)}>
                <Options list={QUALITY_LEVELS} />
              </select>
            </Field>
            <Field label="Source" id={fields.preferredSource.id} errors={fields.preferredSource.errors}>
              <select className="input" {...getSelectProps(fields.preferredSource)}>
                <Options list={SOURCES} />
              </select>
            </Field>
          </div>
        </fieldset>
        <fieldset className="card space-y-4">
          <legend className="sr-only">Hazards</legend>
          <h2 className="text-lg font-semibold">Hazards</h2>
          <SafetyNotice />
          <HazardFields
            fields={fields}
            label={material?.productCode ?? "the material"}
            sds={{
              uploadId: "material-sds",
              targetAction: "/client/materials/sds-upload",
              onFile: (defaults.sdsFileName as string | undefined) || null,
              errors: form.allErrors.sds,
              errorId: `${form.id}-sds-error`,
            }}
          />
        </fieldset>
        <fieldset className="card space-y-2">
          <legend className="sr-only">QC people</legend>
          <h2 className="text-lg font-semibold">QC people</h2>
          <p className="text-sm text-ink-600">Members told when a lot breaks a control rule. None chosen: the organisation's owners and managers.</p>
          <div className="grid gap-1 sm:grid-cols-2">
            {members.map((m) => (
              <label key={m.id} className="flex items-center gap-2 text-sm">
                <input type="checkbox" name={fields.qcUserIds.name} value={m.id} defaultChecked={chosenQc.has(m.id)} />
                {m.name} <span className="text-ink-500">{m.email}</span>
              </label>
            ))}
          </div>
          <FieldErrors id={`${fields.qcUserIds.id}-error`} errors={fields.qcUserIds.errors} />
        </fieldset>
        <FormError errors={form.errors} />
        <div className="flex justify-end">
          <button type="submit" className="btn-primary" disabled={busy}>
            {material ? "Save the material" : "Create the material"}
          </button>
        </div>
      </Form>
      {material ? (
        <Form method="post" className="flex justify-end">
          <input type="hidden" name="intent" value={material.archived ? "restore" : "archive"} />
          <button type="submit" className="btn-secondary" disabled={busy}>
            {material.archived ? "Restore the material" : "Archive the material"}
          </button>
        </Form>
      ) : null}
    </div>
  );
}

export function meta({ data }: Route.MetaArgs) {
  return [
    { title: `${data?.material ? data.material.productCode : "New material"} — Diffractory` },
    {
      name: "description",
      content: "A material declared once: product code, formula, main phase and cell, further phases and the acceptance window of its lots.",
    },
  ];
}
