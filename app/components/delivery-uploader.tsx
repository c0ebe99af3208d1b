// The lab's delivery drop zone: files queued with their sample and kind, uploaded straight to storage with
// progress per file and overall, cancellable, and verified by the server before they count.
import { useCallback, useRef, useState, type ReactNode } from "react";
import { useDropzone } from "react-dropzone";
import {
  FILE_KINDS,
  FILE_KIND_LABELS,
  KIND_EXTENSIONS,
  MAX_FILE_BYTES,
  SCAN_INSTRUMENT_EXTENSIONS,
  SCAN_MAX_BYTES,
  SCAN_TEXT_EXTENSIONS,
  formatBytes,
  kindForName,
  type CompletedPart,
  type FileKind,
  type StartedUpload,
} from "~/domain/order-files";
import { UploadCancelled, uploadFile } from "~/components/order-upload";
import { RadiationMismatch } from "~/components/measurement-conditions";
import { proposeSample, unmatchedReason } from "~/domain/sample-match";

export interface QueuedFile {
  key: string;
  file: File;
  /** The name it is stored under: the file's own, or the name of the version it replaces. */
  name: string;
  kind: FileKind;
  sampleId: string;
  replaces: string | null;
  status: "ready" | "uploading" | "completing" | "stored" | "rejected" | "failed" | "cancelled";
  sent: number;
  message: string | null;
  /** What the server asks the lab to read about a stored scan before delivering (a radiation that differs from the quote's). */
  warnings?: string[];
  /** The sample was proposed from the file's name and waits for the lab's confirmation before the file goes up. */
  proposed?: boolean;
}

interface Sample {
  id: string;
  label: string;
}

async function postJson<T>(url: string, body: unknown): Promise<{ ok: boolean; status: number; body: T & { error?: string } }> {
  const res = await fetch(url, { method: "POST", headers: { "Content-Type": "application/json", Accept: "application/json" }, body: JSON.stringify(body) });
  const answer = (await res.json().catch(() => ({ error: `The server answered ${res.status}.` }))) as T & { error?: string };
  return { ok: res.ok, status: res.status, body: answer };
}

/** A problem with a file before any upload starts, or null. */
export function fileProblem(name: string, size: number, kind: FileKind): string | null {
  if (size <= 0) return "The file is empty.";
  if (size > MAX_FILE_BYTES) return `The file is ${formatBytes(size)}; the limit is ${formatBytes(MAX_FILE_BYTES)} per file.`;
  if (kind === "scan" && size > SCAN_MAX_BYTES)
    return `The file is ${formatBytes(size)}; a scan is read whole by the check, so it may be at most ${formatBytes(SCAN_MAX_BYTES)}. Export a smaller scan.`;
  if (!KIND_EXTENSIONS[kind].some((ext) => name.toLowerCase().endsWith(ext)))
    return `A ${FILE_KIND_LABELS[kind].toLowerCase()} must be ${KIND_EXTENSIONS[kind].join(", ")}.`;
  return null;
}

