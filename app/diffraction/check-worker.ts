// A Web Worker that runs the lattice check off the browser's main thread (the preview before an upload).
import { checkScanText, type CheckScanResult, type LatticeCheckOptions } from "./check";

export interface CheckWorkerRequest {
  id: number;
  text: string;
  options: LatticeCheckOptions;
}

export type CheckWorkerResponse = { id: number } & (CheckScanResult | { ok: false; error: string });

const scope = self as unknown as {
  onmessage: ((event: MessageEvent<CheckWorkerRequest>) => void) | null;
  postMessage: (message: CheckWorkerResponse) => void;
};

scope.onmessage = (event) => {
  const { id, text, options } = event.data;
  try {
    scope.postMessage({ id, ...checkScanText(text, options) });
  } catch (err) {
    scope.postMessage({ id, ok: false, error: `The check could not be completed: ${err instanceof Error ? err.message : String(err)}` });
  }
};
