// An admin's review of one lab: documents, radiation-licence attestation, the calibration check, and the decision.
import { getFormProps, getInputProps, getTextareaProps, useForm } from "@conform-to/react";
import { useFormat } from "~/components/locale";
import { parseWithZod } from "@conform-to/zod/v4";
import { data, Form, Link, useNavigation } from "react-router";
import { z } from "zod";
import { CalibrationSummary } from "~/components/calibration-summary";
import { Field, FieldErrors, FormError, PageHeader, TableCard } from "~/components/ui";
import { VettingBadge } from "~/components/vetting-badge";
import { ApplicationIncomplete, ApprovalRefused, decideVetting, labForReview, VettingConflict } from "~/models/labs/vetting.server";
import { APPROVAL_TOLERANCE_A, approvalProblem, DECISIONS, withinTolerance, type CalibrationCheck, type Decision, type VettingState } from "~/domain/vetting";
import { notFound, orNotFound, requireAdmin } from "~/utils/permissions.server";
import { presignDownload } from "~/models/files/storage.server";
import { redirectWithToast } from "~/utils/toast.server";
import { readForm } from "~/utils/form.server";
import type { Route } from "./+types/lab-review";

const DOWNLOAD_MINUTES = 5;

const DecisionSchema = z
  .object({
    intent: z.enum(["approve", "reject", "suspend", "reinstate"], { error: "Choose a decision." }),
    note: z
      .string({ error: "Write a note for the lab and the record." })
      .trim()
      .min(5, "Write a note for the lab and the record (at least 5 characters).")
      .max(2000, "At most 2000 characters."),
    override: z.boolean().default(false),
    overrideReason: z.string().trim().max(2000, "At most 2000 characters.").optional(),
  })
  .refine((v) => !v.override || (v.overrideReason?.length ?? 0) >= 10, {
    path: ["overrideReason"],
    message: "An override needs a written reason (at least 10 characters).",
    when: (p) => (p.value as { override?: unknown })?.override === true,
  });

const DECISION_LABELS: Record<Decision, string> = { approve: "Approve", reject: "Reject", suspend: "Suspend", reinstate: "Reinstate" };

/** The lab under review; an id that is no lab is the page's 404. */
async function reviewedLab(labId: string) {
  const found = await labForReview(labId);
  if (!found) notFound("There is no such lab.");
  return found;
}

export async function loader({ request, params }: Route.LoaderArgs) {
  await requireAdmin(request);
  const { lab, organisation, attestedBy, documents } = await reviewedLab(params.labId);
  const state = lab.vettingState as VettingState;
  const check = (lab.calibrationCheck as CalibrationCheck | null) ?? null;
  return {
    lab: {
      id: lab.organisationId,
      name: organisation.name,
      location: [organisation.city, organisation.country].filter(Boolean).join(", "),
      state,
      description: lab.description,
      accreditationNumber: lab.accreditationNumber,
      accreditationExpiry: lab.accreditationExpiry,
      attestation: lab.licenceAttestation,
      attestedBy,
      attestedAt: lab.licenceAttestedAt?.toISOString() ?? null,
      reviewNote: lab.reviewNote,
      reviewedAt: lab.reviewedAt?.toISOString() ?? null,
    },
    documents: await Promise.all(
      documents.map(async (d) => ({
        id: d.id,
        kind: d.kind,
        fileName: d.fileName,
        sizeBytes: d.sizeBytes,
        sha256: d.sha256,
        uploadedAt: d.uploadedAt.toISOString(),
        url: await presignDownload(d.storageKey, d.fileName, DOWNLOAD_MINUTES * 60),
      })),
    ),
    check,
    withinTolerance: withinTolerance(check),
    /** Why approving (or reinstating) is refused whatever the admin says; null when the application is complete. */
    incomplete: approvalProblem(lab),
    decisions: (Object.keys(DECISIONS) as Decision[]).filter((d) => (DECISIONS[d].from as readonly VettingState[]).includes(state)),
  };
}

export async function action({ request, params, context }: Route.ActionArgs) {
  const { user } = await requireAdmin(request);
  const { lab } = await reviewedLab(params.labId);
  const submission = parseWithZod(await readForm(request), { schema: DecisionSchema });
  if (submission.status !== "success") return data({ result: submission.reply() }, { status: 400 });
  const { intent, note, override, overrideReason } = submission.value;
  try {
    const done = await orNotFound(
      decideVetting({
        labId: lab.organisationId,
        decision: intent,
        note,
        actorUserId: user.id,
        clientAddress: context.clientAddress,
        overrideReason: override ? overrideReason : undefined,
      }),
    );
    return redirectWithToast(`/admin/labs/${lab.organisationId}`, {
      kind: "success",
      message: `Lab ${done.to.replace("_", " ")}${done.override ? " with an override of the calibration tolerance" : ""}.`,
    });
  } catch (err) {
    if (err instanceof ApprovalRefused) return data({ result: submission.reply({ fieldErrors: { override: [err.message] } }) }, { status: 400 });
    if (err instanceof ApplicationIncomplete) return data({ result: submission.reply({ formErrors: [err.message] }) }, { status: 400 });
    if (err instanceof VettingConflict) return data({ result: submission.reply({ formErrors: [err.message] }) }, { status: 400 });
    throw err;
  }
}

const KIND_LABELS: Record<string, string> = {
  accreditation_certificate: "Accreditation certificate",
  radiation_licence: "Radiation licence",
  calibration_scan: "Calibration scan",
  other: "Other",
};

