// Small building blocks of Diffractory's screens: page headers, fields, badges, empty states.
import { Formula } from "~/components/symbols";
import type { ReactNode } from "react";
import { labelRows, STACKED_TABLE, useStackLabels } from "./stacked-rows";

export function PageHeader({ title, subtitle, actions }: { title: string; subtitle?: ReactNode; actions?: ReactNode }) {
  // Titles in the display face; a step smaller on a phone so a long order title takes two lines, not five.
  return (
    <div className="mb-6 flex flex-wrap items-end justify-between gap-x-6 gap-y-3 border-b border-ink-200 pb-4">
      <div className="min-w-0 basis-80 grow">
        <h1 className="font-display text-2xl font-semibold text-balance break-words text-ink-900 sm:text-title">
          <Formula>{title}</Formula>
        </h1>
        {subtitle ? <p className="mt-1 text-sm text-ink-600">{subtitle}</p> : null}
      </div>
      {actions ? <div className="flex flex-wrap gap-2">{actions}</div> : null}
    </div>
  );
}

/** Field errors keep a fixed-height slot so buttons below never move while someone clicks. */
export function FieldErrors({ id, errors }: { id: string; errors?: string[] | null }) {
  return (
    <div id={id} className="min-h-5 pt-1 text-xs text-danger-700" aria-live="polite">
      {errors?.length ? errors.join(" ") : null}
    </div>
  );
}

export function Field({ label, id, errors, hint, children }: { label: string; id: string; errors?: string[] | null; hint?: string; children: ReactNode }) {
  return (
    <div>
      <label htmlFor={id} className="label">
        {label}
      </label>
      {children}
      {hint ? <p className="mt-1 text-xs text-ink-500">{hint}</p> : null}
      <FieldErrors id={`${id}-error`} errors={errors} />
    </div>
  );
}

export function FormError({ errors }: { errors?: string[] | null }) {
  return (
    <div role={errors?.length ? "alert" : undefined} className="min-h-6 text-sm font-medium text-danger-700">
      {errors?.length ? errors.join(" ") : null}
    </div>
  );
}

/** Each tone: the tag's ground and word, a thin border, and the stronger colour of its left edge and shape. */
const BADGE_TONES = {
  neutral: "bg-ink-50 text-ink-700 border-ink-300 border-l-ink-500",
  brand: "bg-beam-50 text-beam-800 border-beam-200 border-l-beam-600",
  ok: "bg-ok-50 text-ok-700 border-ok-600/30 border-l-ok-600",
  caution: "bg-caution-50 text-caution-700 border-caution-600/30 border-l-caution-600",
  danger: "bg-danger-50 text-danger-700 border-danger-600/30 border-l-danger-600",
} as const;
/** A shape per tone, drawn at text size: a ring, a diamond, a tick in a circle, a triangle with a bar, a crossed octagon. */
const BADGE_SHAPES: Record<keyof typeof BADGE_TONES, ReactNode> = {
  neutral: <circle cx="8" cy="8" r="5" fill="none" stroke="currentColor" strokeWidth="2" />,
  brand: <path d="M8 2.5 13.5 8 8 13.5 2.5 8Z" fill="currentColor" />,
  ok: (
    <>
      <circle cx="8" cy="8" r="6.5" fill="currentColor" />
      <path d="m5 8.2 2 2 4-4.4" fill="none" stroke="white" strokeWidth="1.8" strokeLinecap="round" strokeLinejoin="round" />
    </>
  ),
  caution: (
    <>
      <path d="M8 1.8 14.6 13.6H1.4Z" fill="currentColor" strokeLinejoin="round" />
      <path d="M8 6v3.6M8 11.4v.1" stroke="white" strokeWidth="1.7" strokeLinecap="round" />
    </>
  ),
  danger: (
    <>
      <path d="M5.3 1.5h5.4l3.8 3.8v5.4l-3.8 3.8H5.3l-3.8-3.8V5.3Z" fill="currentColor" />
      <path d="m5.8 5.8 4.4 4.4m0-4.4-4.4 4.4" stroke="white" strokeWidth="1.7" strokeLinecap="round" />
    </>
  ),
};

export type BadgeTone = keyof typeof BADGE_TONES;

/**
 * A state badge: a word, a shape and a colour, so colour never carries the meaning alone. A squared tag with a
 * stronger left edge (docs/design-system.md#badges), never a pill; the word is written as given, never upper-cased.
 */
export function Badge({ tone = "neutral", children }: { tone?: BadgeTone; children: ReactNode }) {
  return (
    <span
      className={`inline-flex items-center gap-1 rounded-badge border border-l-[3px] py-px pr-1.5 pl-1 text-xs leading-5 font-semibold whitespace-nowrap ${BADGE_TONES[tone]}`}
      data-badge={tone}
    >
      <svg viewBox="0 0 16 16" className="h-3.5 w-3.5 shrink-0" aria-hidden="true" focusable="false" data-shape={tone}>
        {BADGE_SHAPES[tone]}
      </svg>
      {children}
    </span>
  );
}

