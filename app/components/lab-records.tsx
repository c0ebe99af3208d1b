// The lab's records on the order pages: the receipt record of each sample, the due date, the receipt form with
// a photo per sample, and the confirmation naming the verdicts before a delivery or an acceptance.
import { useState } from "react";
import { DirectUpload, type UploadedFile } from "~/components/direct-upload";
import { useFormat } from "~/components/locale";
import { Badge } from "~/components/ui";
import { VERDICT_WORDS } from "~/domain/check-result";
import {
  AMOUNT_UNITS,
  amountWords,
  RECEIPT_CONDITION_LABELS,
  RECEIPT_CONDITIONS,
  REFUSAL_REASON_LABELS,
  REFUSAL_REASONS,
  type DueStatus,
  type ReceiptCondition,
  type RefusalReason,
} from "~/domain/receipt";
import { CONFIRM_FIELD, type FileVerdict } from "~/domain/verdict-confirmation";

export interface ReceiptRow {
  sampleId: string;
  sampleLabel: string;
  condition: ReceiptCondition;
  sealIntact: boolean;
  amount: number | null;
  amountUnit: string | null;
  storagePlace: string;
  refusalReason: RefusalReason | null;
  note: string;
  by: string | null;
  at: string;
  photo: { name: string; url: string } | null;
}

/** The receipt record of each sample, as the lab wrote it; the client reads the same card. */
export function ReceiptRecordCard({ rows }: { rows: ReceiptRow[] }) {
  const fmt = useFormat();
  if (rows.length === 0) return null;
  const refused = rows.some((r) => r.refusalReason);
  return (
    <section className="card" aria-labelledby="receipt-heading" data-testid="receipt-record">
      <h2 id="receipt-heading" className="mb-3 text-lg font-semibold">
        {refused ? "Refusal on arrival" : "Receipt record"}
      </h2>
      <ul className="space-y-3">
        {rows.map((r) => (
          <li key={r.sampleId} className="rounded-lg border border-ink-200 p-3 text-sm" aria-label={`Receipt of ${r.sampleLabel}`}>
            <div className="flex flex-wrap items-center gap-2">
              <span className="font-semibold">{r.sampleLabel}</span>
              {r.refusalReason ? (
                <Badge tone="danger">Refused: {REFUSAL_REASON_LABELS[r.refusalReason]}</Badge>
              ) : (
                <Badge tone={r.condition === "good" ? "ok" : "caution"}>{RECEIPT_CONDITION_LABELS[r.condition] ?? r.condition}</Badge>
              )}
              {!r.refusalReason ? <Badge tone={r.sealIntact ? "ok" : "caution"}>{r.sealIntact ? "Seal intact" : "Seal broken"}</Badge> : null}
            </div>
            <dl className="mt-2 grid gap-x-4 gap-y-1 sm:grid-cols-[10rem_1fr]">
              {amountWords(r.amount, r.amountUnit) ? (
                <>
                  <dt className="text-ink-500">Received</dt>
                  <dd>{amountWords(r.amount, r.amountUnit)}</dd>
                </>
              ) : null}
              {r.storagePlace ? (
                <>
                  <dt className="text-ink-500">Stored at</dt>
                  <dd>{r.storagePlace}</dd>
                </>
              ) : null}
              {r.note ? (
                <>
                  <dt className="text-ink-500">Note</dt>
                  <dd>{r.note}</dd>
                </>
              ) : null}
              {r.photo ? (
                <>
                  <dt className="text-ink-500">Photo</dt>
                  <dd>
                    <a href={r.photo.url} className="text-beam-700 underline" target="_blank" rel="noreferrer">
                      {r.photo.name}
                    </a>
                  </dd>
                </>
              ) : null}
              <dt className="text-ink-500">Recorded</dt>
              <dd>
                {r.by ?? "Diffractory"} · <time dateTime={r.at}>{fmt.dateTime(r.at)}</time>
              </dd>
            </dl>
          </li>
        ))}
      </ul>
    </section>
  );
}

