// The client organisation's materials: each product declared once (docs/design.md#materials-and-lots), with its
// main phase, how many lots are on its record and the last lot's verdict; archived ones on request.
import { Formula } from "~/components/symbols";
import { Link } from "react-router";
import { CheckStateBadge, WindowBadge } from "~/components/check-status";
import { useFormat } from "~/components/locale";
import { Badge, EmptyState, PageHeader, TableCard } from "~/components/ui";
import { listMaterials } from "~/models/materials/materials.server";
import { requireOrgRole } from "~/utils/permissions.server";
import type { Route } from "./+types/materials";

export async function loader({ request }: Route.LoaderArgs) {
  const { membership } = await requireOrgRole(request, "client");
  const archived = new URL(request.url).searchParams.get("archived") === "1";
  const rows = await listMaterials(membership.organisation.id, { archived });
  return {
    organisation: membership.organisation.name,
    archived,
    materials: rows.map((m) => ({
      id: m.id,
      productCode: m.productCode,
      name: m.name,
      phase: m.expectedPhase,
      crystalSystem: m.crystalSystem,
      archived: !!m.archivedAt,
      lotsOnRecord: m.lotsOnRecord,
      lastLot: m.lastLot,
    })),
  };
}

export default function Materials({ loaderData }: Route.ComponentProps) {
  const fmt = useFormat();
  const { organisation, archived, materials } = loaderData;
  const newButton = (
    <Link to="/client/materials/new" className="btn-primary">
      New material
    </Link>
  );
  const toggle = (
    <Link to={archived ? "/client/materials" : "/client/materials?archived=1"} className="text-sm text-beam-700 underline">
      {archived ? "Hide archived materials" : "Show archived materials"}
    </Link>
  );
  if (materials.length === 0) {
    return (
      <div>
        <PageHeader title="Materials" subtitle={organisation} />
        <EmptyState title="No materials yet" action={newButton}>
          Declare a product once — its phases, acceptance window, usual measurement and hazards — and request each lot from it. Every checked lot goes on the
          material's record.
        </EmptyState>
        <p className="mt-4 text-center">{toggle}</p>
      </div>
    );
  }
  return (
    <div>
      <PageHeader title="Materials" subtitle={organisation} actions={newButton} />
      <TableCard columns={["Product code", "Name", "Main phase", "Lots on record", "Last lot"]} caption="Materials">
        {materials.map((m) => (
          <tr key={m.id}>
            <td className="font-mono font-medium">
              <Link to={`/client/materials/${m.id}`} className="text-beam-700 underline">
                {m.productCode}
              </Link>{" "}
              {m.archived ? <Badge tone="neutral">Archived</Badge> : null}
            </td>
            <td>
              <Formula>{m.name}</Formula>
            </td>
            <td>
              {m.phase ? <Formula>{m.phase}</Formula> : "—"}
              {m.crystalSystem ? <span className="text-ink-500"> ({m.crystalSystem})</span> : null}
            </td>
            <td>{m.lotsOnRecord}</td>
            <td>
              {m.lastLot ? (
                <span className="flex flex-wrap items-center gap-1">
                  <span className="font-mono">{m.lastLot.lotCode}</span>
                  <CheckStateBadge status="done" verdict={m.lastLot.verdict} />
                  <WindowBadge withinWindow={m.lastLot.withinWindow} />
                  <span className="text-xs text-ink-500">{fmt.date(m.lastLot.measuredAt)}</span>
                </span>
              ) : (
                "none yet"
              )}
            </td>
          </tr>
        ))}
      </TableCard>
      <p className="mt-4">{toggle}</p>
    </div>
  );
}

export function meta(_: Route.MetaArgs) {
  return [
    { title: "Materials — Diffractory" },
    { name: "description", content: "Your organisation's materials with their main phase, lots on record and the last lot's verdict." },
  ];
}
