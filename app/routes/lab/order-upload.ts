// POST /lab/orders/:id/uploads/:fileId — `{ intent: "complete", parts?, sha256 }` verifies and stores; `{ intent: "abort" }` cancels.
import { abortOrderUpload, completeOrderUpload, fileOfOrder } from "~/models/files/files.server";
import { answerUploadStep, completedUploadResponse, readJsonObject } from "~/utils/uploads.server";
import { requireOrderSide } from "~/utils/permissions.server";
import type { Route } from "./+types/order-upload";

const NO_SUCH_UPLOAD = "No such upload on this order.";

export async function action({ request, params }: Route.ActionArgs) {
  const { order } = await requireOrderSide(request, "lab", params.id, { roles: ["manager", "operator"], jsonNotFound: NO_SUCH_UPLOAD });
  const file = await fileOfOrder(order.id, params.fileId);
  if (!file) return Response.json({ error: NO_SUCH_UPLOAD }, { status: 404 });
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
