// The analysis the lattice benchmark times, the same in the warm runs (bench/run.ts) and the cold child
// (bench/lattice-once.ts): a scan file's bytes read and checked by checkScanFile, as an upload is. Reading the
// file from disk is outside it.

import { checkScanFile, type LatticeCheckOptions, type LatticeCheckResult } from "../app/diffraction/check";

export function analyseBytes(bytes: Uint8Array, options: LatticeCheckOptions): LatticeCheckResult {
  const checked = checkScanFile(bytes, options);
  if (!checked.ok) throw new Error(checked.error);
  return checked.result;
}
