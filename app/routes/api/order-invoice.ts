// GET /api/orders/:id/invoice — the order's invoice as JSON (docs/design.md#invoices), with its credit notes;
// `?format=pdf` gives the PDF as a download named by the invoice's number. For the order's parties and admins;
// everyone else the same 404 as for the order. Before the order is paid there is no invoice: a 404 that says so.
import { creditNoteSummary, invoiceJson } from "~/domain/invoice-json";
import { documentsOfOrder } from "~/models/invoices/invoices.server";
import { documentResponse } from "~/models/invoices/respond.server";
import { requireOrderPartyOrAdmin } from "~/utils/permissions.server";
import type { Route } from "./+types/order-invoice";

export async function loader({ request, params }: Route.LoaderArgs) {
  const { order } = await requireOrderPartyOrAdmin(request, params.id);
  const found = await documentsOfOrder(order.id);
  if (!found) {
    return Response.json(
      { error: `Order ${order.number} has no invoice yet: the invoice is issued when the order is paid.` },
      { status: 404, headers: { "Cache-Control": "private, no-store" } },
    );
  }
  const { invoice, creditNotes } = found;
  return documentResponse(request, invoice.document, {
    ...invoiceJson(invoice.document),
    creditNotes: creditNotes.map((c) => creditNoteSummary(c.document)),
  });
}
