// The lab's vetting application: accreditation evidence, radiation-licence attestation and a calibration scan of a standard.
import { CellSymbol, Formula } from "~/components/symbols";
import { getFormProps, getInputProps, getTextareaProps, useForm } from "@conform-to/react";
import { DateField } from "~/components/date-field";
import { parseWithZod } from "@conform-to/zod/v4";
import { useState } from "react";
import { data, Form, useFetcher, useNavigation } from "react-router";
import { CalibrationSummary } from "~/components/calibration-summary";
import { DirectUpload, type UploadedFile } from "~/components/direct-upload";
import { SelectField } from "~/components/select-field";
import { Field, FieldErrors, FormError, PageHeader } from "~/components/ui";
import { VettingBadge } from "~/components/vetting-badge";
import { checkCalibrationScan } from "~/domain/calibration-check";
import { isKeyUnder } from "~/domain/storage-keys";
import { ANODE_CHOICES, MONOCHROMATION_OPTIONS } from "~/domain/capabilities";
import { getOrCreateLab, latestDocuments, submitApplication, VettingConflict, vettingPrefix } from "~/models/labs/vetting.server";
import {
  CALIBRATION_STANDARD_KEYS,
  CALIBRATION_STANDARDS,
  LICENCE_STATEMENT,
  SUBMITTABLE_STATES,
  VettingApplicationSchema,
  type CalibrationCheck,
  type VettingState,
} from "~/domain/vetting";
import { orNotFound, requireOrgRole } from "~/utils/permissions.server";
import { contentTypeFor, DOCUMENT_RULE, SCAN_RULE, verifyStoredObject } from "~/models/files/storage.server";
import { listInstruments } from "~/models/labs/capabilities.server";
import { KIND_EXTENSIONS } from "~/domain/order-files";
import { redirectWithToast } from "~/utils/toast.server";
import { readForm } from "~/utils/form.server";
import type { Route } from "./+types/vetting";

export async function loader({ request }: Route.LoaderArgs) {
  const { membership } = await requireOrgRole(request, "lab");
  const lab = await getOrCreateLab(membership.organisation.id);
  const docs = await latestDocuments(lab.organisationId);
  const state = lab.vettingState as VettingState;
  return {
    labName: membership.organisation.name,
    isManager: membership.role === "manager",
    canSubmit: membership.role === "manager" && SUBMITTABLE_STATES.includes(state),
    state,
    reviewNote: state === "rejected" || state === "suspended" ? lab.reviewNote : null,
    application: {
      description: lab.description,
      accreditationNumber: lab.accreditationNumber ?? "",
      accreditationExpiry: lab.accreditationExpiry ?? "",
      attestation: lab.licenceAttestation,
      attestedAt: lab.licenceAttestedAt?.toISOString() ?? null,
      standard: lab.calibrationStandard,
      certificate: docs.get("accreditation_certificate")?.fileName ?? null,
      scan: docs.get("calibration_scan")?.fileName ?? null,
    },
    check: (lab.calibrationCheck as CalibrationCheck | null) ?? null,
    // Where a manager may save the U, V, W fitted to the calibration scan.
    instruments: membership.role === "manager" ? (await listInstruments(lab.organisationId)).map((i) => ({ id: i.id, name: i.name })) : [],
  };
}