const DUE_CLASSES: Record<DueStatus["kind"], string> = {
  overdue: "text-danger-700 font-semibold",
  today: "text-caution-700 font-semibold",
  soon: "text-caution-700",
  on_time: "text-ink-700",
  none: "text-ink-600",
};

/** The due date with its status in words and colour ("Overdue by 2 days"). */
export function DueLine({ due }: { due: { at: string | null } & DueStatus }) {
  const fmt = useFormat();
  if (!due.at) return null;
  return (
    <p className="text-sm" data-testid="due-date">
      Data due <time dateTime={due.at}>{fmt.date(due.at)}</time>
      {due.kind !== "none" ? <span className={DUE_CLASSES[due.kind]}> · {due.words}</span> : null}
    </p>
  );
}

/** The due cell of the work queue: date, then the status in words and colour. */
export function DueCell({ due }: { due: { at: string | null } & DueStatus }) {
  const fmt = useFormat();
  if (!due.at) return <span className="text-xs text-ink-500">set on receipt</span>;
  return (
    <span className="whitespace-nowrap">
      {fmt.date(due.at)}
      {due.kind !== "none" ? <span className={`block text-xs ${DUE_CLASSES[due.kind]}`}>{due.words}</span> : null}
    </span>
  );
}

/** The receipt form of one sample: condition, seal, amount, storage place, photo and note. */
function SampleReceiptFields({ orderId, index, sample }: { orderId: string; index: number; sample: { id: string; label: string } }) {
  const [photo, setPhoto] = useState<UploadedFile | null>(null);
  const f = (name: string) => `records[${index}].${name}`;
  const id = (name: string) => `rec-${index}-${name}`;
  return (
    <fieldset className="space-y-3 rounded-lg border border-ink-200 p-3">
      <legend className="px-1 font-semibold">{sample.label}</legend>
      <input type="hidden" name={f("sampleId")} value={sample.id} />
      <div className="grid gap-3 sm:grid-cols-2">
        <div>
          <label htmlFor={id("condition")} className="label">
            Condition of {sample.label}
          </label>
          <select id={id("condition")} name={f("condition")} className="input" defaultValue="good">
            {RECEIPT_CONDITIONS.map((c) => (
              <option key={c} value={c}>
                {RECEIPT_CONDITION_LABELS[c]}
              </option>
            ))}
          </select>
        </div>
        <fieldset>
          <legend className="label">Seal of {sample.label} intact?</legend>
          <div className="flex gap-4 pt-2 text-sm">
            <label className="inline-flex items-center gap-1">
              <input type="radio" name={f("sealIntact")} value="yes" defaultChecked /> Yes
            </label>
            <label className="inline-flex items-center gap-1">
              <input type="radio" name={f("sealIntact")} value="no" /> No
            </label>
          </div>
        </fieldset>
        <div className="grid grid-cols-[1fr_6rem] gap-2">
          <div>
            <label htmlFor={id("amount")} className="label">
              Amount of {sample.label} received
            </label>
            <input id={id("amount")} name={f("amount")} type="number" step="any" min="0" className="input" />
          </div>
          <div>
            <label htmlFor={id("unit")} className="label">
              Unit
            </label>
            <select id={id("unit")} name={f("amountUnit")} className="input" defaultValue="mg" aria-label={`Unit of the amount of ${sample.label}`}>
              {AMOUNT_UNITS.map((u) => (
                <option key={u} value={u}>
                  {u}
                </option>
              ))}
            </select>
          </div>
        </div>
        <div>
          <label htmlFor={id("storage")} className="label">
            Storage place of {sample.label}
          </label>
          <input id={id("storage")} name={f("storagePlace")} className="input" placeholder="e.g. desiccator 2, shelf B" maxLength={200} />
        </div>
      </div>
      <DirectUpload
        id={id("photo")}
        label={`Photo of ${sample.label} (optional, PNG or JPEG)`}
        accept=".png,.jpg,.jpeg"
        targetAction={`/lab/orders/${orderId}/receipt-photo`}
        purpose="receipt-photo"
        onUploaded={setPhoto}
      />
      {photo ? (
        <>
          <input type="hidden" name={f("photoKey")} value={photo.storageKey} />
          <input type="hidden" name={f("photoName")} value={photo.fileName} />
          <input type="hidden" name={f("photoSha256")} value={photo.sha256} />
        </>
      ) : null}
      <div>
        <label htmlFor={id("note")} className="label">
          Note on {sample.label} (optional)
        </label>
        <input id={id("note")} name={f("note")} className="input" maxLength={1000} />
      </div>
    </fieldset>
  );
}

