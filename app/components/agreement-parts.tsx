// Pieces of the standing-agreement screens on both sides: the state badge, the list and the terms with usage.
import { Form, Link } from "react-router";
import { useFormat } from "~/components/locale";
import { OrderStateBadge } from "~/components/order-state-badge";
import { Badge, type BadgeTone, TableCard } from "~/components/ui";
import { AGREEMENT_STATE_LABELS, type AgreementState } from "~/domain/agreements";
import type { OrderState } from "~/domain/order-states";

const TONES: Record<AgreementState, BadgeTone> = { proposed: "brand", active: "ok", ending: "caution", ended: "neutral" };

export function AgreementStateBadge({ state }: { state: AgreementState }) {
  return <Badge tone={TONES[state]}>{AGREEMENT_STATE_LABELS[state]}</Badge>;
}

export interface AgreementListRow {
  id: string;
  number: string;
  state: AgreementState;
  counterpart: string;
  materialName: string;
  materialCode: string;
  lots: number;
  lotsAffordable: number;
  spentNetMinor: number;
  budgetCapMinor: number;
  currency: string;
  startsOn: string;
  endsOn: string;
}

export function AgreementsTable({ rows, hrefBase, counterpart }: { rows: AgreementListRow[]; hrefBase: string; counterpart: string }) {
  const fmt = useFormat();
  return (
    <TableCard columns={["Agreement", "Material", counterpart, "Lots used / cap", "Spent (net) / cap", "Period", "State"]} caption="Standing agreements">
      {rows.map((a) => (
        <tr key={a.id}>
          <td className="font-medium">
            <Link to={`${hrefBase}/${a.id}`} className="text-beam-700 underline">
              {a.number}
            </Link>
          </td>
          <td>
            {a.materialName} <span className="text-ink-500">· {a.materialCode}</span>
          </td>
          <td>{a.counterpart}</td>
          <td>
            {a.lots} / {a.lotsAffordable}
          </td>
          <td>
            {fmt.money(a.spentNetMinor, a.currency)} / {fmt.money(a.budgetCapMinor, a.currency)}
          </td>
          <td>
            {fmt.date(a.startsOn)} – {fmt.date(a.endsOn)}
          </td>
          <td>
            <AgreementStateBadge state={a.state} />
          </td>
        </tr>
      ))}
    </TableCard>
  );
}

export interface AgreementView {
  agreement: {
    number: string;
    state: AgreementState;
    lineItems: { description: string; quantity: number; unitMinor: number; totalMinor: number }[];
    pricePerLotMinor: number;
    currency: string;
    turnaroundDays: number;
    startsOn: string;
    endsOn: string;
    budgetCapMinor: number;
    noticeDays: number;
    noticeReason: string | null;
    endingAt: Date | string | null;
    endedBecause: string | null;
  };
  material: { productCode: string; name: string };
  clientName: string;
  labName: string;
  instrumentName: string | null;
  usage: { lots: number; spentNetMinor: number; remainingMinor: number };
  orders: { id: string; number: string; state: string; amountMinor: number; taxMinor: number; lots: string[] }[];
}