export async function action({ request, context }: Route.ActionArgs) {
  const { user, membership } = await requireOrgRole(request, "lab", ["manager"]);
  const lab = await getOrCreateLab(membership.organisation.id);
  const submission = parseWithZod(await readForm(request), { schema: VettingApplicationSchema });
  if (submission.status !== "success") return data({ result: submission.reply() }, { status: 400 });
  const v = submission.value;
  const refuse = (fieldErrors: Record<string, string[]>, formErrors?: string[]) =>
    data({ result: submission.reply({ fieldErrors, formErrors }) }, { status: 400 });
  if (!SUBMITTABLE_STATES.includes(lab.vettingState)) {
    return refuse({}, ["This lab's application has been decided; it can no longer be changed here."]);
  }
  // Only files uploaded for this lab's application may be referenced, compared segment by segment (no `../`).
  const prefix = vettingPrefix(lab.organisationId);
  if (!isKeyUnder(v.certificateKey, prefix)) return refuse({ certificateKey: ["Upload the accreditation certificate again."] });
  if (!isKeyUnder(v.scanKey, prefix)) return refuse({ scanKey: ["Upload the calibration scan again."] });
  const certificate = await verifyStoredObject(v.certificateKey, DOCUMENT_RULE, v.certificateSha256);
  if (!certificate.ok) return refuse({ certificateKey: [certificate.error] });
  const scanFile = await verifyStoredObject(v.scanKey, SCAN_RULE, v.scanSha256);
  if (!scanFile.ok) return refuse({ scanKey: [scanFile.error] });
  // verifyStoredObject hands back a scan's bytes (text or an instrument's binary file) read with its checksum.
  const outcome = checkCalibrationScan(scanFile.bytes ?? new Uint8Array(), {
    standard: v.standard,
    instrumentName: v.instrumentName,
    anode: v.anode,
    monochromation: v.monochromation,
    fileName: v.scanName,
  });
  if (!outcome.ok) return refuse({ scanKey: [`The calibration scan could not be checked: ${outcome.error}`] });
  try {
    await orNotFound(
      submitApplication({
        labId: lab.organisationId,
        actorUserId: user.id,
        clientAddress: context.clientAddress,
        description: v.description,
        accreditationNumber: v.accreditationNumber,
        accreditationExpiry: v.accreditationExpiry,
        attestation: LICENCE_STATEMENT,
        attestedName: v.attestedName,
        standard: v.standard,
        certificate: {
          storageKey: v.certificateKey,
          fileName: v.certificateName,
          contentType: contentTypeFor(DOCUMENT_RULE, v.certificateName),
          sizeBytes: certificate.size,
          sha256: certificate.sha256,
        },
        scan: {
          storageKey: v.scanKey,
          fileName: v.scanName,
          contentType: contentTypeFor(SCAN_RULE, v.scanName),
          sizeBytes: scanFile.size,
          sha256: scanFile.sha256,
        },
        check: outcome.check,
      }),
    );
  } catch (err) {
    if (err instanceof VettingConflict) return refuse({}, [err.message]);
    throw err;
  }
  return redirectWithToast("/lab/vetting", { kind: "success", message: "Application handed in. An admin will review it." });
}

const STATE_TEXT: Record<VettingState, string> = {
  applied: "Hand in the application below. Your lab is listed for clients only after an admin has approved it.",
  in_review: "An admin is reviewing the application. You may still correct it and hand it in again.",
  approved: "Your lab is approved and listed in the lab directory.",
  rejected: "The application was not approved. Read the admin's note, correct the application and hand it in again.",
  suspended: "Your lab is suspended and hidden from clients. Read the admin's note; an admin can reinstate the lab.",
};

