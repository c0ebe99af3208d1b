// An order's timeline: every state it passed through, with who moved it, when and why.
import { ORDER_STATE_LABELS, type OrderState } from "~/domain/order-states";
import { useFormat } from "~/components/locale";

export interface TimelineRow {
  id: number;
  fromState: OrderState | null;
  toState: OrderState;
  note: string;
  at: string | Date;
  actor: string | null;
}

export function OrderTimeline({ rows }: { rows: TimelineRow[] }) {
  const fmt = useFormat();
  if (rows.length === 0) return <p className="text-sm text-ink-600">Nothing has happened yet.</p>;
  return (
    <ol className="relative space-y-4 border-l-2 border-beam-100 pl-5" aria-label="Order timeline">
      {rows.map((r) => (
        <li key={r.id} className="relative">
          <span aria-hidden="true" className="absolute top-1.5 -left-[27px] h-3 w-3 rounded-full border-2 border-white bg-beam-500" />
          <p className="text-sm font-semibold text-ink-900">{ORDER_STATE_LABELS[r.toState]}</p>
          <p className="text-xs text-ink-500">
            <time dateTime={new Date(r.at).toISOString()}>{fmt.dateTime(r.at)}</time> · {r.actor ?? "Diffractory"}
          </p>
          {r.note ? <p className="mt-1 text-sm text-ink-700">{r.note}</p> : null}
        </li>
      ))}
    </ol>
  );
}

/** The timeline in its own card beside an order page's main column. */
export function OrderTimelineCard({ rows }: { rows: TimelineRow[] }) {
  return (
    <section className="card" aria-labelledby="timeline-heading">
      <h2 id="timeline-heading" className="mb-4 text-lg font-semibold">
        Timeline
      </h2>
      <OrderTimeline rows={rows} />
    </section>
  );
}
