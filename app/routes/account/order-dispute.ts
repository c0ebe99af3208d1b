// POST /orders/:id/dispute — a party's steps in the order's dispute: an upload target for an evidence file
// (JSON, for the direct upload), the lab's statement, and attaching an uploaded evidence file. Each step but the
// upload target returns to the party's order page with a toast; refusals are one sentence.
import { NoSuchRecord } from "~/models/errors";
import { StorageUnavailable } from "~/models/files/storage.server";
import { addDisputeEvidence, answerDispute, DisputeProblem, EVIDENCE_RULE, evidencePrefix } from "~/models/orders/disputes.server";
import { readForm } from "~/utils/form.server";
import { notFound, requireOrderParty } from "~/utils/permissions.server";
import { redirectWithToast } from "~/utils/toast.server";
import { uploadTargetResponse } from "~/utils/uploads.server";
import type { Route } from "./+types/order-dispute";

export async function action({ request, params, context }: Route.ActionArgs) {
  const { actor, order, side } = await requireOrderParty(request, params.id);
  const form = await readForm(request);
  const intent = String(form.get("intent") ?? "");
  if (intent === "upload-target") {
    if (form.get("purpose") !== "dispute-evidence") return Response.json({ error: "This upload is not evidence for a dispute." }, { status: 400 });
    if (order.state !== "disputed") return Response.json({ error: "Evidence is handed in while the dispute is open." }, { status: 409 });
    return uploadTargetResponse(form, EVIDENCE_RULE, evidencePrefix(order.id, side));
  }
  const back = `/${side}/orders/${order.id}`;
  try {
    if (intent === "statement") {
      if (side !== "lab") notFound("Only the lab on the order answers a dispute.");
      await answerDispute(order, actor.user.id, String(form.get("statement") ?? ""), context.clientAddress);
      const evidenceKey = String(form.get("storageKey") ?? "");
      if (evidenceKey)
        await addDisputeEvidence(
          order,
          side,
          actor.user.id,
          { storageKey: evidenceKey, fileName: String(form.get("fileName") ?? ""), sha256: String(form.get("sha256") ?? "") },
          { withStatement: true },
        );
      return redirectWithToast(back, { kind: "success", message: "Statement sent; the client and the admins have been told." });
    }
    if (intent === "evidence") {
      const storageKey = String(form.get("storageKey") ?? "");
      if (!storageKey) return redirectWithToast(back, { kind: "error", message: "Choose the evidence file to upload first." });
      await addDisputeEvidence(order, side, actor.user.id, {
        storageKey,
        fileName: String(form.get("fileName") ?? ""),
        sha256: String(form.get("sha256") ?? ""),
      });
      return redirectWithToast(back, { kind: "success", message: "Evidence added to the dispute; the other side and the admins have been told." });
    }
  } catch (err) {
    if (err instanceof DisputeProblem || err instanceof StorageUnavailable) return redirectWithToast(back, { kind: "error", message: err.message });
    if (err instanceof NoSuchRecord) notFound(err.message);
    throw err;
  }
  return Response.json({ error: "That is not a step of a dispute." }, { status: 400 });
}