/** The queue of files to deliver to one order, and the uploads that run from it. */
export function useDeliveryQueue(orderId: string, samples: Sample[], onStored: () => void) {
  const [items, setItems] = useState<QueuedFile[]>([]);
  const itemsRef = useRef(items);
  itemsRef.current = items;
  const controllers = useRef(new Map<string, { abort: AbortController; fileId: string | null }>());
  const counter = useRef(0);
  const defaultSample = samples.length === 1 ? samples[0].id : "";

  const update = useCallback((key: string, patch: Partial<QueuedFile>) => setItems((all) => all.map((i) => (i.key === key ? { ...i, ...patch } : i))), []);

  const add = useCallback(
    (files: File[], preset?: { name: string; kind: FileKind; sampleId: string | null }) => {
      setItems((all) => [
        ...all,
        ...files.map((file) => {
          // Without a chosen sample, the sample whose label the file's name contains is proposed (to be confirmed).
          const proposed = !preset && !defaultSample ? proposeSample(file.name, samples) : null;
          return {
            key: `f${++counter.current}`,
            file,
            name: preset?.name ?? file.name,
            kind: preset?.kind ?? kindForName(file.name),
            sampleId: preset?.sampleId ?? proposed?.id ?? defaultSample,
            replaces: preset ? preset.name : null,
            status: "ready" as const,
            sent: 0,
            message: null,
            proposed: !!proposed,
          };
        }),
      ]);
    },
    [defaultSample, samples],
  );

  async function uploadOne(item: QueuedFile) {
    const abort = new AbortController();
    const entry = { abort, fileId: null as string | null };
    controllers.current.set(item.key, entry);
    update(item.key, { status: "uploading", sent: 0, message: null });
    const base = `/lab/orders/${orderId}/uploads`;
    try {
      const result = await uploadFile({
        file: item.file,
        signal: abort.signal,
        start: async () => {
          const res = await postJson<StartedUpload>(base, { name: item.name, size: item.file.size, kind: item.kind, sampleId: item.sampleId || null });
          if (!res.ok) throw new Error(res.body.error ?? "The upload could not start.");
          return res.body;
        },
        onStarted: (started) => (entry.fileId = started.fileId),
        onProgress: (p) => update(item.key, { sent: p.sent, status: p.phase === "completing" ? "completing" : "uploading" }),
        complete: async (fileId, body: { sha256: string; parts?: CompletedPart[] }) =>
          postJson<{ state: string; version: number; scanFormatLabel?: string; warnings?: string[] }>(`${base}/${fileId}`, { intent: "complete", ...body }),
      });
      if (result.ok) {
        const format = result.body.scanFormatLabel ? ` Read as ${result.body.scanFormatLabel}.` : "";
        update(item.key, {
          status: "stored",
          sent: item.file.size,
          message: `Stored and verified as version ${result.body.version}.${format}`,
          warnings: result.body.warnings ?? [],
        });
      } else update(item.key, { status: "rejected", message: result.body.error ?? "The server refused the file." });
      onStored();
    } catch (err) {
      if (err instanceof UploadCancelled || abort.signal.aborted) {
        if (entry.fileId) await postJson(`${base}/${entry.fileId}`, { intent: "abort" }).catch(() => null);
        update(item.key, { status: "cancelled", message: "Cancelled; nothing was kept." });
      } else {
        if (entry.fileId) await postJson(`${base}/${entry.fileId}`, { intent: "abort" }).catch(() => null);
        update(item.key, { status: "failed", message: (err as Error).message });
      }
    } finally {
      controllers.current.delete(item.key);
    }
  }

  /** Uploads every ready file, one after the other (each one's parts run a few at a time). */
  async function uploadAll() {
    const uploadable = (i: QueuedFile) =>
      i.status === "ready" && !i.proposed && !fileProblem(i.name, i.file.size, i.kind) && (i.kind !== "scan" || i.sampleId || samples.length === 0);
    for (const { key } of items.filter(uploadable)) {
      // Read the queue as it is now: a file may have been cancelled while the ones before it went up.
      const current = itemsRef.current.find((i) => i.key === key);
      if (current && uploadable(current)) await uploadOne(current);
    }
  }

  function cancel(key: string) {
    const running = controllers.current.get(key);
    if (running) running.abort.abort();
    else update(key, { status: "cancelled", message: "Removed from the queue." });
  }

  const remove = (key: string) => setItems((all) => all.filter((i) => i.key !== key));
  /** The lab confirms the samples proposed from the files' names. */
  const confirmProposals = () => setItems((all) => all.map((i) => (i.proposed ? { ...i, proposed: false } : i)));
  return { items, add, update, uploadAll, cancel, remove, confirmProposals };
}

export type DeliveryQueue = ReturnType<typeof useDeliveryQueue>;

const ACTIVE = new Set(["uploading", "completing"]);

