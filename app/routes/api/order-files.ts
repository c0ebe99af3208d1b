// GET /api/orders/:id/files — the order's files with their check, for the client organisation and the lab on it.
import { orderFileList } from "~/models/files/files.server";
import { requireOrderParty } from "~/utils/permissions.server";
import type { Route } from "./+types/order-files";

export async function loader({ request, params }: Route.LoaderArgs) {
  // A person on both sides of an order sees their current side's files.
  const { order, side } = await requireOrderParty(request, params.id);
  const files = await orderFileList(order.id, { side });
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
        ...(side === "lab" ? { rejectReason: f.rejectReason, deletedAt: f.deletedAt } : {}),
        check: {
          status: f.check?.status ?? null,
          verdict: f.check?.verdict ?? null,
          withinWindow: f.check?.withinWindow ?? null,
          error: f.check?.error ?? null,
        },
      })),
    },
    { headers: { "Cache-Control": "private, no-store" } },
  );
}
