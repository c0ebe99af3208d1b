// POST /lab/orders/:id/receipt-photo — a presigned upload target for a photo of a sample on arrival.
import { canMove } from "~/domain/order-states";
import { RECEIPT_PHOTO_RULE, receiptPhotoPrefix } from "~/models/orders/lab-records.server";
import { readForm } from "~/utils/form.server";
import { requireOrderSide } from "~/utils/permissions.server";
import { uploadTargetResponse } from "~/utils/uploads.server";
import type { Route } from "./+types/order-receipt-photo";

// A resource route: the receipt form's fetch gets JSON, not a page.
export async function action({ request, params }: Route.ActionArgs) {
  const { order } = await requireOrderSide(request, "lab", params.id, { roles: ["manager", "operator"], jsonNotFound: "No such order for your lab." });
  const formData = await readForm(request);
  if (formData.get("intent") !== "upload-target" || formData.get("purpose") !== "receipt-photo") {
    return Response.json({ error: "This upload is not a photo of a sample on arrival." }, { status: 400 });
  }
  if (!canMove(order.state, "samples_received", "lab")) {
    return Response.json({ error: "Photos are taken when the parcel arrives; this order's samples are no longer in transit." }, { status: 409 });
  }
  return uploadTargetResponse(formData, RECEIPT_PHOTO_RULE, receiptPhotoPrefix(order.id));
}
