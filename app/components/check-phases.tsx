// The check screen's answers about phases: the acceptance window beside the verdict, the declared phases (main and
// expected) with their refined cells and why each counts as present or absent, and the candidate forms with the
// one that explains the scan (docs/decisions/012-phases-and-window.md).
import { CellSymbol, Formula } from "~/components/symbols";
import type { CandidateResult } from "~/diffraction/phases";
import { phaseColour } from "./check-plot";
import {
  type CheckScreenResult,
  candidateHeadline,
  candidateName,
  cellLine,
  phaseCellLines,
  phaseName,
  phasesOf,
  rFactor,
  reportsPhases,
  systemWords,
  verdictLabel,
  windowAnswer,
  windowRows,
} from "./check-words";
import { Badge, TableCard } from "./ui";
import { VERDICT_WORDS } from "~/domain/check-result";

/** A row's header cell in a body row: the table's header style without its capitals (a and A differ in a cell). */
export const ROW_HEADER = "align-top text-sm font-medium tracking-normal text-ink-900 normal-case";

/** The second answer, beside the verdict: is the main phase's refined cell within the client's acceptance window? */
export function WindowPanel({ result }: { result: CheckScreenResult }) {
  const answer = windowAnswer(result);
  const rows = windowRows(result.window);
  return (
    <section className="card min-w-0 space-y-2 p-3 sm:p-4 print:shadow-none" aria-labelledby="window-heading">
      <div className="flex flex-wrap items-center gap-2">
        <h2 id="window-heading" className="text-base font-semibold">
          Acceptance window
        </h2>
        <span data-testid="window-answer">
          <Badge tone={answer.tone}>{answer.label}</Badge>
        </span>
      </div>
      <p className="text-sm text-ink-800">{answer.meaning}</p>
      {rows.length ? (
        <div className="overflow-x-auto" {...{ tabIndex: 0, role: "region", "aria-label": "Acceptance window table" }}>
          <table className="table text-xs [&_td]:px-2 [&_td]:py-1 [&_th]:px-2 [&_th]:py-1">
            <caption className="sr-only">Acceptance window of the main phase&apos;s cell</caption>
            <thead>
              <tr>
                <th scope="col">Parameter</th>
                <th scope="col">Declared ± window</th>
                <th scope="col">Refined ± s.u.</th>
                <th scope="col">Margin</th>
                <th scope="col">Inside</th>
              </tr>
            </thead>
            <tbody>
              {rows.map((r) => (
                <tr key={r.key} data-inside={r.inside === null ? "unknown" : String(r.inside)}>
                  <th scope="row" className={ROW_HEADER}>
                    <CellSymbol name={r.name} />
                  </th>
                  <td className="tabular-nums">
                    <span className="whitespace-nowrap">{r.window}</span>
                    <span className="block text-xs whitespace-nowrap text-ink-600">{r.limits}</span>
                  </td>
                  <td className="tabular-nums">{r.refined}</td>
                  <td className={`tabular-nums whitespace-nowrap ${r.inside === false ? "font-semibold text-danger-700" : ""}`}>{r.margin}</td>
                  <td>{r.inside === null ? "—" : r.inside ? <Badge tone="ok">Yes</Badge> : <Badge tone="danger">No</Badge>}</td>
                </tr>
              ))}
            </tbody>
          </table>
          <details className="mt-1 text-xs text-ink-600">
            <summary className="cursor-pointer text-beam-700">What the margin means</summary>
            The margin is the distance from the refined value to the nearer limit (the limits are under each declared value): positive inside the window,
            negative outside. A value on a limit counts as inside; the standard uncertainty is shown beside it and does not move the limits.
          </details>
        </div>
      ) : null}
    </section>
  );
}

