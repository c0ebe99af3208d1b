// Everything a published request asks for, as the client and the labs read it: range, source, temperatures,
// atmosphere, quality, deadline and budget; and the changes made after publishing (docs/design.md#the-requests-life).
import { useFormat } from "~/components/locale";
import { labelOf } from "~/domain/matching";
import { rangeText, type RequestSnapshot, sourceText, temperaturesText } from "~/domain/request-revisions";

/** What the needs block reads of a request: the snapshot a revision compares, with the revision it is at. */
type NeedsView = Omit<RequestSnapshot, "title" | "samples"> & { revision: number };

export function RequestNeeds({ request: r, children }: { request: NeedsView; children?: React.ReactNode }) {
  const fmt = useFormat();
  return (
    <section className="card mb-4 text-sm" aria-label="Measurement needs">
      <h2 className="mb-2 text-lg font-semibold">What is asked</h2>
      <dl className="grid grid-cols-[auto_1fr] gap-x-4 gap-y-1 sm:grid-cols-[auto_1fr_auto_1fr]">
        <dt className="text-ink-500">Technique</dt>
        <dd>{labelOf(r.technique)}</dd>
        <dt className="text-ink-500">Range</dt>
        <dd>{rangeText(r)}</dd>
        <dt className="text-ink-500">Preferred source</dt>
        <dd>{sourceText(r.preferredSource)}</dd>
        <dt className="text-ink-500">Temperatures</dt>
        <dd>{temperaturesText(r.temperaturePointsK)}</dd>
        <dt className="text-ink-500">Atmosphere</dt>
        <dd>{r.atmosphere}</dd>
        <dt className="text-ink-500">Quality</dt>
        <dd>{labelOf(r.quality)}</dd>
        <dt className="text-ink-500">Deadline</dt>
        <dd>{r.deadline ? fmt.date(r.deadline) : "—"}</dd>
        <dt className="text-ink-500">Budget</dt>
        <dd>{r.budgetMinor === null ? "not stated" : fmt.money(r.budgetMinor, r.currency)}</dd>
        <dt className="text-ink-500">Who may quote</dt>
        <dd>{r.visibility === "invited" ? "invited labs" : "every lab that can measure it"}</dd>
        <dt className="text-ink-500">Revision</dt>
        <dd>{r.revision === 1 ? "as published" : `${r.revision} (changed after publishing)`}</dd>
      </dl>
      {children}
    </section>
  );
}

/** The changes after publishing, newest first. */
export function RevisionList({ revisions, since = 0 }: { revisions: { revision: number; summary: string; at: Date | string }[]; since?: number }) {
  const fmt = useFormat();
  const shown = revisions.filter((v) => v.revision > since);
  if (shown.length === 0) return null;
  return (
    <section className="card mb-4 text-sm" aria-label="Changes after publishing">
      <h2 className="mb-2 text-lg font-semibold">Changes after publishing</h2>
      <ol className="space-y-1">
        {shown.map((v) => (
          <li key={v.revision}>
            <span className="text-ink-500">
              Revision {v.revision}, {fmt.date(v.at)}:
            </span>{" "}
            {v.summary}
          </li>
        ))}
      </ol>
    </section>
  );
}
