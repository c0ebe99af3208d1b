// Pieces of the request screens: the wizard's step bar, state badges, a sample's declared phases, cell and window,
// and its hazard declaration.
import { Link } from "react-router";
import { GhsIcon } from "~/components/ghs-icon";
import { Badge } from "~/components/ui";
import { GHS_CODES, type GhsCode } from "~/domain/hazard-codes";
import { specialLabel } from "~/domain/hazards";
import { WIZARD_STEPS, type WizardStep } from "~/domain/request-forms";
import type { AcceptanceWindow } from "~/diffraction/phases";
import { windowWords } from "~/diffraction/window";
import { useFormat } from "~/components/locale";
import { CellValues, WindowValues } from "~/components/symbol-values";
import { Formula } from "~/components/symbols";

/** The five steps; steps up to the furthest one reached are links. */
export function WizardSteps({ requestId, current, reached }: { requestId: string | null; current: WizardStep; reached: string }) {
  const reachedIndex = WIZARD_STEPS.findIndex((s) => s.slug === reached);
  return (
    <nav aria-label="Request steps" className="mb-6">
      <ol className="flex flex-wrap gap-2 text-sm">
        {WIZARD_STEPS.map((s, i) => {
          const isCurrent = s.slug === current;
          const label = `${i + 1}. ${s.label}`;
          const style = `rounded-full border px-3 py-1 ${isCurrent ? "border-beam-500 bg-beam-50 font-semibold text-beam-700" : "border-ink-200 bg-white text-ink-600"}`;
          return (
            <li key={s.slug}>
              {requestId && i <= reachedIndex && !isCurrent ? (
                <Link to={`/client/requests/${requestId}/edit/${s.slug}`} className={`${style} hover:bg-ink-100`}>
                  {label}
                </Link>
              ) : (
                <span className={style} aria-current={isCurrent ? "step" : undefined}>
                  {label}
                </span>
              )}
            </li>
          );
        })}
      </ol>
    </nav>
  );
}

const REQUEST_TONES = { draft: "neutral", open: "brand", awarded: "ok", expired: "caution", withdrawn: "neutral" } as const;
const QUOTE_TONES = { sent: "brand", accepted: "ok", declined: "neutral", withdrawn: "neutral", lapsed: "caution" } as const;
const ORDER_LABELS: Record<string, string> = { awaiting_payment: "awaiting payment", funds_held: "funds held" };

export function RequestStateBadge({ state }: { state: keyof typeof REQUEST_TONES }) {
  return <Badge tone={REQUEST_TONES[state]}>{state}</Badge>;
}

export function QuoteStateBadge({ state }: { state: keyof typeof QUOTE_TONES }) {
  return <Badge tone={QUOTE_TONES[state]}>{state}</Badge>;
}

export function OrderStateBadge({ state }: { state: string }) {
  return <Badge tone={state === "awaiting_payment" ? "caution" : "ok"}>{ORDER_LABELS[state] ?? state.replace(/_/g, " ")}</Badge>;
}

/** The <option>s of a select, from `{ value, label }` pairs or plain values shown as they are. */
export function Options({ list }: { list: readonly ({ value: string; label: string } | string)[] }) {
  return (
    <>
      {list.map((o) => {
        const { value, label } = typeof o === "string" ? { value: o, label: o } : o;
        return (
          <option key={value} value={value}>
            {label}
          </option>
        );
      })}
    </>
  );
}

type CellView = Record<"cellA" | "cellB" | "cellC" | "cellAlpha" | "cellBeta" | "cellGamma", number | null>;

/** A further declared phase of a sample: an expected phase or a candidate form of the main phase. */
interface PhaseView extends CellView {
  role: "expected" | "candidate";
  name: string | null;
  crystalSystem: string;
  centering: string;
}

interface SampleView extends CellView {
  label: string;
  formula: string;
  form: string;
  massMg: number | null;
  expectedPhase: string | null;
  crystalSystem: string | null;
  centering: string | null;
  /** Further expected phases and candidate forms, each in its order (absent where a screen does not load them). */
  phases?: PhaseView[];
  acceptanceWindow?: AcceptanceWindow | null;
}

/** The acceptance window in words, e.g. "a ± 0.002 Å, c ± 0.3 %"; "none" when no parameter has one. */
export function windowText(window: AcceptanceWindow | null | undefined) {
  return (window && windowWords(window)) || "none";
}

function PhaseLines({ phases }: { phases: PhaseView[] }) {
  return (
    <ul className="space-y-0.5">
      {phases.map((p, i) => (
        <li key={`${p.role}-${i}`}>
          {p.name ? <Formula>{p.name}</Formula> : "unnamed"} ({p.crystalSystem}, {p.centering}): <CellValues cell={p} />
        </li>
      ))}
    </ul>
  );
}

