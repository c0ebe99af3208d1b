// POST /api/v1/orders/:id/files — an instrument computer starts an upload with its lab's bearer token.
import { requireApiToken } from "~/utils/permissions.server";
import { startOrderUpload } from "~/models/files/files.server";
import { answerUploadStep, readJsonObject, startInputFrom } from "~/utils/uploads.server";
import { orderForOrganisation } from "~/models/orders/queries.server";
import type { Route } from "./+types/order-files";

export async function action({ request, params }: Route.ActionArgs) {
  const token = await requireApiToken(request);
  const found = await orderForOrganisation(params.id, token.labId);
  if (found?.side !== "lab") return Response.json({ error: "No such order for this token's lab." }, { status: 404 });
  return answerUploadStep(async () => {
    const input = startInputFrom(await readJsonObject(request));
    const started = await startOrderUpload(found.order, input, { userId: token.createdBy, via: "api" });
    const completeUrl = new URL(`/api/v1/orders/${found.order.id}/files/${started.fileId}/complete`, request.url).toString();
    return Response.json({ ...started, completeUrl }, { status: 201 });
  });
}