export default function LabReview({ loaderData, actionData }: Route.ComponentProps) {
  const { lab, documents, check, withinTolerance: inTolerance, incomplete, decisions } = loaderData;
  const navigation = useNavigation();
  const fmt = useFormat();
  const [form, fields] = useForm({
    id: "vetting-decision",
    lastResult: actionData?.result,
    onValidate: ({ formData }) => parseWithZod(formData, { schema: DecisionSchema }),
    shouldValidate: "onSubmit",
    shouldRevalidate: "onInput",
  });
  const busy = navigation.state !== "idle";
  const profile: [string, string][] = [
    ["Location", lab.location || "—"],
    ["Description", lab.description || "—"],
    ["ISO/IEC 17025 accreditation", lab.accreditationNumber ? `${lab.accreditationNumber}, expires ${lab.accreditationExpiry ?? "—"}` : "—"],
    [
      "Radiation licence",
      lab.attestation
        ? `${lab.attestation} (attested by ${lab.attestedBy ?? "a former member"} on ${lab.attestedAt ? fmt.date(lab.attestedAt) : "—"})`
        : "not attested",
    ],
  ];
  return (
    <div className="space-y-6">
      <PageHeader
        title={lab.name}
        subtitle={
          <Link to="/admin/vetting-queue" className="underline">
            Back to the vetting queue
          </Link>
        }
        actions={<VettingBadge state={lab.state} />}
      />
      <section className="card" aria-label="Lab profile">
        <dl className="grid gap-x-6 gap-y-2 text-sm sm:grid-cols-[14rem_1fr]">
          {profile.map(([k, v]) => (
            <div key={k} className="contents">
              <dt className="text-ink-500">{k}</dt>
              <dd>{v}</dd>
            </div>
          ))}
        </dl>
        {lab.reviewNote ? (
          <p className="mt-4 text-sm">
            Last decision ({lab.reviewedAt ? fmt.date(lab.reviewedAt) : "—"}): {lab.reviewNote}
          </p>
        ) : null}
      </section>

      <section aria-labelledby="documents-heading" className="space-y-2">
        <h2 id="documents-heading" className="text-lg font-semibold">
          Documents
        </h2>
        <p className="text-xs text-ink-600">Download links expire {DOWNLOAD_MINUTES} minutes after this page was opened; reload for fresh ones.</p>
        <TableCard caption="Vetting documents" columns={["Kind", "File", "Size", "SHA-256", "Uploaded"]}>
          {documents.length === 0 ? (
            <tr>
              <td colSpan={5}>No documents handed in yet.</td>
            </tr>
          ) : (
            documents.map((d) => (
              <tr key={d.id}>
                <td>{KIND_LABELS[d.kind] ?? d.kind}</td>
                <td>
                  <a href={d.url} className="font-semibold text-beam-700 underline">
                    {d.fileName}
                  </a>
                </td>
                <td>{(d.sizeBytes / 1024).toFixed(1)} kB</td>
                <td className="font-mono text-xs">{d.sha256?.slice(0, 16)}…</td>
                <td>{d.uploadedAt.slice(0, 16).replace("T", " ")}</td>
              </tr>
            ))
          )}
        </TableCard>
      </section>

      {check ? <CalibrationSummary check={check} /> : <p className="card text-sm">No calibration scan has been checked yet.</p>}

      {decisions.length ? (
        <Form method="post" className="card space-y-2" {...getFormProps(form)}>
          <h2 className="mb-2 text-lg font-semibold">Decision</h2>
          <Field label="Note to the lab and the record" id={fields.note.id} errors={fields.note.errors}>
            <textarea className="input min-h-20" {...getTextareaProps(fields.note)} />
          </Field>
          {incomplete && (decisions.includes("approve") || decisions.includes("reinstate")) ? (
            <p className="rounded-lg border border-caution-600/30 bg-caution-50 p-4 text-sm text-caution-700">{incomplete}</p>
          ) : null}
          {decisions.includes("approve") && !incomplete && !inTolerance ? (
            <div className="rounded-lg border border-caution-600/30 bg-caution-50 p-4">
              <p className="text-sm text-caution-700">
                The calibration deviation is outside ±{APPROVAL_TOLERANCE_A} Å (or the cell could not be refined). Approving needs an override with a written
                reason; the override is written to the audit log.
              </p>
              <label className="mt-2 flex gap-2 text-sm">
                <input {...getInputProps(fields.override, { type: "checkbox" })} />
                Override the calibration tolerance
              </label>
              <FieldErrors id={fields.override.errorId} errors={fields.override.errors} />
              <Field label="Reason for the override" id={fields.overrideReason.id} errors={fields.overrideReason.errors}>
                <textarea className="input min-h-16" {...getTextareaProps(fields.overrideReason)} />
              </Field>
            </div>
          ) : null}
          <FormError errors={form.errors} />
          <div className="flex flex-wrap gap-2">
            {decisions.map((d) => (
              <button
                key={d}
                type="submit"
                name="intent"
                value={d}
                disabled={busy || (incomplete !== null && DECISIONS[d].to === "approved")}
                className={d === "reject" || d === "suspend" ? "btn-danger" : "btn-primary"}
              >
                {DECISION_LABELS[d]}
              </button>
            ))}
          </div>
        </Form>
      ) : (
        <p className="card text-sm text-ink-600">Nothing to decide: the lab has not handed in its application for review.</p>
      )}
    </div>
  );
}

export function meta({ data }: Route.MetaArgs) {
  return [
    { title: `${data?.lab.name ?? "Lab"} — review — Diffractory` },
    {
      name: "description",
      content: "An admin's review of a lab's application: documents, radiation-licence attestation, the calibration check and the decision.",
    },
  ];
}
