// An instrument's calibration on record: repeat scans of a certified standard, the schedule, the control charts
// of deviation, zero shift and profile width, and the table of scans (docs/design.md#calibration-on-record).
import { CellSymbol, TwoTheta, Formula } from "~/components/symbols";
import { getFormProps, getInputProps, useForm, type SubmissionResult } from "@conform-to/react";
import { useFormat } from "~/components/locale";
import type { Formatter } from "~/domain/locale";
import { parseWithZod } from "@conform-to/zod/v4";
import { useMemo, useState } from "react";
import { data, Form, Link, useNavigation } from "react-router";
import { CalibrationStateBadge } from "~/components/calibration-state";
import { ControlChart, type ControlChartData } from "~/components/control-chart";
import { DirectUpload, type UploadedFile } from "~/components/direct-upload";
import { Badge, EmptyState, Field, FieldErrors, FormError, PageHeader, TableCard } from "~/components/ui";
import {
  CalibrationIntervalSchema,
  CalibrationScanSchema,
  calibrationCharts,
  chartSummary,
  type ChartSeries,
  signedAngstrom,
  standardLabel,
  withdrawalReason,
  WIDTH_REFERENCE_TWO_THETA,
  type CalibrationState,
} from "~/domain/calibration-record";
import { isUuid } from "~/domain/ids";
import { isKeyUnder } from "~/domain/storage-keys";
import { KIND_EXTENSIONS } from "~/domain/order-files";
import { APPROVAL_TOLERANCE_A, CALIBRATION_STANDARD_KEYS, CALIBRATION_STANDARDS } from "~/domain/vetting";
import { WESTERN_ELECTRIC_RULES, type RuleNumber } from "~/domain/spc";
import { SCAN_RULE, verifyStoredObject } from "~/models/files/storage.server";
import {
  calibrationPrefix,
  calibrationsOf,
  calibrationView,
  instrumentOfLab,
  recordCalibration,
  setCalibrationInterval,
} from "~/models/labs/calibration.server";
import { getOrCreateLab } from "~/models/labs/vetting.server";
import { readForm } from "~/utils/form.server";
import { notFound, requireOrgRole } from "~/utils/permissions.server";
import { redirectWithToast } from "~/utils/toast.server";
import type { Route } from "./+types/calibration";

async function labInstrument(request: Request, id: string | undefined, roles?: ["manager"]) {
  const actor = await requireOrgRole(request, "lab", roles);
  const lab = await getOrCreateLab(actor.membership.organisation.id);
  const instrument = isUuid(id) ? await instrumentOfLab(lab.organisationId, id) : undefined;
  if (!instrument) notFound("There is no such instrument in your lab.");
  return { ...actor, lab, instrument };
}

export async function loader({ request, params }: Route.LoaderArgs) {
  const { membership, instrument } = await labInstrument(request, params.id);
  const rows = (await calibrationsOf(instrument.id)).map(calibrationView);
  return {
    canEdit: membership.role === "manager",
    instrument: {
      id: instrument.id,
      name: instrument.name,
      hasAnode: instrument.anode !== null,
      state: instrument.calibrationState as CalibrationState,
      standard: instrument.calibrationStandard,
      dueAt: instrument.calibrationDueAt?.toISOString() ?? null,
      intervalDays: instrument.calibrationIntervalDays,
    },
    scans: rows,
  };
}

type Intent = "record" | "set-interval";

