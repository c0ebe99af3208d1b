// A list of orders with the other party, the amount and the state, for the client's and the lab's screens:
// sortable by any column but the party, 50 a page, sorted and paged in SQL (ordersPage in models/orders/queries.server.ts).
import { Formula } from "~/components/symbols";
import { Link } from "react-router";
import type { OrderState } from "~/domain/order-states";
import { OrderStateBadge } from "./order-state-badge";
import type { PageInfo, SortDir, TableSpec } from "~/utils/table";
import { PageNav, SortableTable } from "./data-table";
import { useFormat } from "./locale";
import { Badge } from "./ui";
import { DueCell } from "./lab-records";
import type { DueStatus } from "~/domain/receipt";

export interface OrderRow {
  id: string;
  /** The order number people read (HCW-2026-0042). */
  number: string;
  title: string;
  counterpart: string;
  state: OrderState;
  amountMinor: number;
  currency: string;
  updatedAt: string | Date;
  /** The lab's work queue: when the data is due and whether it is late (docs/design.md, "The lab's records"). */
  due?: { at: string | null } & DueStatus;
}

export type OrderSort = "number" | "title" | "amount" | "state" | "updated" | "due";
export const ORDERS_TABLE: TableSpec<OrderSort> = {
  sorts: ["number", "title", "amount", "state", "updated", "due"],
  defaultSort: "updated",
  firstDir: { updated: "desc", amount: "desc" },
  pageSize: 50,
};

export function OrdersTable({
  orders,
  hrefBase,
  counterpart,
  sort,
  dir,
  info,
  showDue = false,
}: {
  /** The lab's work queue shows the due date, sortable, late ones flagged. */
  showDue?: boolean;
  orders: OrderRow[];
  hrefBase: string;
  counterpart: string;
  sort: string;
  dir: SortDir;
  info: PageInfo;
}) {
  const fmt = useFormat();
  return (
    <>
      <SortableTable
        columns={[
          { label: "Order", sort: "number" },
          { label: "Request", sort: "title" },
          { label: counterpart },
          { label: "Amount", sort: "amount", firstDir: "desc" },
          { label: "State", sort: "state" },
          ...(showDue ? [{ label: "Due", sort: "due" }] : []),
          { label: "Updated", sort: "updated", firstDir: "desc" as const },
        ]}
        sort={sort}
        dir={dir}
        caption="Orders"
      >
        {orders.map((o) => (
          <tr key={o.id}>
            <td className="whitespace-nowrap font-mono text-xs">{o.number}</td>
            <td>
              <Link to={`${hrefBase}/${o.id}`} className="font-medium text-beam-700 hover:underline">
                <Formula>{o.title}</Formula>
              </Link>
            </td>
            <td>{o.counterpart}</td>
            <td className="whitespace-nowrap">{fmt.money(o.amountMinor, o.currency)}</td>
            <td>
              <OrderStateBadge state={o.state} />
            </td>
            {showDue ? <td>{o.due ? <DueCell due={o.due} /> : null}</td> : null}
            <td className="whitespace-nowrap">{fmt.date(o.updatedAt)}</td>
          </tr>
        ))}
      </SortableTable>
      <PageNav info={info} noun={["order", "orders"]} />
    </>
  );
}
