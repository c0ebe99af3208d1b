// GET /api/orders/:id/files — the order's files with their check, for the client organisation and the lab on it.
import { orderFileList } from "~/models/files/files.server";
import { orderForOrganisation } from "~/models/orders/lifecycle.server";
import { notFound, requireUser } from "~/utils/permissions.server";
import type { Route } from "./+types/order-files";

export async function loader({ request, params }: Route.LoaderArgs) {
  const actor = await requireUser(request);
  // The active organisation first, so a person on both sides of an order sees their current side.
  const memberships = [...actor.memberships].sort((a, b) => Number(b.organisation.id === actor.active?.organisation.id) - Number(a.organisation.id === actor.active?.organisation.id));
  for (const m of memberships) {
    const found = await orderForOrganisation(params.id, m.organisation.id);
    if (!found) continue;
    const files = await orderFileList(found.order.id, { side: found.side });
    return Response.json(
      {
        files: files.map((f) => ({
          id: f.id,
          name: f.name,
          version: f.version,
          kind: f.kind,
          size: f.size,
          sha256: f.sha256,
          state: f.state,
          sampleLabel: f.sampleLabel,
          uploadedAt: f.uploadedAt,
          ...(found.side === "lab" ? { rejectReason: f.rejectReason, deletedAt: f.deletedAt } : {}),
          check: { status: f.check?.status ?? null, verdict: f.check?.verdict ?? null, error: f.check?.error ?? null },
        })),
      },
      { headers: { "Cache-Control": "private, no-store" } },
    );
  }
  notFound("No such order for your organisations.");
}
