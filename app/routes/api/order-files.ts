// GET /api/orders/:id/files — the order's files with their check, for the client organisation and the lab on it,
// and for an admin when the order has a dispute (the read is audit-logged).
import { orderFileList } from "~/models/files/files.server";
import { requireOrderPartyOrDisputeAdmin } from "~/utils/permissions.server";
import type { Route } from "./+types/order-files";

export async function loader({ request, params, context }: Route.LoaderArgs) {
  // A person on both sides of an order sees their current side's files; an admin sees what the lab sees.
  const { order, side } = await requireOrderPartyOrDisputeAdmin(request, params.id, { what: "file list", clientAddress: context.clientAddress });
  const files = await orderFileList(order.id, { side: side === "admin" ? "lab" : side });
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
        ...(side !== "client" ? { rejectReason: f.rejectReason, deletedAt: f.deletedAt } : {}),
        check: {
          id: f.check?.id ?? null,
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