/** The terms, what has been used of the cap, and the orders made under the agreement (linked by number). */
export function AgreementDetails({ view, orderHref }: { view: AgreementView; orderHref: string }) {
  const fmt = useFormat();
  const a = view.agreement;
  const money = (m: number) => fmt.money(m, a.currency);
  return (
    <div className="space-y-6">
      <section className="card" aria-labelledby="terms">
        <h2 id="terms" className="text-lg font-semibold">
          Terms
        </h2>
        <dl className="mt-3 grid gap-x-6 gap-y-2 text-sm sm:grid-cols-2">
          <div>
            <dt className="text-ink-500">Material</dt>
            <dd>
              {view.material.name} ({view.material.productCode})
            </dd>
          </div>
          <div>
            <dt className="text-ink-500">Client · lab</dt>
            <dd>
              {view.clientName} · {view.labName}
            </dd>
          </div>
          <div>
            <dt className="text-ink-500">Price per lot (net)</dt>
            <dd>{money(a.pricePerLotMinor)}</dd>
          </div>
          <div>
            <dt className="text-ink-500">Turnaround</dt>
            <dd>{a.turnaroundDays} days from receipt</dd>
          </div>
          <div>
            <dt className="text-ink-500">Period</dt>
            <dd>
              {fmt.date(a.startsOn)} to {fmt.date(a.endsOn)}
            </dd>
          </div>
          <div>
            <dt className="text-ink-500">Budget cap (net)</dt>
            <dd>{money(a.budgetCapMinor)}</dd>
          </div>
          <div>
            <dt className="text-ink-500">Notice</dt>
            <dd>{a.noticeDays} days</dd>
          </div>
          <div>
            <dt className="text-ink-500">Instrument</dt>
            <dd>{view.instrumentName ?? "—"}</dd>
          </div>
        </dl>
        <ul className="mt-3 list-disc pl-5 text-sm text-ink-700">
          {a.lineItems.map((i) => (
            <li key={i.description}>
              {i.description}: {i.quantity} × {money(i.unitMinor)} = {money(i.totalMinor)}
            </li>
          ))}
        </ul>
        {a.state === "ending" && a.endingAt ? (
          <p className="mt-3 text-sm text-caution-700">
            Notice given ({a.noticeReason}); the agreement ends on {fmt.date(a.endingAt)}. Lots may still be ordered until then.
          </p>
        ) : null}
        {a.state === "ended" && a.endedBecause ? <p className="mt-3 text-sm text-ink-700">Ended: {a.endedBecause}.</p> : null}
      </section>
      <section className="card" aria-labelledby="usage">
        <h2 id="usage" className="text-lg font-semibold">
          Used so far
        </h2>
        <dl className="mt-3 grid gap-x-6 gap-y-2 text-sm sm:grid-cols-3">
          <div>
            <dt className="text-ink-500">Lots ordered</dt>
            <dd data-testid="lots-used">{view.usage.lots}</dd>
          </div>
          <div>
            <dt className="text-ink-500">Spent (net)</dt>
            <dd data-testid="money-spent">{money(view.usage.spentNetMinor)}</dd>
          </div>
          <div>
            <dt className="text-ink-500">Remaining of the cap</dt>
            <dd data-testid="money-remaining">{money(view.usage.remainingMinor)}</dd>
          </div>
        </dl>
      </section>
      {view.orders.length ? (
        <TableCard columns={["Order", "Lots", "Amount (with tax)", "State"]} caption="Orders under this agreement">
          {view.orders.map((o) => (
            <tr key={o.id}>
              <td className="font-medium">
                <Link to={`${orderHref}/${o.id}`} className="text-beam-700 underline">
                  {o.number}
                </Link>
              </td>
              <td>{o.lots.join(", ") || "—"}</td>
              <td>{money(o.amountMinor)}</td>
              <td>
                <OrderStateBadge state={o.state as OrderState} />
              </td>
            </tr>
          ))}
        </TableCard>
      ) : null}
    </div>
  );
}

/** Either side's form to end an agreement with notice (or, the client's, to withdraw a proposal): a reason, then the button. */
export function NoticeForm({ title, explanation, button }: { title: string; explanation: string; button: string }) {
  return (
    <section className="card" aria-labelledby="notice">
      <h2 id="notice" className="text-lg font-semibold">
        {title}
      </h2>
      <p className="mt-1 text-sm text-ink-700">{explanation}</p>
      <Form method="post" className="mt-3 space-y-2">
        <input type="hidden" name="intent" value="notice" />
        <label htmlFor="notice-reason" className="label">
          Reason
        </label>
        <input id="notice-reason" name="reason" className="input" maxLength={500} required />
        <button type="submit" className="btn-secondary">
          {button}
        </button>
      </Form>
    </section>
  );
}