export async function action({ request, params, context }: Route.ActionArgs) {
  const { user, lab, instrument } = await labInstrument(request, params.id, ["manager"]);
  const formData = await readForm(request);
  const intent = String(formData.get("intent") ?? "") as Intent;
  const actor = { userId: user.id, clientAddress: context.clientAddress };
  const here = `/lab/instruments/${instrument.id}/calibration`;
  if (intent === "set-interval") {
    const submission = parseWithZod(formData, { schema: CalibrationIntervalSchema });
    if (submission.status !== "success") return data({ intent, result: submission.reply() }, { status: 400 });
    const set = await setCalibrationInterval(lab.organisationId, instrument.id, submission.value.intervalDays, actor);
    if (!set.ok) return data({ intent, result: submission.reply({ fieldErrors: { intervalDays: [set.error] } }) }, { status: 400 });
    return redirectWithToast(here, { kind: "success", message: "Calibration schedule saved." });
  }
  if (intent === "record") {
    const submission = parseWithZod(formData, { schema: CalibrationScanSchema });
    if (submission.status !== "success") return data({ intent, result: submission.reply() }, { status: 400 });
    const v = submission.value;
    const refuse = (message: string) => data({ intent, result: submission.reply({ fieldErrors: { scanKey: [message] } }) }, { status: 400 });
    // Only a file uploaded for this instrument may be referenced, compared segment by segment (no `../`).
    if (!isKeyUnder(v.scanKey, calibrationPrefix(lab.organisationId, instrument.id))) return refuse("Upload the calibration scan again.");
    const file = await verifyStoredObject(v.scanKey, SCAN_RULE, v.scanSha256);
    if (!file.ok) return refuse(file.error);
    const recorded = await recordCalibration(instrument.id, file.bytes ?? new Uint8Array(), v.scanName, v.standard, new Date(), actor, {
      storageKey: v.scanKey,
      sizeBytes: file.size,
      sha256: file.sha256,
    });
    if (!recorded.ok) return refuse(recorded.error);
    return redirectWithToast(
      here,
      recorded.judgement.passed
        ? { kind: "success", message: `Calibration passed: ${signedAngstrom(recorded.calibration.deviationA ?? 0)} from the certificate.` }
        : { kind: "error", message: `Calibration failed. ${recorded.judgement.problems.join(" ")} The instrument is withdrawn from matching.` },
    );
  }
  return data({ intent, result: { status: "error", error: { "": ["This form cannot be handled here."] } } as SubmissionResult<string[]> }, { status: 400 });
}

const DECIMALS = { deviation: 5, zeroShift: 4, width: 4 } as const;
/** The value axis's words: short, so they fit beside the chart (the caption says the rest). */
const AXIS_WORDS = { deviation: "Deviation", zeroShift: "Zero shift", width: "FWHM" } as const;

/** A calibration series as the generic control chart draws it: scans in order, each under its date. */
function chartData(c: ChartSeries, fmt: Formatter): ControlChartData {
  const dateOf = (t: number) => fmt.date(t * 1000);
  return {
    points: c.values.map((value, i) => ({ x: i + 1, tick: dateOf(c.times[i]), words: `Scan ${i + 1}, ${dateOf(c.times[i])}`, value, rules: c.flags[i] ?? [] })),
    limits: c.limits ? { center: c.limits.center, ucl: c.limits.ucl, lcl: c.limits.lcl, sigma: c.limits.sigma } : null,
    zones: true,
    axisLabel: `${AXIS_WORDS[c.key]} (${c.unit})`,
    xLabel: "Calibration scan, by date",
    valueLabel: "Scan",
    digits: DECIMALS[c.key],
  };
}

