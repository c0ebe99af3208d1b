// GET /files/:fileId/download — logs the download and redirects to a presigned storage URL valid for minutes.
import { downloadable, downloadUrl, fileForOrganisations } from "~/models/files/files.server";
import { notFound, requireUser } from "~/utils/permissions.server";
import type { Route } from "./+types/file-download";

export async function loader({ request, params, context }: Route.LoaderArgs) {
  const actor = await requireUser(request);
  const found = await fileForOrganisations(
    params.fileId,
    actor.memberships.map((m) => m.organisation.id),
  );
  if (!found || !downloadable(found.file, found.side)) notFound("No such file for your organisations.");
  const url = await downloadUrl(found.file, { userId: actor.user.id, clientAddress: context.clientAddress ?? null });
  return new Response(null, { status: 302, headers: { Location: url, "Cache-Control": "private, no-store" } });
}