/** The drop zone and the queue with progress bars; `preview` renders a slot under each queued file. */
export function DeliveryUploader({ queue, samples, preview }: { queue: DeliveryQueue; samples: Sample[]; preview?: (item: QueuedFile) => ReactNode }) {
  const { items, add, update, uploadAll, cancel, remove, confirmProposals } = queue;
  const { getRootProps, getInputProps, isDragActive } = useDropzone({ onDrop: (files) => add(files), multiple: true });
  const inQueue = items.filter((i) => i.status !== "cancelled");
  const total = inQueue.reduce((s, i) => s + i.file.size, 0);
  const sent = inQueue.reduce((s, i) => s + (i.status === "stored" || i.status === "rejected" ? i.file.size : i.sent), 0);
  const busy = items.some((i) => ACTIVE.has(i.status));
  const ready = items.filter((i) => i.status === "ready");
  const proposals = ready.filter((i) => i.proposed);
  // Scans that cannot go up until the lab chooses their sample: said plainly, never skipped in silence.
  const waiting = ready.filter((i) => i.kind === "scan" && samples.length > 0 && !i.sampleId);
  const goingUp = ready.filter((i) => !i.proposed && !waiting.includes(i) && !fileProblem(i.name, i.file.size, i.kind));

  return (
    <section className="space-y-4" aria-labelledby="upload-heading">
      <h2 id="upload-heading" className="text-lg font-semibold">
        Upload files
      </h2>
      <div
        {...getRootProps({
          className: `card cursor-pointer border-2 border-dashed text-center ${isDragActive ? "border-beam-500 bg-beam-50" : "border-ink-300"}`,
        })}
      >
        <input {...getInputProps({ "aria-label": "Choose files to deliver" })} />
        <p className="font-medium text-ink-800">{isDragActive ? "Drop the files here" : "Drop scans and reports here, or click to choose files"}</p>
        <p className="mt-1 text-xs text-ink-600">
          Scans: text files ({SCAN_TEXT_EXTENSIONS.join(", ")}) or your instrument&apos;s own files ({SCAN_INSTRUMENT_EXTENSIONS.join(", ")}), up to{" "}
          {formatBytes(SCAN_MAX_BYTES)} each. Reports: PDF. At most {formatBytes(MAX_FILE_BYTES)} per file. The bytes go straight to storage; the server then
          checks the SHA-256 your browser computes while reading the file, and reads each scan at once: a file that is no readable scan is refused with the
          reason.
        </p>
      </div>

      {items.length ? (
        <div className="card space-y-4">
          <div>
            <div className="flex items-center justify-between text-sm">
              <span className="font-medium">Overall</span>
              <span className="text-ink-600" data-testid="overall-progress">
                {formatBytes(sent)} of {formatBytes(total)} · {total ? Math.round((100 * sent) / total) : 0} %
              </span>
            </div>
            <progress className="mt-1 h-2 w-full" value={sent} max={total || 1} aria-label="Overall upload progress" />
          </div>
          <ul className="divide-y divide-ink-100">
            {items.map((item) => {
              const problem = item.status === "ready" ? fileProblem(item.name, item.file.size, item.kind) : null;
              const needsSample = item.status === "ready" && item.kind === "scan" && samples.length > 0 && !item.sampleId;
              return (
                <li key={item.key} className="space-y-2 py-3" data-upload={item.name}>
                  <div className="flex flex-wrap items-center justify-between gap-3">
                    <div>
                      <span className="font-medium">{item.name}</span> <span className="text-xs text-ink-500">{formatBytes(item.file.size)}</span>
                      {item.replaces ? (
                        <span className="block text-xs text-ink-600">
                          New version of {item.replaces} (from {item.file.name})
                        </span>
                      ) : null}
                    </div>
                    <div className="flex flex-wrap items-center gap-2 text-sm">
                      <label className="sr-only" htmlFor={`${item.key}-sample`}>
                        Sample for {item.name}
                      </label>
                      <select
                        id={`${item.key}-sample`}
                        className="input w-auto py-1"
                        value={item.sampleId}
                        disabled={item.status !== "ready"}
                        onChange={(e) => update(item.key, { sampleId: e.currentTarget.value, proposed: false })}
                      >
                        <option value="">No sample</option>
                        {samples.map((s) => (
                          <option key={s.id} value={s.id}>
                            {s.label}
                          </option>
                        ))}
                      </select>
                      <label className="sr-only" htmlFor={`${item.key}-kind`}>
                        Kind of {item.name}
                      </label>
                      <select
                        id={`${item.key}-kind`}
                        className="input w-auto py-1"
                        value={item.kind}
                        disabled={item.status !== "ready" || !!item.replaces}
                        onChange={(e) => update(item.key, { kind: e.currentTarget.value as FileKind })}
                      >
                        {FILE_KINDS.map((k) => (
                          <option key={k} value={k}>
                            {FILE_KIND_LABELS[k]}
                          </option>
                        ))}
                      </select>
                      {ACTIVE.has(item.status) || item.status === "ready" ? (
                        <button type="button" className="btn-secondary py-1" onClick={() => cancel(item.key)} aria-label={`Cancel ${item.name}`}>
                          Cancel
                        </button>
                      ) : (
                        <button type="button" className="text-xs text-ink-600 underline" onClick={() => remove(item.key)} aria-label={`Clear ${item.name}`}>
                          Clear
                        </button>
                      )}
                    </div>
                  </div>
                  <div className="flex items-center gap-3 text-xs">
                    <progress
                      className="h-2 w-64"
                      value={item.status === "stored" ? item.file.size : item.sent}
                      max={item.file.size}
                      aria-label={`Upload progress of ${item.name}`}
                    />
                    <span
                      aria-live="polite"
                      className={
                        item.status === "rejected" || item.status === "failed" ? "text-danger-700" : item.status === "stored" ? "text-ok-700" : "text-ink-600"
                      }
                    >
                      {problem ??
                        (needsSample ? `Waits for a sample: ${unmatchedReason(item.name, samples)}` : null) ??
                        (item.proposed && item.status === "ready" ? "Sample proposed from the file name; confirm it below." : null) ??
                        item.message ??
                        STATUS_WORDS[item.status](item)}
                    </span>
                  </div>
                  {item.warnings?.map((w) => (
                    <RadiationMismatch key={w} sentence={w} />
                  ))}
                  {preview ? <div data-slot="check-preview">{preview(item)}</div> : null}
                </li>
              );
            })}
          </ul>
          {proposals.length ? (
            <fieldset className="space-y-2 rounded-lg border border-beam-200 bg-beam-50 p-3 text-sm" aria-labelledby="proposals-heading">
              <p id="proposals-heading" className="font-semibold">
                Samples proposed from the file names — confirm before the files go up
              </p>
              <ul className="list-inside list-disc" data-testid="sample-proposals">
                {proposals.map((i) => (
                  <li key={i.key}>
                    {i.name} → {samples.find((s) => s.id === i.sampleId)?.label ?? "?"}
                  </li>
                ))}
              </ul>
              <p className="text-xs text-ink-600">A wrong match is changed with the file&apos;s sample menu above.</p>
              <button type="button" className="btn-secondary" onClick={confirmProposals}>
                Confirm these samples
              </button>
            </fieldset>
          ) : null}
          {waiting.length ? (
            <p role="status" className="rounded-lg border border-caution-600/30 bg-caution-50 p-3 text-sm text-caution-700" data-testid="waiting-for-sample">
              {waiting.length === 1 ? "One scan waits" : `${waiting.length} scans wait`} for a sample and will not be uploaded until you choose it:{" "}
              {waiting.map((i) => i.name).join(", ")}. A scan is checked against its sample&apos;s declared cell, so it cannot count without one.
            </p>
          ) : null}
          {busy || goingUp.length ? (
            <button type="button" className="btn-primary" disabled={busy} onClick={() => void uploadAll()}>
              {busy ? "Uploading…" : `Upload ${goingUp.length} ${goingUp.length === 1 ? "file" : "files"}`}
            </button>
          ) : null}
        </div>
      ) : null}
    </section>
  );
}

const STATUS_WORDS: Record<QueuedFile["status"], (i: QueuedFile) => string> = {
  ready: () => "Ready to upload",
  uploading: (i) => `Uploading · ${Math.round((100 * i.sent) / Math.max(1, i.file.size))} %`,
  completing: () => "Verifying the stored file…",
  stored: () => "Stored and verified",
  rejected: () => "Refused",
  failed: () => "Failed",
  cancelled: () => "Cancelled",
};