export default function InstrumentCalibration({ loaderData, actionData }: Route.ComponentProps) {
  const { canEdit, instrument, scans } = loaderData;
  const fmt = useFormat();
  const charts = useMemo(() => calibrationCharts(scans).map((c) => ({ ...c, data: chartData(c, fmt) })), [scans, fmt]);
  const withdrawn = withdrawalReason(instrument.state);
  return (
    <div className="space-y-6">
      <p className="text-sm">
        <Link to="/lab/capabilities" className="text-beam-700 underline">
          ← Capabilities
        </Link>
      </p>
      <PageHeader
        title={`Calibration of ${instrument.name}`}
        subtitle="Repeat scans of a certified standard, checked by the same engine as every delivered scan."
        actions={<CalibrationStateBadge state={instrument.state} />}
      />
      <section className="card text-sm text-ink-700" aria-label="Calibration summary" role="status">
        <p>
          {instrument.state === "none" ? (
            "No calibration scan recorded yet."
          ) : (
            <Formula>{`${scans.length} ${scans.length === 1 ? "scan" : "scans"} on record, standard ${standardLabel(instrument.standard)}. Next scan due ${instrument.dueAt ? fmt.date(instrument.dueAt) : "—"} (every ${instrument.intervalDays} days).`}</Formula>
          )}
        </p>
        {withdrawn ? <p className="mt-2 font-medium text-danger-700">{withdrawn}. Record a passing calibration scan to bring it back.</p> : null}
        <p className="mt-2">
          A scan passes when the refined cell is within ±{APPROVAL_TOLERANCE_A} Å of the certificate and its deviation breaks none of the Western Electric rules
          against the limits from the instrument&apos;s first passing scans.
        </p>
      </section>
      {canEdit ? (
        <div className="grid gap-6 lg:grid-cols-2">
          {instrument.hasAnode ? (
            <ScanForm instrumentId={instrument.id} standard={instrument.standard} actionData={actionData} />
          ) : (
            <p className="card text-sm text-ink-600">Calibration scans are checked for X-ray tube instruments; this instrument states a custom wavelength.</p>
          )}
          <IntervalForm intervalDays={instrument.intervalDays} actionData={actionData} />
        </div>
      ) : (
        <p className="card text-sm text-ink-600" role="note">
          Only a lab manager records calibration scans and sets the schedule.
        </p>
      )}
      {scans.length === 0 ? (
        <EmptyState title="No calibration history">Each scan you record adds a point to the charts of deviation, zero shift and profile width.</EmptyState>
      ) : (
        <>
          <section aria-labelledby="charts-heading" className="space-y-4">
            <h2 id="charts-heading" className="text-lg font-semibold">
              Control charts
            </h2>
            {charts.map((c) => (
              <figure key={c.key} className="card">
                <figcaption className="mb-2 text-sm">
                  <span className="font-semibold">
                    {c.label} ({c.unit})
                  </span>
                  <span className="block text-ink-600">{chartSummary(c, DECIMALS[c.key])}</span>
                </figcaption>
                {c.values.length ? (
                  <ControlChart
                    data={c.data}
                    label={`Control chart of ${c.label.toLowerCase()}, as summarised above`}
                    height={220}
                    testId={`calibration-chart-${c.key}`}
                  />
                ) : null}
              </figure>
            ))}
          </section>
          <section aria-labelledby="scans-heading" className="space-y-2">
            <h2 id="scans-heading" className="text-lg font-semibold">
              Scans
            </h2>
            <TableCard
              caption="Calibration scans"
              columns={[
                "Measured",
                "Standard",
                "File",
                "Deviation",
                <>
                  Zero shift (° <TwoTheta />)
                </>,
                <>
                  FWHM at {WIDTH_REFERENCE_TWO_THETA}° (° <TwoTheta />)
                </>,
                "Result",
              ]}
            >
              {[...scans].reverse().map((s) => (
                <tr key={s.id}>
                  <td>{fmt.date(s.measuredAt)}</td>
                  <td>
                    <Formula>{standardLabel(s.standard)}</Formula>
                  </td>
                  <td className="break-all">{s.fileName}</td>
                  <td>{s.deviationA === null ? "—" : signedAngstrom(s.deviationA)}</td>
                  <td>{s.zeroShift === null ? "—" : s.zeroShift.toFixed(4)}</td>
                  <td>{s.width === null ? "—" : s.width.toFixed(4)}</td>
                  <td>
                    {s.passed ? <Badge tone="ok">Passed</Badge> : <Badge tone="danger">Failed</Badge>}
                    {s.rulesBroken.map((r) => (
                      <span key={r} className="block text-xs text-ink-600">
                        Rule {r}: {WESTERN_ELECTRIC_RULES[r as RuleNumber]}
                      </span>
                    ))}
                  </td>
                </tr>
              ))}
            </TableCard>
          </section>
        </>
      )}
    </div>
  );
}

