// POST /lab/instruments/:id/calibration/upload — a presigned upload target for one of the lab's instruments' calibration scans.
import { isUuid } from "~/domain/ids";
import { calibrationPrefix, instrumentOfLab } from "~/models/labs/calibration.server";
import { getOrCreateLab } from "~/models/labs/vetting.server";
import { SCAN_RULE } from "~/models/files/storage.server";
import { notFound, requireOrgRole } from "~/utils/permissions.server";
import { uploadTargetResponse } from "~/utils/uploads.server";
import { readForm } from "~/utils/form.server";
import type { Route } from "./+types/calibration-upload";

// A resource route: a document POST to a screen's action would answer with the page's HTML, not JSON.
export async function action({ request, params }: Route.ActionArgs) {
  const { membership } = await requireOrgRole(request, "lab", ["manager"]);
  const lab = await getOrCreateLab(membership.organisation.id);
  const instrument = isUuid(params.id) ? await instrumentOfLab(lab.organisationId, params.id) : undefined;
  if (!instrument) notFound("There is no such instrument in your lab.");
  const formData = await readForm(request);
  if (formData.get("intent") !== "upload-target" || formData.get("purpose") !== "calibration_scan") {
    return Response.json({ error: "This upload is not a calibration scan." }, { status: 400 });
  }
  return uploadTargetResponse(formData, SCAN_RULE, calibrationPrefix(lab.organisationId, instrument.id));
}
