// The admin overview: how many people and organisations the platform has, and what waits for review.
import { count, eq } from "drizzle-orm";
import { Link, useLoaderData } from "react-router";
import { PageHeader } from "~/components/ui";
import { db, schema } from "~/db/client.server";
import { requireAdmin } from "~/utils/permissions.server";
import type { Route } from "./+types/home";

export async function loader({ request }: Route.LoaderArgs) {
  await requireAdmin(request);
  const [[people], [clients], [labs]] = await Promise.all([
    db.select({ n: count() }).from(schema.users),
    db.select({ n: count() }).from(schema.organisations).where(eq(schema.organisations.kind, "client")),
    db.select({ n: count() }).from(schema.organisations).where(eq(schema.organisations.kind, "lab")),
  ]);
  return { people: people.n, clients: clients.n, labs: labs.n };
}

export default function AdminHome() {
  const stats = useLoaderData<typeof loader>();
  const tiles = [
    { label: "People", value: stats.people, to: "/admin/users" },
    { label: "Client organisations", value: stats.clients, to: "/admin/users" },
    { label: "Labs", value: stats.labs, to: "/admin/vetting-queue" },
  ];
  return (
    <div>
      <PageHeader title="Platform overview" subtitle="Vet labs, settle disputes, read the ledger and the audit log." />
      <div className="grid gap-4 sm:grid-cols-3">
        {tiles.map((t) => (
          <Link key={t.label} to={t.to} className="card hover:border-beam-200">
            <p className="text-sm text-ink-600">{t.label}</p>
            <p className="mt-1 text-3xl font-bold">{t.value}</p>
          </Link>
        ))}
      </div>
    </div>
  );
}

export function meta(_: Route.MetaArgs) {
  return [{ title: "Admin — Diffractory" }];
}
