// /client/data-room — every delivered file of the organisation's orders, grouped by order.
import { desc, eq } from "drizzle-orm";
import { Link, useLoaderData } from "react-router";
import { FileCheckCell } from "~/components/order-files-table";
import { Badge, EmptyState, PageHeader } from "~/components/ui";
import { db, schema } from "~/db/client.server";
import { formatBytes, RETENTION_YEARS } from "~/domain/order-files";
import { orderFileList } from "~/models/files/files.server";
import { ORDER_STATE_LABELS, ORDER_STATE_TONES } from "~/domain/order-states";
import { requireOrgRole } from "~/utils/permissions.server";
import type { Route } from "./+types/data-room";

export async function loader({ request }: Route.LoaderArgs) {
  const { membership } = await requireOrgRole(request, "client");
  const orders = await db
    .select({ id: schema.orders.id, state: schema.orders.state, title: schema.requests.title, lab: schema.organisations.name, updatedAt: schema.orders.updatedAt })
    .from(schema.orders)
    .innerJoin(schema.requests, eq(schema.requests.id, schema.orders.requestId))
    .innerJoin(schema.organisations, eq(schema.organisations.id, schema.orders.labId))
    .where(eq(schema.orders.clientOrganisationId, membership.organisation.id))
    .orderBy(desc(schema.orders.updatedAt))
    .limit(200);
  const withFiles = await Promise.all(orders.map(async (o) => ({ ...o, files: await orderFileList(o.id, { side: "client" }) })));
  return { organisation: membership.organisation.name, orders: withFiles.filter((o) => o.files.length > 0) };
}

export default function DataRoom() {
  const { organisation, orders } = useLoaderData<typeof loader>();
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
        <div className="space-y-6">
          {orders.map((o) => {
            const latest = o.files.filter((f, i, all) => all.findIndex((g) => g.name === f.name) === i);
            return (
              <section key={o.id} className="card" aria-labelledby={`order-${o.id}`}>
                <div className="flex flex-wrap items-start justify-between gap-3">
                  <div>
                    <h2 id={`order-${o.id}`} className="text-lg font-semibold">
                      <Link to={`/client/data-room/${o.id}`} className="text-beam-700 hover:underline">
                        {o.title}
                      </Link>
                    </h2>
                    <p className="text-sm text-ink-600">
                      {o.lab} · {latest.length} {latest.length === 1 ? "file" : "files"}
                      {o.files.length > latest.length ? `, ${o.files.length} versions` : ""}
                    </p>
                  </div>
                  <Badge tone={ORDER_STATE_TONES[o.state]}>{ORDER_STATE_LABELS[o.state]}</Badge>
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
      )}
    </div>
  );
}

export function meta(_: Route.MetaArgs) {
  return [{ title: "Data room — Diffractory" }];
}
