// GET /lab/statements/fee-invoices/:number.pdf — a platform fee invoice as PDF, for the members of the lab it was
// issued to and for admins; anyone else is told there is no such invoice.
import { invoicePdf } from "~/models/invoices/pdf.server";
import { feeInvoiceByNumber } from "~/models/invoices/fee-invoices.server";
import { notFound, requireAdmin, requireOrgRole, requireUser } from "~/utils/permissions.server";
import type { Route } from "./+types/fee-invoice-pdf";

export async function loader({ request, params }: Route.LoaderArgs) {
  const actor = await requireUser(request);
  const number = /^(.+)\.pdf$/.exec(params.file)?.[1] ?? "";
  if (actor.user.isAdmin) {
    // Admins read every fee invoice once signed in with their second factor.
    await requireAdmin(request);
  } else {
    await requireOrgRole(request, "lab");
  }
  const invoice = number ? await feeInvoiceByNumber(number) : null;
  const mine =
    invoice && (actor.user.isAdmin || actor.memberships.some((m) => m.organisation.kind === "lab" && m.organisation.id === invoice.recipientOrganisationId));
  if (!invoice || !mine) notFound("There is no such fee invoice.");
  return new Response(new Uint8Array(await invoicePdf(invoice.document)), {
    headers: {
      "Content-Type": "application/pdf",
      "Content-Disposition": `inline; filename="${invoice.number}.pdf"`,
      "Cache-Control": "private, no-store",
    },
  });
}
