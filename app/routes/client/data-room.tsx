// /client/data-room — the delivered files of the organisation's orders, grouped by order, DATA_ROOM_PAGE_SIZE (25) orders to a page.
import { Formula } from "~/components/symbols";
import { Link } from "react-router";
import { FileCheckCell } from "~/components/order-files-table";
import { EmptyState, PageHeader } from "~/components/ui";
import { formatBytes, RETENTION_YEARS } from "~/domain/order-files";
import { PageNav } from "~/components/data-table";
import { DATA_ROOM_PAGE_SIZE, dataRoomPage } from "~/models/files/data-room.server";
import { OrderStateBadge } from "~/components/order-state-badge";
import { requireOrgRole } from "~/utils/permissions.server";
import { readTableQuery, type TableSpec } from "~/utils/table";
import type { Route } from "./+types/data-room";

const DATA_ROOM_TABLE: TableSpec<"updated"> = { sorts: ["updated"], defaultSort: "updated", firstDir: { updated: "desc" }, pageSize: DATA_ROOM_PAGE_SIZE };

export async function loader({ request }: Route.LoaderArgs) {
  const { membership } = await requireOrgRole(request, "client");
  // Bad page numbers answer 400 with a sentence; a page past the end shows the last one.
  const q = readTableQuery(request, DATA_ROOM_TABLE);
  return { organisation: membership.organisation.name, ...(await dataRoomPage(membership.organisation.id, q)) };
}

export default function DataRoom({ loaderData }: Route.ComponentProps) {
  const { organisation, orders, page, pageCount, pageSize, total, offset } = loaderData;
  return (
    <div>
      <PageHeader
        title="Data room"
        subtitle={`Delivered scans and reports of ${organisation}, each with its SHA-256 and its lattice check. Files are kept for ${RETENTION_YEARS} years.`}
      />
      {orders.length === 0 ? (
        <EmptyState
          title="The data room is empty"
          action={
            <Link to="/client/orders" className="btn-secondary">
              Follow your orders
            </Link>
          }
        >
          Delivered scans, lab reports and lattice-check results of your orders are kept here.
        </EmptyState>
      ) : (
        <>
          <div className="space-y-6">
            {orders.map((o) => {
              const latest = o.files.filter((f, i, all) => all.findIndex((g) => g.name === f.name) === i);
              return (
                <section key={o.id} className="card" aria-labelledby={`order-${o.id}`}>
                  <div className="flex flex-wrap items-start justify-between gap-3">
                    <div>
                      <h2 id={`order-${o.id}`} className="text-lg font-semibold">
                        <Link to={`/client/data-room/${o.id}`} className="text-beam-700 hover:underline">
                          <Formula>{o.title}</Formula>
                        </Link>
                      </h2>
                      <p className="text-sm text-ink-600">
                        {o.lab} · {latest.length} {latest.length === 1 ? "file" : "files"}
                        {o.files.length > latest.length ? `, ${o.files.length} versions` : ""}
                      </p>
                    </div>
                    <OrderStateBadge state={o.state} />
                  </div>
                  <ul className="mt-3 divide-y divide-ink-100 text-sm">
                    {latest.map((f) => (
                      <li key={f.id} className="flex flex-wrap items-center justify-between gap-2 py-2">
                        <span>
                          <span className="font-medium">{f.name}</span> <span className="font-mono text-xs text-ink-500">v{f.version}</span>{" "}
                          <span className="text-ink-500">· {formatBytes(f.size)}</span>
                        </span>
                        <FileCheckCell check={f.check} kind={f.kind} live />
                      </li>
                    ))}
                  </ul>
                </section>
              );
            })}
          </div>
          <PageNav info={{ page, pageCount, pageSize, total, offset }} noun={["order", "orders"]} />
        </>
      )}
    </div>
  );
}

export function meta(_: Route.MetaArgs) {
  return [
    { title: "Data room — Diffractory" },
    { name: "description", content: "Every file delivered for your organisation's orders, grouped by order, with their lattice checks." },
  ];
}
