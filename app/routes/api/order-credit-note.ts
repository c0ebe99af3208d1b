// GET /api/orders/:id/credit-notes/:number — one credit note of the order by its number, as JSON or, with
// `?format=pdf`, as the PDF (docs/design.md#invoices). For the order's parties and admins; everyone else a 404.
import { invoiceJson } from "~/domain/invoice-json";
import { creditNoteOfOrder } from "~/models/invoices/invoices.server";
import { documentResponse } from "~/models/invoices/respond.server";
import { requireOrderPartyOrAdmin } from "~/utils/permissions.server";
import type { Route } from "./+types/order-credit-note";

export async function loader({ request, params }: Route.LoaderArgs) {
  const { order } = await requireOrderPartyOrAdmin(request, params.id);
  const note = await creditNoteOfOrder(order.id, params.number);
  if (!note) {
    return Response.json(
      { error: `Order ${order.number} has no credit note numbered ${params.number}.` },
      { status: 404, headers: { "Cache-Control": "private, no-store" } },
    );
  }
  return documentResponse(request, note.document, invoiceJson(note.document));
}