export function EmptyState({ title, children, action }: { title: string; children?: ReactNode; action?: ReactNode }) {
  return (
    <div className="rounded-card border border-ink-200 bg-white px-6 py-10 text-center">
      <DiffractionRingsIcon className="mx-auto mb-3 h-10 w-10 text-beam-300" />
      <h2 className="font-display text-lg font-semibold text-ink-900">{title}</h2>
      {children ? <div className="mx-auto mt-2 max-w-md text-sm text-ink-600">{children}</div> : null}
      {action ? <div className="mt-5">{action}</div> : null}
    </div>
  );
}

/** Debye–Scherrer rings: the product's mark. */
export function DiffractionRingsIcon({ className }: { className?: string }) {
  return (
    <svg viewBox="0 0 48 48" className={className} aria-hidden="true" fill="none" stroke="currentColor" strokeWidth="2.5">
      <circle cx="24" cy="24" r="4" fill="currentColor" stroke="none" />
      <circle cx="24" cy="24" r="10" />
      <circle cx="24" cy="24" r="16" strokeDasharray="6 3" />
      <circle cx="24" cy="24" r="22" strokeOpacity="0.6" />
    </svg>
  );
}

/**
 * The safety caution where a hazard is declared or shown: one line with a caution mark and a link to /safety, where
 * the whole text stands (the declaration informs and replaces nothing; trained staff under licence; Diffractory
 * defers to local codes and licensed practice). `full` prints that whole text, for the safety page itself.
 */
export function SafetyNotice({ className = "", full = false }: { className?: string; full?: boolean }) {
  return (
    <aside
      className={`flex items-start gap-2 rounded-card border border-caution-600/30 bg-caution-50 px-3 py-2 text-sm text-caution-700 ${className}`}
      aria-label="Safety notice"
    >
      <svg viewBox="0 0 16 16" className="mt-0.5 h-4 w-4 shrink-0" aria-hidden="true" focusable="false">
        <path d="M8 1.8 14.6 13.6H1.4Z" fill="currentColor" strokeLinejoin="round" />
        <path d="M8 6v3.6M8 11.4v.1" stroke="white" strokeWidth="1.7" strokeLinecap="round" />
      </svg>
      {full ? (
        <p>
          A hazard declaration informs the lab; it does not replace the safety data sheet, the carrier's dangerous-goods rules, local regulations, or the
          approval of the lab's radiation and chemical safety officers. X-ray instruments are operated only by the lab's trained staff under its licence.
          Diffractory defers to local codes and licensed practice and gives no safety advice of its own beyond these cautions.
        </p>
      ) : (
        <p>
          A hazard declaration informs the lab; it replaces neither the safety data sheet nor the carrier's, the law's or the lab's safety rules.{" "}
          <a href="/safety" className="font-semibold underline underline-offset-2 hover:text-caution-600">
            Read the safety page
          </a>
        </p>
      )}
    </aside>
  );
}

/**
 * A table in a card with column headings; rows come as children. On a phone its rows stack as small cards (the first
 * cell as title, the others as "heading: value"; stacked-rows.tsx) unless `stack={false}`; a table that does not
 * stack scrolls sideways when too wide, and a wide one (`scrolls`) gets a keyboard stop and a name, so its hidden
 * columns are reachable without a mouse (WCAG 2.1.1; axe "scrollable-region-focusable").
 */
export function TableCard({
  columns,
  children,
  caption,
  scrolls,
  stack = true,
}: {
  columns: ReactNode[];
  children: ReactNode;
  caption?: string;
  scrolls?: boolean;
  stack?: boolean;
}) {
  const ref = useStackLabels<HTMLDivElement>();
  return (
    <div ref={ref} className="card overflow-x-auto p-0" {...(scrolls ? { tabIndex: 0, role: "region", "aria-label": caption } : {})}>
      <table className={stack ? `table ${STACKED_TABLE}` : "table"}>
        {caption ? <caption className="sr-only">{caption}</caption> : null}
        <thead>
          <tr>
            {columns.map((c, i) => (
              <th key={i} scope="col">
                {c}
              </th>
            ))}
          </tr>
        </thead>
        {/* A heading that is markup (a cell symbol) gets its label from the rendered heading, after hydration. */}
        <tbody>
          {stack
            ? labelRows(
                children,
                columns.map((c) => (typeof c === "string" ? c : "")),
              )
            : children}
        </tbody>
      </table>
    </div>
  );
}
