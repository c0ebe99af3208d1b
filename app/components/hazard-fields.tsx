// A hazard declaration's fields — GHS pictograms, H-statements, special categories, handling notes, what happens
// after the measurement — and its safety data sheet uploaded straight to storage: a sample's in the request wizard
// and a material's (docs/design.md#hazard-declarations).
import { getInputProps, getTextareaProps, type FieldMetadata } from "@conform-to/react";
import { useState } from "react";
import { DirectUpload, type UploadedFile } from "~/components/direct-upload";
import { GhsIcon } from "~/components/ghs-icon";
import { Field, FieldErrors } from "~/components/ui";
import type { SpecialHazard } from "~/db/schema";
import { GHS_PICTOGRAMS, SPECIAL_CATEGORIES } from "~/domain/hazard-codes";
import { AFTER_MEASUREMENT } from "~/domain/hazards";
import type { HazardForm } from "~/domain/request-forms";

type HazardFieldset = { [K in keyof HazardForm]-?: FieldMetadata<HazardForm[K], Record<string, unknown>> };

/** Where the safety data sheet goes and what is on file; `errors` are the sheet's own (not a field's). */
export interface SdsUpload {
  uploadId: string;
  targetAction: string;
  onFile: string | null;
  errors?: string[];
  errorId: string;
}

/** A stored hazard declaration (a sample's or a material's) as the form's starting values. */
export function hazardDefaults(h: {
  ghsPictograms: string[];
  hStatements: string[];
  specialHazards: SpecialHazard[];
  handlingNotes: string | null;
  afterMeasurement: string;
  sdsStorageKey: string | null;
  sdsFileName: string | null;
}) {
  return {
    ghs: h.ghsPictograms,
    hStatements: h.hStatements.join(", "),
    special: Object.fromEntries(
      h.specialHazards.map((x) => [x.category, { declared: "on", details: x.details, activityBq: x.activityBq ? String(x.activityBq) : undefined }]),
    ),
    handlingNotes: h.handlingNotes ?? "",
    afterMeasurement: h.afterMeasurement,
    sdsStorageKey: h.sdsStorageKey ?? "",
    sdsFileName: h.sdsFileName ?? "",
  };
}

export function HazardFields({ fields: f, label, sds }: { fields: HazardFieldset; label: string; sds: SdsUpload }) {
  const special = f.special.getFieldset();
  const [uploaded, setUploaded] = useState<UploadedFile | null>(null);
  const chosen = new Set((f.ghs.initialValue as string[] | undefined) ?? []);
  return (
    <>
      <fieldset>
        <legend className="label">GHS pictograms</legend>
        <div className="grid gap-2 sm:grid-cols-3">
          {GHS_PICTOGRAMS.map((p) => (
            <label
              key={p.code}
              className="flex cursor-pointer items-center gap-2 rounded-lg border border-ink-200 p-2 has-[:checked]:border-beam-500 has-[:checked]:bg-beam-50"
            >
              <input type="checkbox" name={f.ghs.name} value={p.code} defaultChecked={chosen.has(p.code)} aria-label={`${p.code} ${p.name} (${label})`} />
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
        label={`H-statements of ${label}`}
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
                    aria-label={`${c.label} (${label})`}
                  />
                  {c.label}
                </label>
                <div>
                  <input
                    className="input"
                    placeholder="Details for the lab"
                    aria-label={`${c.label} details (${label})`}
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
                      aria-label={`Activity in Bq (${label})`}
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
      <Field label={`Handling notes for ${label}`} id={f.handlingNotes.id} errors={f.handlingNotes.errors}>
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
          id={sds.uploadId}
          label={`Safety data sheet of ${label} (PDF)`}
          accept="application/pdf,.pdf"
          targetAction={sds.targetAction}
          purpose="sds"
          onUploaded={setUploaded}
        />
        {sds.onFile && !uploaded ? <p className="text-xs text-ink-600">On file: {sds.onFile}. Upload again to replace it.</p> : null}
        <input type="hidden" name={f.sdsStorageKey.name} value={uploaded?.storageKey ?? String(f.sdsStorageKey.initialValue ?? "")} />
        <input type="hidden" name={f.sdsFileName.name} value={uploaded?.fileName ?? String(f.sdsFileName.initialValue ?? "")} />
        {uploaded ? <input type="hidden" name={f.sdsSha256.name} value={uploaded.sha256} /> : null}
        <FieldErrors id={sds.errorId} errors={sds.errors} />
      </div>
    </>
  );
}
