// POST /lab/orders/:id/uploads/:fileId — `{ intent: "complete", parts?, sha256 }` verifies and stores; `{ intent: "abort" }` cancels.
import { abortOrderUpload, answerUploadStep, completedUploadResponse, completeOrderUpload, fileOfOrder, readJsonObject } from "~/models/files/files.server";
import { orderForOrganisation } from "~/models/orders/lifecycle.server";
import { requireOrgRole } from "~/utils/permissions.server";
import type { Route } from "./+types/order-upload";

export async function action({ request, params }: Route.ActionArgs) {
  const { membership } = await requireOrgRole(request, "lab", ["manager", "operator"]);
  const found = await orderForOrganisation(params.id, membership.organisation.id);
  const file = found?.side === "lab" ? await fileOfOrder(found.order.id, params.fileId) : null;
  if (!file) return Response.json({ error: "No such upload on this order." }, { status: 404 });
  return answerUploadStep(async () => {
    const body = await readJsonObject(request);
    if (body.intent === "abort") {
      await abortOrderUpload(file);
      return Response.json({ fileId: file.id, state: "cancelled" });
    }
    if (body.intent !== "complete") return Response.json({ error: 'The intent must be "complete" or "abort".' }, { status: 400 });
    return completedUploadResponse(await completeOrderUpload(file, body));
  });
}
