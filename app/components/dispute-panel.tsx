// Both sides of a dispute on the client's and the lab's order pages: the client's statement, the lab's answer,
// each side's evidence, and the forms a side may use while the dispute is open (docs/design.md#disputes).
import { useState } from "react";
import { Form, useNavigation } from "react-router";
import { DirectUpload, type UploadedFile } from "~/components/direct-upload";
import { useFormat } from "~/components/locale";
import { Badge } from "~/components/ui";
import { formatBytes, SCAN_TEXT_EXTENSIONS } from "~/domain/order-files";

/** What the panel shows: the dispute as `disputeCase` reads it (dates as ISO strings). */
export interface DisputePanelData {
  state: "open" | "resolved";
  reason: string;
  openedAt: string;
  openedBy: string | null;
  labStatement: string | null;
  labStatementAt: string | null;
  labStatementBy: string | null;
  evidence: { id: string; side: "client" | "lab"; fileName: string; sizeBytes: number; uploadedAt: string; uploadedBy: string | null }[];
}

const EVIDENCE_ACCEPT = [".pdf", ".png", ".jpg", ".jpeg", ...SCAN_TEXT_EXTENSIONS].join(",");

/** One side's evidence files, each downloadable by the parties and the admins. */
export function EvidenceList({ orderId, files, side }: { orderId: string; files: DisputePanelData["evidence"]; side: "client" | "lab" }) {
  const fmt = useFormat();
  const own = files.filter((f) => f.side === side);
  if (own.length === 0) return <p className="mt-2 text-xs text-ink-600">No evidence files.</p>;
  return (
    <ul className="mt-2 space-y-1 text-sm" aria-label={side === "client" ? "The client's evidence" : "The lab's evidence"}>
      {own.map((f) => (
        <li key={f.id}>
          <a href={`/orders/${orderId}/dispute/evidence/${f.id}`} className="font-medium text-beam-700 underline" download>
            {f.fileName}
          </a>{" "}
          <span className="text-xs text-ink-600">
            {formatBytes(f.sizeBytes)} · {f.uploadedBy ?? "a former member"} · {fmt.dateTime(f.uploadedAt)}
          </span>
        </li>
      ))}
    </ul>
  );
}

/** A direct upload of one evidence file whose stored key travels with the surrounding form. */
function EvidenceUpload({ orderId, id, label }: { orderId: string; id: string; label: string }) {
  const [file, setFile] = useState<UploadedFile | null>(null);
  return (
    <div>
      <DirectUpload
        id={id}
        label={label}
        accept={EVIDENCE_ACCEPT}
        targetAction={`/orders/${orderId}/dispute`}
        purpose="dispute-evidence"
        onUploaded={setFile}
      />
      <input type="hidden" name="storageKey" value={file?.storageKey ?? ""} />
      <input type="hidden" name="fileName" value={file?.fileName ?? ""} />
      <input type="hidden" name="sha256" value={file?.sha256 ?? ""} />
    </div>
  );
}

/** The dispute as one side of the order (or an admin, without forms) sees it, with that side's forms while it is open. */
export function DisputePanel({ orderId, side, dispute }: { orderId: string; side: "client" | "lab" | "admin"; dispute: DisputePanelData }) {
  const fmt = useFormat();
  const navigation = useNavigation();
  const busy = navigation.state !== "idle";
  const open = dispute.state === "open";
  return (
    <section className="card" aria-labelledby="dispute-heading">
      <div className="flex flex-wrap items-baseline justify-between gap-2">
        <h2 id="dispute-heading" className="text-lg font-semibold">
          {side === "admin" ? "Both statements" : "The dispute"}
        </h2>
        <Badge tone={open ? "danger" : "neutral"}>{open ? "Open" : "Decided"}</Badge>
      </div>
      <div className="mt-3 grid gap-4 md:grid-cols-2">
        <section aria-labelledby="dispute-client-side" className="rounded-lg border border-ink-200 p-3">
          <h3 id="dispute-client-side" className="text-sm font-semibold text-ink-800">
            The client&apos;s statement
          </h3>
          <blockquote className="mt-2 whitespace-pre-line border-l-4 border-ink-200 pl-3 text-sm text-ink-700">{dispute.reason}</blockquote>
          <p className="mt-1 text-xs text-ink-600">
            {dispute.openedBy ?? "A former member"}, {fmt.dateTime(dispute.openedAt)}
          </p>
          <EvidenceList orderId={orderId} files={dispute.evidence} side="client" />
        </section>
        <section aria-labelledby="dispute-lab-side" className="rounded-lg border border-ink-200 p-3">
          <h3 id="dispute-lab-side" className="text-sm font-semibold text-ink-800">
            The lab&apos;s statement
          </h3>
          {dispute.labStatement ? (
            <>
              <blockquote className="mt-2 whitespace-pre-line border-l-4 border-ink-200 pl-3 text-sm text-ink-700">{dispute.labStatement}</blockquote>
              <p className="mt-1 text-xs text-ink-600">
                {dispute.labStatementBy ?? "A former member"}, {dispute.labStatementAt ? fmt.dateTime(dispute.labStatementAt) : ""}
              </p>
            </>
          ) : (
            <p className="mt-2 text-sm text-ink-600">{side === "lab" ? "You have not answered yet." : "The lab has not answered yet."}</p>
          )}
          <EvidenceList orderId={orderId} files={dispute.evidence} side="lab" />
        </section>
      </div>
      {open && side === "lab" ? (
        <Form method="post" action={`/orders/${orderId}/dispute`} className="mt-4 space-y-3" aria-label="The lab's statement">
          <div>
            <label htmlFor="dispute-statement" className="label">
              {dispute.labStatement ? "Rewrite the lab's statement" : "The lab's statement for the admin"}
            </label>
            <textarea
              id="dispute-statement"
              name="statement"
              rows={4}
              className="input"
              defaultValue={dispute.labStatement ?? ""}
              aria-describedby="dispute-statement-hint"
            />
            <p id="dispute-statement-hint" className="mt-1 text-xs text-ink-600">
              The client and the admins read it. Say what was measured, how, and why the data meets the order.
            </p>
          </div>
          <EvidenceUpload orderId={orderId} id="dispute-lab-evidence" label="Evidence file (optional: PDF, image or text)" />
          <button type="submit" name="intent" value="statement" className="btn-primary" disabled={busy}>
            {dispute.labStatement ? "Send the new statement" : "Send the statement"}
          </button>
        </Form>
      ) : null}
      {open && side === "client" ? (
        <Form method="post" action={`/orders/${orderId}/dispute`} className="mt-4 space-y-3" aria-label="Add evidence">
          <EvidenceUpload orderId={orderId} id="dispute-client-evidence" label="Add evidence (PDF, image or text)" />
          <button type="submit" name="intent" value="evidence" className="btn-secondary" disabled={busy}>
            Add to the dispute
          </button>
        </Form>
      ) : null}
      {open && side === "lab" && dispute.labStatement ? (
        <Form method="post" action={`/orders/${orderId}/dispute`} className="mt-4 space-y-3" aria-label="Add evidence">
          <EvidenceUpload orderId={orderId} id="dispute-lab-more-evidence" label="Add further evidence" />
          <button type="submit" name="intent" value="evidence" className="btn-secondary" disabled={busy}>
            Add to the dispute
          </button>
        </Form>
      ) : null}
    </section>
  );
}
