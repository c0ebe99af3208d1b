// POST /client/requests/:id/po-upload — a presigned upload target for a purchase-order PDF, on acceptance or on the order.
import { purchaseOrderPrefix, PO_FILE_RULE } from "~/models/orders/purchase-orders.server";
import { requireOrgRole, requireOwnRequest } from "~/utils/permissions.server";
import { uploadTargetResponse } from "~/utils/uploads.server";
import { readForm } from "~/utils/form.server";
import type { Route } from "./+types/request-po-upload";

// A resource route: a document POST to the request page's action would answer with the page's HTML, not JSON.
export async function action({ request, params }: Route.ActionArgs) {
  const { membership } = await requireOrgRole(request, "client");
  const row = await requireOwnRequest(params.id, membership.organisation.id);
  const formData = await readForm(request);
  if (formData.get("intent") !== "upload-target") return Response.json({ error: "This upload is not a purchase order." }, { status: 400 });
  return uploadTargetResponse(formData, PO_FILE_RULE, purchaseOrderPrefix(row));
}