/** A sample's facts and declaration: formula, form, mass, main phase with its cell, further phases, candidates, window. */
export function SampleFacts({ sample }: { sample: SampleView }) {
  const expected = sample.phases?.filter((p) => p.role === "expected") ?? [];
  const candidates = sample.phases?.filter((p) => p.role === "candidate") ?? [];
  return (
    <dl className="grid grid-cols-[auto_1fr] gap-x-4 gap-y-1 text-sm">
      <dt className="text-ink-500">Formula</dt>
      <dd>
        <Formula>{sample.formula}</Formula>
      </dd>
      <dt className="text-ink-500">Form, mass</dt>
      <dd>
        {sample.form.replace(/_/g, " ")}, {sample.massMg ?? "—"} mg
      </dd>
      <dt className="text-ink-500">Main phase</dt>
      <dd>
        {sample.expectedPhase ? <Formula>{sample.expectedPhase}</Formula> : "—"} ({sample.crystalSystem ?? "—"}, {sample.centering ?? "—"})
      </dd>
      <dt className="text-ink-500">Cell</dt>
      <dd>
        <CellValues cell={sample} />
      </dd>
      {expected.length ? (
        <>
          <dt className="text-ink-500">Further expected phases</dt>
          <dd>
            <PhaseLines phases={expected} />
          </dd>
        </>
      ) : null}
      {candidates.length ? (
        <>
          <dt className="text-ink-500">Candidate forms</dt>
          <dd>
            <PhaseLines phases={candidates} />
          </dd>
        </>
      ) : null}
      <dt className="text-ink-500">Acceptance window</dt>
      <dd>
        <WindowValues window={sample.acceptanceWindow} />
      </dd>
    </dl>
  );
}

export interface HazardView {
  ghsPictograms: string[];
  hStatements: string[];
  specialHazards: { category: string; details: string; activityBq?: number | null }[];
  handlingNotes: string | null;
  afterMeasurement: string;
  sdsFileName: string | null;
}

const isGhs = (code: string): code is GhsCode => (GHS_CODES as string[]).includes(code);

/** A sample's hazard declaration as the client reviews it and the lab reads it; `sdsUrl` links the safety data sheet. */
export function HazardDeclaration({ hazards, sdsUrl }: { hazards: HazardView; sdsUrl?: string | null }) {
  const fmt = useFormat();
  const none = hazards.ghsPictograms.length === 0 && hazards.hStatements.length === 0 && hazards.specialHazards.length === 0;
  return (
    <div className="space-y-3 text-sm">
      {none ? <p className="text-ink-600">No hazards declared.</p> : null}
      {hazards.ghsPictograms.length ? (
        <ul className="flex flex-wrap gap-3" aria-label="GHS pictograms">
          {hazards.ghsPictograms.filter(isGhs).map((code) => (
            <li key={code}>
              <GhsIcon code={code} showLabel />
            </li>
          ))}
        </ul>
      ) : null}
      {hazards.hStatements.length ? (
        <p>
          <span className="text-ink-500">H-statements: </span>
          <span className="font-mono">{hazards.hStatements.join(", ")}</span>
        </p>
      ) : null}
      {hazards.specialHazards.length ? (
        <ul className="space-y-1" aria-label="Special categories">
          {hazards.specialHazards.map((h) => (
            <li key={h.category}>
              <Badge tone="caution">{specialLabel(h.category)}</Badge> {h.details}
              {h.activityBq ? <span className="ml-1 text-ink-600">({fmt.number(h.activityBq)} Bq)</span> : null}
            </li>
          ))}
        </ul>
      ) : null}
      {hazards.handlingNotes ? (
        <p>
          <span className="text-ink-500">Handling notes: </span>
          {hazards.handlingNotes}
        </p>
      ) : null}
      <p>
        <span className="text-ink-500">After measurement: </span>
        {hazards.afterMeasurement === "lab_disposes" ? "the lab disposes of it" : "returned to the client"}
      </p>
      <p>
        <span className="text-ink-500">Safety data sheet: </span>
        {hazards.sdsFileName ? (
          sdsUrl ? (
            <a href={sdsUrl} className="font-semibold text-beam-700 underline">
              {hazards.sdsFileName}
            </a>
          ) : (
            hazards.sdsFileName
          )
        ) : none ? (
          "not required"
        ) : (
          <span className="font-semibold text-danger-700">missing</span>
        )}
      </p>
    </div>
  );
}

/** Each sample's facts and hazard declaration, side by side; `sds` maps sample ids to download links. */
export function SampleCards({ samples, sds }: { samples: (SampleView & HazardView & { id: string })[]; sds: Record<string, string> }) {
  return (
    <div className="grid gap-4 lg:grid-cols-2">
      {samples.map((s) => (
        <section key={s.id} className="card space-y-3" aria-label={`Sample ${s.label}`}>
          <h3 className="font-semibold">{s.label}</h3>
          <SampleFacts sample={s} />
          <HazardDeclaration hazards={s} sdsUrl={sds[s.id]} />
        </section>
      ))}
    </div>
  );
}
