// POST /lab/orders/:id/uploads — starts the upload of one delivered file; answers with presigned targets.
import { startOrderUpload } from "~/models/files/files.server";
import { answerUploadStep, readJsonObject, startInputFrom } from "~/utils/uploads.server";
import { requireOrderSide } from "~/utils/permissions.server";
import type { Route } from "./+types/order-uploads";

// A resource route: the delivery screen's fetch gets JSON, not a page.
export async function action({ request, params }: Route.ActionArgs) {
  const { actor, order } = await requireOrderSide(request, "lab", params.id, { roles: ["manager", "operator"], jsonNotFound: "No such order for your lab." });
  return answerUploadStep(async () => {
    const input = startInputFrom(await readJsonObject(request));
    const started = await startOrderUpload(order, input, { userId: actor.user.id, via: "browser" });
    return Response.json(started, { status: 201 });
  });
}
