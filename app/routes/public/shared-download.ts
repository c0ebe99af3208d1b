// GET /shared/:token/files/:fileId — a download through a share link: logged with the link, then a presigned URL.
import { downloadable, downloadUrl, fileOfOrder } from "~/models/files/files.server";
import { resolveShareLink } from "~/models/files/share-links.server";
import { notFound } from "~/utils/permissions.server";
import type { Route } from "./+types/shared-download";

export async function loader({ params, context }: Route.LoaderArgs) {
  const resolved = await resolveShareLink(params.token);
  if (!resolved) notFound("This share link does not exist.");
  if (resolved.status !== "active") {
    throw Response.json({ error: resolved.status === "revoked" ? "This share link has been revoked." : "This share link has expired." }, { status: 410 });
  }
  const file = await fileOfOrder(resolved.link.orderId, params.fileId);
  if (!file || !downloadable(file, "shared")) notFound("This file is not part of the shared data room.");
  const url = await downloadUrl(file, { shareLinkId: resolved.link.id, clientAddress: context.clientAddress ?? null });
  return new Response(null, { status: 302, headers: { Location: url, "Cache-Control": "no-store" } });
}
