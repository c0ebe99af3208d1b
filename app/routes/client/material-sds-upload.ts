// POST /client/materials/sds-upload — presigned upload targets for a material's safety data sheet (PDF).
import { materialSdsPrefix } from "~/models/materials/materials.server";
import { SDS_RULE } from "~/models/requests/requests.server";
import { readForm } from "~/utils/form.server";
import { requireOrgRole } from "~/utils/permissions.server";
import { uploadTargetResponse } from "~/utils/uploads.server";
import type { Route } from "./+types/material-sds-upload";

// A resource route, as the request's (request-sds-upload.ts): the sheet goes under the organisation's materials.
export async function action({ request }: Route.ActionArgs) {
  const { membership } = await requireOrgRole(request, "client");
  const formData = await readForm(request);
  if (formData.get("intent") !== "upload-target") return Response.json({ error: "This upload is not a safety data sheet." }, { status: 400 });
  return uploadTargetResponse(formData, SDS_RULE, materialSdsPrefix(membership.organisation.id));
}
