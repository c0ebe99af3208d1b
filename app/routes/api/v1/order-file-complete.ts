// POST /api/v1/orders/:id/files/:fileId/complete — `{ parts? }`: storage puts the parts together and the file is verified.
import { requireApiToken } from "~/utils/permissions.server";
import { completeOrderUpload, fileOfOrder } from "~/models/files/files.server";
import { answerUploadStep, completedUploadResponse, readJsonObject } from "~/utils/uploads.server";
import { orderForOrganisation } from "~/models/orders/queries.server";
import type { Route } from "./+types/order-file-complete";

export async function action({ request, params }: Route.ActionArgs) {
  const token = await requireApiToken(request);
  const found = await orderForOrganisation(params.id, token.labId);
  const file = found?.side === "lab" ? await fileOfOrder(found.order.id, params.fileId) : null;
  if (!file) return Response.json({ error: "No such upload for this token's lab." }, { status: 404 });
  return answerUploadStep(async () => completedUploadResponse(await completeOrderUpload(file, await readJsonObject(request, { emptyIsObject: true }))));
}