export default function Vetting({ loaderData, actionData }: Route.ComponentProps) {
  const { labName, isManager, canSubmit, state, reviewNote, application, check, instruments } = loaderData;
  return (
    <div className="space-y-6">
      <PageHeader
        title="Vetting application"
        subtitle={`${labName}: ISO/IEC 17025 accreditation, radiation licence and a calibration scan`}
        actions={<VettingBadge state={state} />}
      />
      <div className="card text-sm text-ink-700" role="status" aria-label="Vetting state">
        <p>{STATE_TEXT[state]}</p>
        {reviewNote ? <p className="mt-2 font-medium">Admin's note: {reviewNote}</p> : null}
      </div>
      {canSubmit ? (
        <ApplicationForm application={application} actionData={actionData} />
      ) : (
        <ApplicationSummary application={application} note={isManager ? null : "Only a lab manager can hand in the application."} />
      )}
      {check ? <CalibrationSummary check={check} /> : null}
      {check?.instrumentProfile && isManager ? <SaveProfileForm instruments={instruments} /> : null}
    </div>
  );
}

type ApplicationView = Route.ComponentProps["loaderData"]["application"];

function ApplicationSummary({ application, note }: { application: ApplicationView; note: string | null }) {
  const standard = application.standard ? CALIBRATION_STANDARDS[application.standard as keyof typeof CALIBRATION_STANDARDS] : null;
  const rows: [string, string][] = [
    ["Description", application.description || "—"],
    ["Accreditation number", application.accreditationNumber || "—"],
    ["Accreditation expiry", application.accreditationExpiry || "—"],
    ["Certificate", application.certificate ?? "—"],
    ["Radiation licence", application.attestation ?? "not yet attested"],
    ["Calibration standard", standard?.label ?? "—"],
    ["Calibration scan", application.scan ?? "—"],
  ];
  return (
    <section className="card" aria-label="Application as handed in">
      {note ? <p className="mb-4 text-sm text-ink-600">{note}</p> : null}
      <dl className="grid gap-x-6 gap-y-2 text-sm sm:grid-cols-[12rem_1fr]">
        {rows.map(([k, v]) => (
          <div key={k} className="contents">
            <dt className="text-ink-500">{k}</dt>
            <dd>{v}</dd>
          </div>
        ))}
      </dl>
    </section>
  );
}

function ApplicationForm({ application, actionData }: { application: ApplicationView; actionData: Route.ComponentProps["actionData"] }) {
  const navigation = useNavigation();
  const [form, fields] = useForm({
    id: "vetting-application",
    lastResult: actionData?.result,
    defaultValue: {
      description: application.description,
      accreditationNumber: application.accreditationNumber,
      accreditationExpiry: application.accreditationExpiry,
      standard: application.standard ?? "si_srm640c",
      anode: "Cu",
      monochromation: "k_alpha_doublet",
    },
    onValidate: ({ formData }) => parseWithZod(formData, { schema: VettingApplicationSchema }),
    shouldValidate: "onSubmit",
    shouldRevalidate: "onInput",
  });
  const busy = navigation.state !== "idle" && navigation.formAction === "/lab/vetting";
  return (
    <Form method="post" className="space-y-6" {...getFormProps(form)}>
      <section className="card space-y-2">
        <h2 className="mb-2 text-lg font-semibold">About the lab</h2>
        <Field label="Description" id={fields.description.id} errors={fields.description.errors} hint="What you measure, for whom, and how.">
          <textarea className="input min-h-28" {...getTextareaProps(fields.description)} />
        </Field>
      </section>

      <section className="card space-y-2">
        <h2 className="mb-2 text-lg font-semibold">ISO/IEC 17025 accreditation</h2>
        <div className="grid gap-3 sm:grid-cols-2">
          <Field label="Accreditation number" id={fields.accreditationNumber.id} errors={fields.accreditationNumber.errors}>
            <input className="input" {...getInputProps(fields.accreditationNumber, { type: "text" })} />
          </Field>
          <Field label="Accreditation expires on" id={fields.accreditationExpiry.id} errors={fields.accreditationExpiry.errors}>
            <DateField {...getInputProps(fields.accreditationExpiry, { type: "text" })} />
          </Field>
        </div>
        <UploadedFileField
          id="certificate-file"
          label="Accreditation certificate (PDF, PNG or JPEG, up to 20 MB)"
          accept=".pdf,.png,.jpg,.jpeg,application/pdf,image/png,image/jpeg"
          purpose="accreditation_certificate"
          names={{ key: fields.certificateKey.name, fileName: fields.certificateName.name, sha256: fields.certificateSha256.name }}
          errorId={fields.certificateKey.errorId}
          errors={fields.certificateKey.errors}
        />
      </section>

      <section className="card space-y-2">
        <h2 className="mb-2 text-lg font-semibold">Radiation licence</h2>
        <label className="flex gap-3 text-sm">
          <input className="mt-1" {...getInputProps(fields.attest, { type: "checkbox" })} />
          <span>{LICENCE_STATEMENT}</span>
        </label>
        <FieldErrors id={fields.attest.errorId} errors={fields.attest.errors} />
        <Field label="Your full name, as signature" id={fields.attestedName.id} errors={fields.attestedName.errors}>
          <input className="input" autoComplete="name" {...getInputProps(fields.attestedName, { type: "text" })} />
        </Field>
      </section>

      <section className="card space-y-2">
        <h2 className="mb-2 text-lg font-semibold">Calibration scan</h2>
        <fieldset>
          <legend className="label">Line-position standard</legend>
          <div className="grid gap-3 sm:grid-cols-2">
            {CALIBRATION_STANDARD_KEYS.map((key) => (
              <label
                key={key}
                className="flex cursor-pointer gap-3 rounded-lg border border-ink-300 p-3 text-sm has-[:checked]:border-beam-500 has-[:checked]:bg-beam-50"
              >
                <input type="radio" name={fields.standard.name} value={key} defaultChecked={fields.standard.initialValue === key} className="mt-1" />
                <span>
                  <span className="block font-semibold">
                    <Formula>{CALIBRATION_STANDARDS[key].label}</Formula>
                  </span>
                  <span className="block text-xs text-ink-600">
                    certified <CellSymbol name="a" /> = {CALIBRATION_STANDARDS[key].a} Å
                  </span>
                </span>
              </label>
            ))}
          </div>
          <FieldErrors id={fields.standard.errorId} errors={fields.standard.errors} />
        </fieldset>
        <div className="grid gap-3 sm:grid-cols-3">
          <Field label="Instrument" id={fields.instrumentName.id} errors={fields.instrumentName.errors}>
            <input className="input" {...getInputProps(fields.instrumentName, { type: "text" })} />
          </Field>
          <SelectField label="Anode" meta={fields.anode} options={ANODE_CHOICES.map((a) => ({ value: a, label: a }))} />
          <SelectField label="Monochromation" meta={fields.monochromation} options={MONOCHROMATION_OPTIONS} />
        </div>
        <UploadedFileField
          id="scan-file"
          label="Calibration scan (xy, CSV or pdCIF text, or your instrument's own file: XRDML, raw, GSAS, …)"
          accept={KIND_EXTENSIONS.scan.join(",")}
          purpose="calibration_scan"
          names={{ key: fields.scanKey.name, fileName: fields.scanName.name, sha256: fields.scanSha256.name }}
          errorId={fields.scanKey.errorId}
          errors={fields.scanKey.errors}
        />
      </section>

      <FormError errors={form.errors} />
      <button type="submit" className="btn-primary" disabled={busy}>
        {busy ? "Checking the calibration scan…" : "Hand in for review"}
      </button>
    </Form>
  );
}

/**
 * Offers the U, V, W fitted to the calibration scan for one of the lab's instruments; the server takes the
 * numbers from the stored check, so the form only names the instrument.
 */
function SaveProfileForm({ instruments }: { instruments: { id: string; name: string }[] }) {
  const fetcher = useFetcher<{ result?: { error?: Record<string, string[] | null> } }>();
  const errors = fetcher.data?.result?.error;
  const busy = fetcher.state !== "idle";
  return (
    <section className="card space-y-2" aria-labelledby="save-profile-heading">
      <h2 id="save-profile-heading" className="text-lg font-semibold">
        Use this profile for an instrument
      </h2>
      <p className="text-sm text-ink-700">
        The calibration check fitted the instrument&apos;s peak widths (Caglioti U, V, W above). Saved on an instrument, they take the instrument&apos;s own
        broadening out of the crystallite sizes of every scan checked for it. Nothing is saved until you choose.
      </p>
      {instruments.length === 0 ? (
        <p className="text-sm text-ink-600">Add the instrument under Capabilities first; then save the profile on it here.</p>
      ) : (
        <fetcher.Form method="post" action="/lab/capabilities" className="flex flex-wrap items-end gap-3">
          <input type="hidden" name="intent" value="save-calibration-profile" />
          <input type="hidden" name="formId" value="calibration-profile" />
          <div>
            <label htmlFor="profile-instrument" className="label">
              Instrument
            </label>
            <select id="profile-instrument" name="instrumentId" className="input w-auto" aria-describedby="profile-instrument-error">
              {instruments.map((i) => (
                <option key={i.id} value={i.id}>
                  {i.name}
                </option>
              ))}
            </select>
          </div>
          <button type="submit" className="btn-secondary" disabled={busy}>
            {busy ? "Saving…" : "Save U, V, W on this instrument"}
          </button>
        </fetcher.Form>
      )}
      <FieldErrors id="profile-instrument-error" errors={[...(errors?.instrumentId ?? []), ...(errors?.[""] ?? [])]} />
    </section>
  );
}

/** A direct upload whose stored file travels with the form as hidden fields. */
function UploadedFileField(props: {
  id: string;
  label: string;
  accept: string;
  purpose: string;
  names: { key: string; fileName: string; sha256: string };
  errorId: string;
  errors?: string[];
}) {
  const [file, setFile] = useState<UploadedFile | null>(null);
  return (
    <div>
      <DirectUpload id={props.id} label={props.label} accept={props.accept} targetAction="/lab/vetting/upload" purpose={props.purpose} onUploaded={setFile} />
      <input type="hidden" name={props.names.key} value={file?.storageKey ?? ""} />
      <input type="hidden" name={props.names.fileName} value={file?.fileName ?? ""} />
      <input type="hidden" name={props.names.sha256} value={file?.sha256 ?? ""} />
      <FieldErrors id={props.errorId} errors={props.errors} />
    </div>
  );
}

export function meta(_: Route.MetaArgs) {
  return [
    { title: "Vetting application — Diffractory" },
    {
      name: "description",
      content: "Your lab's vetting application: accreditation evidence, radiation-licence attestation and a calibration scan of a standard.",
    },
  ];
}
