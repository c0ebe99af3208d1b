// Creating an order inside the caller's transaction: from an accepted quote (acceptQuote) or a lot ordered under a
// standing agreement (app/models/agreements/). One place decides the tax, takes the number and writes the first
// timeline row, so both ways make the same order (docs/design.md#standing-agreements).
import { config } from "~/config.server";
import { schema, type Tx } from "~/db/client.server";
import { taxOn } from "~/domain/vat";
import { decideTaxBetween } from "~/models/invoices/tax.server";
import { takeOrderNumber } from "~/models/orders/numbers.server";
import type { PurchaseOrder } from "~/models/orders/purchase-orders.server";

export interface NewOrder {
  requestId: string;
  quoteId: string;
  clientOrganisationId: string;
  labId: string;
  /** The net price (a quote's total, or the agreement's price for the lots); the tax is added on top. */
  netMinor: number;
  currency: string;
  po: PurchaseOrder | null;
  actorUserId: string;
  /** The first timeline row's note ("Quote accepted", "Lot ordered under SA-…"). */
  note: string;
  agreementId?: string | null;
  at?: Date;
}

/** Inserts an order in awaiting_payment with its tax fixed now (docs/design.md#tax-on-invoices) and its first timeline row. */
export async function createOrderTx(tx: Tx, o: NewOrder) {
  const at = o.at ?? new Date();
  const tax = await decideTaxBetween(o.labId, o.clientOrganisationId, tx);
  const taxMinor = taxOn(o.netMinor, tax.rateBps);
  const [order] = await tx
    .insert(schema.orders)
    .values({
      requestId: o.requestId,
      quoteId: o.quoteId,
      number: await takeOrderNumber(tx, o.clientOrganisationId, at),
      clientOrganisationId: o.clientOrganisationId,
      labId: o.labId,
      amountMinor: o.netMinor + taxMinor,
      taxMinor,
      taxRateBps: tax.rateBps,
      taxTreatment: tax.treatment,
      currency: o.currency,
      platformFeeBps: config.payments.platformFeeBps,
      purchaseOrderNumber: o.po?.number ?? null,
      purchaseOrderFileKey: o.po?.fileKey ?? null,
      purchaseOrderFileName: o.po?.fileName ?? null,
      agreementId: o.agreementId ?? null,
    })
    .returning({ id: schema.orders.id, number: schema.orders.number, amountMinor: schema.orders.amountMinor, taxMinor: schema.orders.taxMinor });
  await tx.insert(schema.orderEvents).values({ orderId: order.id, fromState: null, toState: "awaiting_payment", actorUserId: o.actorUserId, note: o.note });
  return order;
}
