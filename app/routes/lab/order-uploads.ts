// POST /lab/orders/:id/uploads — starts the upload of one delivered file; answers with presigned targets.
import { answerUploadStep, readJsonObject, startInputFrom, startOrderUpload } from "~/models/files/files.server";
import { orderForOrganisation } from "~/models/orders/lifecycle.server";
import { requireOrgRole } from "~/utils/permissions.server";
import type { Route } from "./+types/order-uploads";

// A resource route: the delivery screen's fetch gets JSON, not a page.
export async function action({ request, params }: Route.ActionArgs) {
  const { membership, user } = await requireOrgRole(request, "lab", ["manager", "operator"]);
  const found = await orderForOrganisation(params.id, membership.organisation.id);
  if (found?.side !== "lab") return Response.json({ error: "No such order for your lab." }, { status: 404 });
  return answerUploadStep(async () => {
    const input = startInputFrom(await readJsonObject(request));
    const started = await startOrderUpload(found.order, input, { userId: user.id, via: "browser" });
    return Response.json(started, { status: 201 });
  });
}
