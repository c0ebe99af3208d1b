// GET /files/:fileId/download — logs the download and redirects to a presigned storage URL valid for minutes; the
// order's parties may download, and an admin when the file's order has a dispute (audit-logged).
import { downloadUrl } from "~/models/files/files.server";
import { requireFileDownload } from "~/utils/permissions.server";
import type { Route } from "./+types/file-download";

export async function loader({ request, params, context }: Route.LoaderArgs) {
  const { actor, file } = await requireFileDownload(request, params.fileId, context.clientAddress);
  const url = await downloadUrl(file, { userId: actor.user.id, clientAddress: context.clientAddress ?? null });
  return new Response(null, { status: 302, headers: { Location: url, "Cache-Control": "private, no-store" } });
}
