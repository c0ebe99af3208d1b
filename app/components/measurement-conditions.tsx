// The measurement conditions a scan file states, in plain words: a panel for the check screen, a fold-out line
// for file lists, and the caution when the file's radiation differs from the quote's instrument.
import type { ScanMetadata } from "~/diffraction/readers/types";
import { enteredConditionRows, measurementConditions, measurementSummary, type MeasurementConditions } from "~/domain/measurement";

export interface MeasurementInfo {
  formatLabel?: string | null;
  metadata?: ScanMetadata | null;
  points?: number | null;
  twoThetaMin?: number | null;
  twoThetaMax?: number | null;
}

/** The rows as a description list; says so when the file states nothing beyond its format. */
export function ConditionsList({ info }: { info: MeasurementInfo }) {
  const rows = measurementConditions(info);
  return (
    <>
      <dl className="grid gap-x-6 gap-y-1 text-sm sm:grid-cols-[12rem_1fr]" data-testid="measurement-conditions">
        {rows.map((r) => (
          <div key={r.label} className="contents">
            <dt className="text-ink-500">{r.label}</dt>
            <dd className="break-words">{r.value}</dd>
          </div>
        ))}
      </dl>
      {rows.length <= 2 ? <p className="mt-1 text-xs text-ink-600">The file states nothing else about how it was measured.</p> : null}
    </>
  );
}

/** The caution shown wherever a scan measured with another source than the quote's instrument appears. */
export function RadiationMismatch({ sentence }: { sentence: string | null | undefined }) {
  if (!sentence) return null;
  return (
    <p className="rounded-md border border-caution-600/30 bg-caution-50 px-2 py-1 text-xs text-caution-700" role="note" data-testid="radiation-mismatch">
      <span aria-hidden="true">! </span>
      {sentence}
    </p>
  );
}

/** The check screen's panel: what the file states about its measurement. */
export function MeasurementPanel({ info, mismatch }: { info: MeasurementInfo; mismatch?: string | null }) {
  return (
    <section className="card space-y-3" aria-labelledby="measurement-heading">
      <h2 id="measurement-heading" className="text-lg font-semibold">
        Measurement conditions
      </h2>
      <p className="text-xs text-ink-600">As the scan file states them; only the range is read from the data itself.</p>
      <RadiationMismatch sentence={mismatch} />
      <ConditionsList info={info} />
    </section>
  );
}

/** For a file list: the format, source and range on one line, folding out to every stated condition. */
export function MeasurementFoldout({ info, name }: { info: MeasurementInfo; name: string }) {
  const summary = measurementSummary(info);
  if (!summary) return null;
  return (
    <details className="mt-1 max-w-md text-xs text-ink-600">
      <summary className="cursor-pointer">
        <span className="sr-only">Measurement conditions of {name}: </span>
        {summary}
      </summary>
      <div className="mt-2 rounded-md border border-ink-200 bg-white p-2">
        <ConditionsList info={info} />
      </div>
    </details>
  );
}

/** What the lab entered about a scan's measurement beside its file, with who entered it. */
export function EnteredConditions({ conditions, name }: { conditions: MeasurementConditions | null | undefined; name: string }) {
  const rows = enteredConditionRows(conditions);
  if (rows.length === 0) return null;
  return (
    <div className="mt-1 max-w-md text-xs text-ink-700" data-testid="entered-conditions">
      <p className="font-medium text-ink-600">
        <span className="sr-only">{name}: </span>Entered by the lab{conditions?.enteredBy ? ` (${conditions.enteredBy})` : ""}:
      </p>
      <p>{rows.map((r) => `${r.label}: ${r.value}`).join(" · ")}</p>
    </div>
  );
}
