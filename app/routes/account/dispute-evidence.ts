// GET /orders/:id/dispute/evidence/:evidenceId — an evidence file of the order's dispute: for both parties, and
// for admins (every admin read is written to the audit log). Redirects to a presigned URL valid for minutes.
import { evidenceDownloadUrl, evidenceOfOrder } from "~/models/orders/disputes.server";
import { notFound, requireOrderPartyOrDisputeAdmin } from "~/utils/permissions.server";
import type { Route } from "./+types/dispute-evidence";

export async function loader({ request, params, context }: Route.LoaderArgs) {
  const evidence = await evidenceOfOrder(params.id, params.evidenceId);
  await requireOrderPartyOrDisputeAdmin(request, params.id, {
    what: "dispute evidence",
    subject: evidence ? { type: "dispute_evidence", id: evidence.id, what: `${evidence.side}'s evidence ${evidence.fileName}` } : undefined,
    clientAddress: context.clientAddress,
  });
  if (!evidence) notFound("No such evidence file on this dispute.");
  const url = await evidenceDownloadUrl(evidence);
  return new Response(null, { status: 302, headers: { Location: url, "Cache-Control": "private, no-store" } });
}