/** One row per declared phase: role, name, system, refined cell (fixed parameters as fixed), peaks, present or absent and why. */
export function PhasesTable({ result }: { result: CheckScreenResult }) {
  const phases = phasesOf(result);
  if (phases.length === 0) return null;
  const older = !reportsPhases(result);
  return (
    <section className="space-y-2" aria-labelledby="phases-heading">
      <h2 id="phases-heading" className="text-lg font-semibold">
        Phases
      </h2>
      {older ? (
        <p className="text-sm text-ink-600">This check was made before phases were reported one by one: it shows the declared phase as the main phase.</p>
      ) : null}
      <TableCard columns={["Role", "Phase", "System", "Refined cell ± s.u.", "Peaks", "In the scan"]} caption="Declared phases and what the scan shows of each">
        {phases.map((p, i) => (
          <tr key={`${i}-${p.name ?? ""}`} data-present={String(p.present)}>
            <td>{p.role === "main" ? <Badge tone="brand">Main</Badge> : <Badge tone="neutral">Expected</Badge>}</td>
            <th scope="row" className={ROW_HEADER}>
              <span className="inline-flex items-center gap-1.5">
                <svg viewBox="0 0 12 12" className="h-3 w-3 shrink-0" aria-hidden="true" focusable="false">
                  <path d="M3 1v10M9 1v10" stroke={phaseColour(i)} strokeWidth="2" strokeDasharray={p.present ? undefined : "2 2"} />
                </svg>
                <Formula>{phaseName(p, i)}</Formula>
              </span>
            </th>
            <td className="whitespace-nowrap">{systemWords(p)}</td>
            <td>
              <ul className="space-y-0.5 text-xs tabular-nums">
                {phaseCellLines(p).map((line) => (
                  <li key={line.name} className={line.fixed ? "text-ink-600" : "whitespace-nowrap"}>
                    <span className="inline-block w-4 font-medium text-ink-700">
                      <CellSymbol name={line.name} />
                    </span>{" "}
                    {line.value}
                  </li>
                ))}
              </ul>
              {!p.cell ? <p className="mt-1 text-xs text-ink-600">Not refined: the declared cell is shown.</p> : null}
            </td>
            <td className="tabular-nums">
              {p.peaks}
              {p.M20 != null ? <span className="block text-xs text-ink-600">M20 {p.M20.toFixed(1)}</span> : null}
            </td>
            <td className="min-w-56">
              {p.present ? <Badge tone="ok">Present</Badge> : <Badge tone="caution">Absent</Badge>}
              {p.reasons.length ? (
                <ul className="mt-1 list-disc space-y-0.5 pl-4 text-xs text-ink-700">
                  {p.reasons.map((r) => (
                    <li key={r}>{r}</li>
                  ))}
                </ul>
              ) : null}
            </td>
          </tr>
        ))}
      </TableCard>
    </section>
  );
}

/** The candidate forms: one row each with the verdict it would get, and which one explains the scan. */
export function CandidatesTable({ candidates }: { candidates: readonly CandidateResult[] }) {
  return (
    <section className="space-y-2" aria-labelledby="candidates-heading">
      <h2 id="candidates-heading" className="text-lg font-semibold">
        Candidate forms
      </h2>
      <p className="text-ink-800" data-testid="candidate-headline">
        {candidateHeadline(candidates)}
      </p>
      <TableCard
        columns={["Candidate", "System", "Declared cell", "Verdict it would get", "Strong peaks explained", "M20", "Rwp", "Chosen"]}
        caption="Candidate forms of the main phase and how well each explains the scan"
      >
        {candidates.map((c, i) => (
          <tr key={`${i}-${c.name ?? ""}`} data-chosen={String(c.chosen)} className={c.chosen ? "bg-beam-50" : ""}>
            <th scope="row" className={ROW_HEADER}>
              <Formula>{candidateName(c, i)}</Formula>
              {i === 0 ? <span className="block text-xs font-normal text-ink-600">the main declaration</span> : null}
            </th>
            <td className="whitespace-nowrap">{systemWords(c)}</td>
            <td className="text-xs tabular-nums">{cellLine(c.cell, c.system)}</td>
            <td>
              <Badge tone={VERDICT_WORDS[c.verdict]?.tone ?? "neutral"}>{verdictLabel(c.verdict)}</Badge>
            </td>
            <td className="tabular-nums">
              {c.strongIndexed} of {c.strongCount}
            </td>
            <td className="tabular-nums">{c.M20 != null ? c.M20.toFixed(1) : "—"}</td>
            <td className="tabular-nums">{c.Rwp != null ? rFactor(c.Rwp) : "—"}</td>
            <td>{c.chosen ? <Badge tone="brand">Chosen</Badge> : <span className="text-ink-600">—</span>}</td>
          </tr>
        ))}
      </TableCard>
    </section>
  );
}
