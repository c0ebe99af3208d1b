// A Web Worker that runs the lattice check off the browser's main thread (the preview before an upload). The file
// arrives as bytes, so binary scan formats preview as they are checked on the server.
import { checkScanFile, type CheckScanResult, type LatticeCheckOptions } from "./check";

export interface CheckWorkerRequest {
  id: number;
  /** The file's bytes (transferred, not copied). */
  bytes: ArrayBuffer;
  fileName?: string;
  options: LatticeCheckOptions;
}

export type CheckWorkerResponse = { id: number } & (CheckScanResult | { ok: false; error: string });

const scope = self as unknown as {
  onmessage: ((event: MessageEvent<CheckWorkerRequest>) => void) | null;
  postMessage: (message: CheckWorkerResponse) => void;
};

scope.onmessage = (event) => {
  const { id, bytes, fileName, options } = event.data;
  try {
    scope.postMessage({ id, ...checkScanFile(new Uint8Array(bytes), { ...options, fileName }) });
  } catch (err) {
    scope.postMessage({ id, ok: false, error: `The check could not be completed: ${err instanceof Error ? err.message : String(err)}` });
  }
};
