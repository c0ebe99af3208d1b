// Uploads one file to presigned storage targets: reads it in part-sized chunks, hashes every chunk into one
// SHA-256 on the way, PUTs single files or parts (a few at a time, each tried up to three times), then completes.
// Browser-safe; the upload benchmark runs the same code in Node with its own `put`.
import { sha256 } from "@noble/hashes/sha2.js";
import { bytesToHex } from "@noble/hashes/utils.js";
import type { CompletedPart, StartedUpload } from "~/domain/order-files";

/** PUTs bytes to a URL and returns the answer's ETag; reports bytes sent so far. */
export type PutBytes = (
  url: string,
  body: Uint8Array,
  headers: Record<string, string>,
  onSent: (bytes: number) => void,
  signal: AbortSignal,
) => Promise<string>;

export interface UploadProgress {
  phase: "starting" | "uploading" | "completing";
  sent: number;
  total: number;
}

export interface UploadFileOptions<C> {
  file: Blob;
  start: () => Promise<StartedUpload>;
  complete: (fileId: string, body: { sha256: string; parts?: CompletedPart[] }) => Promise<C>;
  onProgress?: (progress: UploadProgress) => void;
  /** Called with the file id as soon as the upload has one, so a cancel can tell the server. */
  onStarted?: (started: StartedUpload) => void;
  signal?: AbortSignal;
  put?: PutBytes;
  /** Parts in flight at once. */
  concurrency?: number;
  /** Tries per part (or per single PUT) and the first pause between them; the pause doubles. */
  tries?: number;
  backoffMs?: number;
}

export class UploadCancelled extends Error {
  constructor() {
    super("The upload was cancelled.");
  }
}

/** The browser's PUT: XMLHttpRequest, because fetch reports no upload progress. */
export const xhrPut: PutBytes = (url, body, headers, onSent, signal) =>
  new Promise((resolve, reject) => {
    const xhr = new XMLHttpRequest();
    xhr.open("PUT", url);
    for (const [k, v] of Object.entries(headers)) xhr.setRequestHeader(k, v);
    xhr.upload.onprogress = (e) => onSent(e.loaded);
    xhr.onload = () =>
      xhr.status >= 200 && xhr.status < 300 ? resolve(xhr.getResponseHeader("ETag") ?? "") : reject(new Error(`Storage answered ${xhr.status}.`));
    xhr.onerror = () => reject(new Error("The connection to storage was interrupted."));
    xhr.onabort = () => reject(new UploadCancelled());
    signal.addEventListener("abort", () => xhr.abort(), { once: true });
    xhr.send(body as Uint8Array<ArrayBuffer>);
  });

/** A PUT with fetch, for uploads from Node (the upload benchmark, the system tests); no progress within one part. */
export const fetchPut: PutBytes = async (url, body, headers, onSent, signal) => {
  const res = await fetch(url, { method: "PUT", body: body as Uint8Array<ArrayBuffer>, headers, signal });
  if (!res.ok) throw new Error(`Storage answered ${res.status}.`);
  await res.arrayBuffer();
  onSent(body.length);
  return res.headers.get("etag") ?? "";
};

const pause = (ms: number, signal: AbortSignal) =>
  new Promise<void>((resolve, reject) => {
    const t = setTimeout(resolve, ms);
    signal.addEventListener("abort", () => (clearTimeout(t), reject(new UploadCancelled())), { once: true });
  });

async function withTries<T>(tries: number, backoffMs: number, signal: AbortSignal, attempt: () => Promise<T>): Promise<T> {
  for (let n = 1; ; n++) {
    if (signal.aborted) throw new UploadCancelled();
    try {
      return await attempt();
    } catch (err) {
      if (err instanceof UploadCancelled || signal.aborted || n >= tries) throw err;
      await pause(backoffMs * 2 ** (n - 1), signal);
    }
  }
}

/** Uploads `file` through the targets `start` returns, then calls `complete` with the SHA-256 and part ETags. */
export async function uploadFile<C>(options: UploadFileOptions<C>): Promise<C> {
  const { file, onProgress = () => {}, put = xhrPut, concurrency = 3, tries = 3, backoffMs = 500 } = options;
  const controller = new AbortController();
  const outer = options.signal;
  if (outer?.aborted) throw new UploadCancelled();
  outer?.addEventListener("abort", () => controller.abort(), { once: true });
  const signal = controller.signal;
  const total = file.size;
  onProgress({ phase: "starting", sent: 0, total });
  const started = await options.start();
  options.onStarted?.(started);
  const { upload } = started;
  const hash = sha256.create();

  if ("url" in upload) {
    const bytes = new Uint8Array(await file.arrayBuffer());
    hash.update(bytes);
    await withTries(tries, backoffMs, signal, () => put(upload.url, bytes, upload.headers, (sent) => onProgress({ phase: "uploading", sent, total }), signal));
    onProgress({ phase: "completing", sent: total, total });
    return options.complete(started.fileId, { sha256: bytesToHex(hash.digest()) });
  }

  const sentByPart = new Array<number>(upload.parts.length).fill(0);
  const report = () => onProgress({ phase: "uploading", sent: sentByPart.reduce((a, b) => a + b, 0), total });
  const etags: CompletedPart[] = [];
  const inFlight = new Set<Promise<void>>();
  let failure: unknown = null;
  for (const [i, part] of upload.parts.entries()) {
    if (failure) break;
    // Read the parts in order, so the one running hash sees the bytes in file order.
    const bytes = new Uint8Array(await file.slice(i * upload.partSize, Math.min(total, (i + 1) * upload.partSize)).arrayBuffer());
    hash.update(bytes);
    const running: Promise<void> = withTries(tries, backoffMs, signal, () => {
      sentByPart[i] = 0;
      return put(part.url, bytes, {}, (sent) => ((sentByPart[i] = sent), report()), signal);
    })
      .then((etag) => {
        if (!etag) throw new Error("Storage did not return the part's ETag.");
        etags.push({ partNumber: part.partNumber, etag });
      })
      .catch((err) => {
        failure ??= err;
        controller.abort();
      })
      .finally(() => inFlight.delete(running));
    inFlight.add(running);
    while (inFlight.size >= concurrency) await Promise.race(inFlight);
  }
  await Promise.all(inFlight);
  if (failure) throw outer?.aborted ? new UploadCancelled() : failure;
  onProgress({ phase: "completing", sent: total, total });
  return options.complete(started.fileId, { sha256: bytesToHex(hash.digest()), parts: etags.sort((a, b) => a.partNumber - b.partNumber) });
}
