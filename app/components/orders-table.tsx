// A list of orders with the other party, the amount and the state, for the client's and the lab's screens.
import { Link } from "react-router";
import { ORDER_STATE_LABELS, ORDER_STATE_TONES, type OrderState } from "~/models/order-states";
import { Badge, TableCard } from "./ui";
import { useFormat } from "~/components/locale";

export interface OrderRow {
  id: string;
  title: string;
  counterpart: string;
  state: OrderState;
  amountMinor: number;
  currency: string;
  updatedAt: string | Date;
}

export function OrdersTable({ orders, hrefBase, counterpart }: { orders: OrderRow[]; hrefBase: string; counterpart: string }) {
  const fmt = useFormat();
  return (
    <TableCard columns={["Request", counterpart, "Amount", "State", "Updated"]} caption="Orders">
      {orders.map((o) => (
        <tr key={o.id}>
          <td>
            <Link to={`${hrefBase}/${o.id}`} className="font-medium text-beam-700 hover:underline">
              {o.title}
            </Link>
          </td>
          <td>{o.counterpart}</td>
          <td>{fmt.money(o.amountMinor, o.currency)}</td>
          <td>
            <Badge tone={ORDER_STATE_TONES[o.state]}>{ORDER_STATE_LABELS[o.state]}</Badge>
          </td>
          <td>{fmt.date(o.updatedAt)}</td>
        </tr>
      ))}
    </TableCard>
  );
}
