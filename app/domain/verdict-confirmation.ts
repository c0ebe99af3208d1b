// The confirmation asked before the lab delivers, or the client accepts, scans whose lattice check is not
// `consistent` (browser-safe): the files with their verdicts in the product's words, the refusal sentence
// when the confirmation is missing, and the line the timeline keeps (docs/design.md, "The lab's records").
import { VERDICT_WORDS } from "~/domain/check-result";
import type { Verdict } from "~/diffraction/verdict";

export interface FileVerdict {
  name: string;
  version: number;
  sampleLabel: string | null;
  verdict: Verdict;
}

/** The form field whose value "yes" confirms the delivery or acceptance despite the verdicts. */
export const CONFIRM_FIELD = "confirmVerdicts";

const verdictLabel = (v: Verdict) => VERDICT_WORDS[v]?.label ?? v;

/** "HC-2645-2_Co.xy v1 (sample HC-2645-2): Review" for each file, joined. */
export function verdictList(files: readonly FileVerdict[]): string {
  return files.map((f) => `${f.name} v${f.version}${f.sampleLabel ? ` (sample ${f.sampleLabel})` : ""}: ${verdictLabel(f.verdict)}`).join("; ");
}

/** Why the server refuses a move that was not confirmed; null when nothing needs confirming. */
export function unconfirmedProblem(files: readonly FileVerdict[], move: "deliver" | "accept"): string | null {
  if (files.length === 0) return null;
  const what = files.length === 1 ? "One scan's lattice check is" : `${files.length} scans' lattice checks are`;
  const act = move === "deliver" ? "deliver the data" : "accept the delivery";
  return `${what} not Consistent (${verdictList(files)}); read the check${files.length === 1 ? "" : "s"} and tick the confirmation to ${act} anyway.`;
}

/** The sentence added to the timeline note when the move was confirmed. */
export function confirmedNote(files: readonly FileVerdict[], move: "deliver" | "accept"): string {
  if (files.length === 0) return "";
  return `${move === "deliver" ? "Delivered" : "Accepted"} with the checks' verdicts read and confirmed: ${verdictList(files)}.`;
}
