// Uploads one file from the browser straight to storage through a presigned URL, with progress.
import { useRef, useState } from "react";

export interface UploadTarget {
  uploadUrl: string;
  storageKey: string;
  contentType: string;
}

export interface UploadedFile {
  storageKey: string;
  fileName: string;
  size: number;
  sha256: string;
}

/** SHA-256 of a file, read in chunks so large files do not sit in memory twice. */
export async function sha256Hex(file: Blob): Promise<string> {
  // Web Crypto has no streaming digest; files of the sizes handled here (≤ 50 MB) are hashed whole.
  const digest = await crypto.subtle.digest("SHA-256", await file.arrayBuffer());
  return [...new Uint8Array(digest)].map((b) => b.toString(16).padStart(2, "0")).join("");
}

function putWithProgress(url: string, file: File, contentType: string, onProgress: (fraction: number) => void) {
  return new Promise<void>((resolve, reject) => {
    const xhr = new XMLHttpRequest();
    xhr.open("PUT", url);
    xhr.setRequestHeader("Content-Type", contentType);
    xhr.upload.onprogress = (e) => e.lengthComputable && onProgress(e.loaded / e.total);
    xhr.onload = () => (xhr.status >= 200 && xhr.status < 300 ? resolve() : reject(new Error(`Storage answered ${xhr.status}.`)));
    xhr.onerror = () => reject(new Error("The upload was interrupted; check the connection and try again."));
    xhr.send(file);
  });
}

/**
 * A file input that asks `targetAction` (a route action answering `{ target }` or `{ error }`) for an
 * upload URL, PUTs the file there, and reports the stored file through `onUploaded`.
 */
export function DirectUpload({
  id,
  label,
  accept,
  targetAction,
  purpose,
  onUploaded,
  describedBy,
}: {
  id: string;
  label: string;
  accept: string;
  targetAction: string;
  purpose: string;
  onUploaded: (file: UploadedFile) => void;
  describedBy?: string;
}) {
  const [progress, setProgress] = useState<number | null>(null);
  const [error, setError] = useState<string | null>(null);
  const [done, setDone] = useState<string | null>(null);
  const input = useRef<HTMLInputElement>(null);

  async function upload(file: File) {
    setError(null);
    setDone(null);
    setProgress(0);
    try {
      const body = new FormData();
      body.set("intent", "upload-target");
      body.set("purpose", purpose);
      body.set("fileName", file.name);
      body.set("size", String(file.size));
      body.set("type", file.type);
      const res = await fetch(targetAction, { method: "POST", body, headers: { Accept: "application/json" } });
      const answer = (await res.json().catch(() => ({}))) as { target?: UploadTarget; error?: string };
      if (!res.ok || !answer.target) throw new Error(answer.error ?? `The upload could not start (${res.status}).`);
      const [sha256] = await Promise.all([sha256Hex(file), putWithProgress(answer.target.uploadUrl, file, answer.target.contentType, setProgress)]);
      setProgress(1);
      setDone(file.name);
      onUploaded({ storageKey: answer.target.storageKey, fileName: file.name, size: file.size, sha256 });
    } catch (err) {
      setProgress(null);
      setError((err as Error).message);
      if (input.current) input.current.value = "";
    }
  }

  return (
    <div>
      <label htmlFor={id} className="label">
        {label}
      </label>
      <input
        ref={input}
        id={id}
        type="file"
        accept={accept}
        aria-describedby={describedBy ?? `${id}-status`}
        className="block w-full text-sm file:mr-3 file:rounded-lg file:border-0 file:bg-beam-50 file:px-3 file:py-2 file:font-semibold file:text-beam-700"
        onChange={(e) => {
          const file = e.currentTarget.files?.[0];
          if (file) void upload(file);
        }}
      />
      <div id={`${id}-status`} className="min-h-5 pt-1 text-xs" aria-live="polite">
        {error ? <span className="text-danger-700">{error}</span> : null}
        {progress !== null && !done && !error ? (
          <span className="flex items-center gap-2 text-ink-600">
            <progress value={progress} max={1} className="h-2 w-40" aria-label={`Uploading ${label}`} />
            {Math.round(progress * 100)} %
          </span>
        ) : null}
        {done ? <span className="text-ok-700">✓ {done} uploaded</span> : null}
      </div>
    </div>
  );
}
