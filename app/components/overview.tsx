// A workspace overview's two panels: what waits for someone, and the organisation's orders by state.
import { Link } from "react-router";
import { Badge } from "~/components/ui";
import type { OrderState } from "~/domain/order-states";
import { OrderStateBadge } from "./order-state-badge";

export function WaitingPanel({ items }: { items: { count: number; label: string; to: string }[] }) {
  return (
    <section aria-labelledby="waiting-heading" className="card">
      <h2 id="waiting-heading" className="text-base font-semibold text-ink-800">
        Waiting for you
      </h2>
      {items.length === 0 ? (
        <p className="mt-2 text-sm text-ink-600">Nothing waits for your organisation just now.</p>
      ) : (
        <ul className="mt-3 divide-y divide-ink-100">
          {items.map((item) => (
            <li key={item.label} className="flex items-center gap-3 py-2">
              <span className="min-w-8 rounded-md border-l-4 border-caution-600 bg-caution-50 px-2 py-0.5 text-center text-sm font-semibold tabular-nums text-ink-800">
                {item.count}
              </span>
              <Link to={item.to} className="text-sm text-beam-700 underline-offset-2 hover:underline">
                {item.label}
              </Link>
            </li>
          ))}
        </ul>
      )}
    </section>
  );
}

export function OrdersByState({ orders, to }: { orders: { state: OrderState; count: number }[]; to: string }) {
  return (
    <section aria-labelledby="orders-by-state-heading" className="card">
      <h2 id="orders-by-state-heading" className="text-base font-semibold text-ink-800">
        Orders by state
      </h2>
      <ul className="mt-3 space-y-2">
        {orders.map((o) => (
          <li key={o.state} className="flex items-center justify-between gap-3 text-sm">
            <OrderStateBadge state={o.state} />
            <span className="tabular-nums text-ink-700">{o.count}</span>
          </li>
        ))}
      </ul>
      <Link to={to} className="mt-4 inline-block text-sm text-beam-700 underline-offset-2 hover:underline">
        All orders
      </Link>
    </section>
  );
}
