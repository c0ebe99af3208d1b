// POST /client/requests/:id/sds-upload — presigned upload targets for a draft's safety data sheets (PDF).
import { notEditable, SDS_RULE, sdsPrefix } from "~/models/requests/requests.server";
import { requireOwnDraft } from "~/utils/permissions.server";
import { uploadTargetResponse } from "~/utils/uploads.server";
import { readForm } from "~/utils/form.server";
import type { Route } from "./+types/request-sds-upload";

// A resource route: a document POST to the hazards screen's action would answer with the page's HTML, not JSON.
export async function action({ request, params }: Route.ActionArgs) {
  const { row } = await requireOwnDraft(request, params.id);
  const locked = notEditable(row);
  if (locked) return Response.json({ error: locked }, { status: 400 });
  const formData = await readForm(request);
  if (formData.get("intent") !== "upload-target") return Response.json({ error: "This upload is not a safety data sheet." }, { status: 400 });
  return uploadTargetResponse(formData, SDS_RULE, sdsPrefix(row));
}
