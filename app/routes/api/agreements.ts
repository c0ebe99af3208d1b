// GET /api/agreements — the active organisation's standing agreements (as client or as lab), newest first; each with
// its number, state, material, the other party, price per lot, budget cap, lots used, money spent and remaining
// (net, in minor units of its currency) and its period.
import { agreementsOf } from "~/models/agreements/agreements.server";
import { requireUser } from "~/utils/permissions.server";
import type { Route } from "./+types/agreements";

export async function loader({ request }: Route.LoaderArgs) {
  const actor = await requireUser(request);
  const organisation = actor.active?.organisation;
  if (!organisation) return Response.json({ error: "You belong to no organisation." }, { status: 403 });
  const rows = await agreementsOf(organisation.kind === "lab" ? "lab" : "client", organisation.id);
  return Response.json(
    {
      agreements: rows.map((r) => ({
        number: r.number,
        state: r.state,
        material: { productCode: r.materialCode, name: r.materialName },
        counterpart: r.counterpart,
        currency: r.currency,
        pricePerLotMinor: r.pricePerLotMinor,
        budgetCapMinor: r.budgetCapMinor,
        lotsUsed: r.lots,
        spentNetMinor: r.spentNetMinor,
        remainingNetMinor: r.remainingMinor,
        turnaroundDays: r.turnaroundDays,
        startsOn: r.startsOn,
        endsOn: r.endsOn,
        endingAt: r.endingAt?.toISOString() ?? null,
        endedBecause: r.endedBecause,
        href: `/${organisation.kind === "lab" ? "lab" : "client"}/agreements/${r.id}`,
      })),
    },
    { headers: { "Cache-Control": "private, no-store" } },
  );
}