/** Every sample's receipt fields; the lab's note for the timeline and the submit button are the caller's. */
export function ReceiptFields({ orderId, samples }: { orderId: string; samples: { id: string; label: string }[] }) {
  return (
    <div className="space-y-3">
      {samples.map((s, i) => (
        <SampleReceiptFields key={s.id} orderId={orderId} index={i} sample={s} />
      ))}
    </div>
  );
}

/** A refusal reason per sample: "not refused" or one from the list. */
export function RefusalFields({ samples }: { samples: { id: string; label: string }[] }) {
  return (
    <div className="grid gap-3 sm:grid-cols-2">
      {samples.map((s, i) => (
        <div key={s.id}>
          <input type="hidden" name={`refused[${i}].sampleId`} value={s.id} />
          <label htmlFor={`refuse-${i}`} className="label">
            Why is {s.label} refused?
          </label>
          <select id={`refuse-${i}`} name={`refused[${i}].reason`} className="input" defaultValue="">
            <option value="">Not refused</option>
            {REFUSAL_REASONS.map((r) => (
              <option key={r} value={r}>
                {REFUSAL_REASON_LABELS[r]}
              </option>
            ))}
          </select>
        </div>
      ))}
    </div>
  );
}

/**
 * The scans whose check is not consistent, each with its verdict in the product's words, and the checkbox the
 * server asks for before the lab delivers or the client accepts.
 */
export function VerdictConfirmation({ files, move }: { files: FileVerdict[]; move: "deliver" | "accept" }) {
  if (files.length === 0) return null;
  return (
    <fieldset className="space-y-2 rounded-lg border border-caution-600/30 bg-caution-50 p-3 text-sm" aria-labelledby="verdicts-heading">
      <p id="verdicts-heading" className="font-semibold text-caution-700">
        <span aria-hidden="true">! </span>
        {files.length === 1 ? "One scan's lattice check is not Consistent" : `${files.length} scans' lattice checks are not Consistent`}
      </p>
      <ul className="space-y-1" data-testid="verdict-list">
        {files.map((f) => (
          <li key={`${f.name}-${f.version}`} className="flex flex-wrap items-center gap-2">
            <span className="font-medium">
              {f.name} v{f.version}
            </span>
            {f.sampleLabel ? <span className="text-ink-600">sample {f.sampleLabel}</span> : null}
            <Badge tone={VERDICT_WORDS[f.verdict]?.tone ?? "caution"}>{VERDICT_WORDS[f.verdict]?.label ?? f.verdict}</Badge>
            <span className="text-xs text-ink-600">{VERDICT_WORDS[f.verdict]?.meaning}</span>
          </li>
        ))}
      </ul>
      <label className="flex items-start gap-2">
        <input type="checkbox" name={CONFIRM_FIELD} value="yes" className="mt-1" />
        <span>
          {move === "deliver"
            ? "I have read these verdicts and deliver the data as it is."
            : "I have read these verdicts and accept the delivery as it is; the lab is paid."}
        </span>
      </label>
    </fieldset>
  );
}