type ActionData = Route.ComponentProps["actionData"];

function ScanForm({ instrumentId, standard, actionData }: { instrumentId: string; standard: string | null; actionData: ActionData }) {
  const navigation = useNavigation();
  const [file, setFile] = useState<UploadedFile | null>(null);
  const [form, fields] = useForm({
    id: "calibration-scan",
    lastResult: actionData?.intent === "record" ? actionData.result : undefined,
    defaultValue: { standard: standard ?? "si_srm640c" },
    onValidate: ({ formData }) => parseWithZod(formData, { schema: CalibrationScanSchema }),
    shouldValidate: "onSubmit",
  });
  const busy = navigation.state !== "idle" && navigation.formData?.get("intent") === "record";
  return (
    <Form method="post" className="card space-y-3" {...getFormProps(form)}>
      <h2 className="text-lg font-semibold">Record a calibration scan</h2>
      <input type="hidden" name="intent" value="record" />
      <fieldset>
        <legend className="label">Standard</legend>
        <div className="grid gap-2">
          {CALIBRATION_STANDARD_KEYS.map((key) => (
            <label key={key} className="flex gap-2 text-sm">
              <input type="radio" name={fields.standard.name} value={key} defaultChecked={fields.standard.initialValue === key} />
              <span>
                <Formula>{CALIBRATION_STANDARDS[key].label}</Formula> (certified <CellSymbol name="a" /> = {CALIBRATION_STANDARDS[key].a} Å)
              </span>
            </label>
          ))}
        </div>
        <FieldErrors id={fields.standard.errorId} errors={fields.standard.errors} />
      </fieldset>
      <DirectUpload
        id="calibration-scan-file"
        label="Scan of the standard (xy, CSV or pdCIF text, or the instrument's own file)"
        accept={KIND_EXTENSIONS.scan.join(",")}
        targetAction={`/lab/instruments/${instrumentId}/calibration/upload`}
        purpose="calibration_scan"
        onUploaded={setFile}
      />
      <input type="hidden" name={fields.scanKey.name} value={file?.storageKey ?? ""} />
      <input type="hidden" name={fields.scanName.name} value={file?.fileName ?? ""} />
      <input type="hidden" name={fields.scanSha256.name} value={file?.sha256 ?? ""} />
      <FieldErrors id={fields.scanKey.errorId} errors={fields.scanKey.errors} />
      <FormError errors={form.errors} />
      <button type="submit" className="btn-primary" disabled={busy}>
        {busy ? "Checking the scan…" : "Check and record"}
      </button>
    </Form>
  );
}

function IntervalForm({ intervalDays, actionData }: { intervalDays: number; actionData: ActionData }) {
  const [form, fields] = useForm({
    id: "calibration-interval",
    lastResult: actionData?.intent === "set-interval" ? actionData.result : undefined,
    defaultValue: { intervalDays: String(intervalDays) },
    onValidate: ({ formData }) => parseWithZod(formData, { schema: CalibrationIntervalSchema }),
    shouldValidate: "onSubmit",
  });
  return (
    <Form method="post" className="card space-y-3" {...getFormProps(form)}>
      <h2 className="text-lg font-semibold">Schedule</h2>
      <input type="hidden" name="intent" value="set-interval" />
      <Field
        label="Days between calibration scans"
        id={fields.intervalDays.id}
        errors={fields.intervalDays.errors}
        hint="Monthly (30 days) unless you set another."
      >
        <input className="input w-32" inputMode="numeric" {...getInputProps(fields.intervalDays, { type: "text" })} />
      </Field>
      <FormError errors={form.errors} />
      <button type="submit" className="btn-secondary">
        Save schedule
      </button>
    </Form>
  );
}

export function meta({ data }: Route.MetaArgs) {
  return [
    { title: `Calibration of ${data?.instrument.name ?? "an instrument"} — Diffractory` },
    { name: "description", content: "An instrument's calibration record: repeat scans of a certified standard, the schedule and control charts." },
  ];
}
