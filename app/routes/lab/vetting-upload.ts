// POST /lab/vetting/upload — presigned upload targets for a vetting application's certificate and calibration scan.
import { getOrCreateLab, vettingPrefix } from "~/models/labs/vetting.server";
import { requireOrgRole } from "~/utils/permissions.server";
import { DOCUMENT_RULE, SCAN_RULE } from "~/models/files/storage.server";
import { uploadTargetResponse } from "~/utils/uploads.server";
import { readForm } from "~/utils/form.server";
import type { Route } from "./+types/vetting-upload";

const RULES = { accreditation_certificate: DOCUMENT_RULE, calibration_scan: SCAN_RULE } as const;

// A resource route: a document POST to a screen's action would answer with the page's HTML, not JSON.
export async function action({ request }: Route.ActionArgs) {
  const { membership } = await requireOrgRole(request, "lab", ["manager"]);
  const lab = await getOrCreateLab(membership.organisation.id);
  const formData = await readForm(request);
  const purpose = String(formData.get("purpose") ?? "");
  if (formData.get("intent") !== "upload-target" || !(purpose in RULES)) {
    return Response.json({ error: "This upload is not part of a vetting application." }, { status: 400 });
  }
  return uploadTargetResponse(formData, RULES[purpose as keyof typeof RULES], vettingPrefix(lab.organisationId));
}
