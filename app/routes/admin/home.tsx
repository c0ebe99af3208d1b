// The admin overview: what waits for a decision (applications, disputes, undeliverable e-mail), then how many
// people and organisations the platform has.
import { Link } from "react-router";
import { PageHeader } from "~/components/ui";
import { platformTallies } from "~/models/platform/overview.server";
import { requireAdmin } from "~/utils/permissions.server";
import type { Route } from "./+types/home";

export async function loader({ request }: Route.LoaderArgs) {
  await requireAdmin(request);
  return platformTallies();
}

interface Tile {
  label: string;
  value: number;
  to: string;
  /** Said when nothing waits; a tile with it is marked (a bar and "!") while something does. */
  none?: string;
}

function TileSection({ id, heading, tiles }: { id: string; heading: string; tiles: Tile[] }) {
  return (
    <section aria-labelledby={`${id}-heading`}>
      <h2 id={`${id}-heading`} className="mb-3 text-lg font-semibold">
        {heading}
      </h2>
      <div className="grid gap-4 sm:grid-cols-3">
        {tiles.map((t) => {
          const waits = t.none !== undefined && t.value > 0;
          return (
            <Link key={t.label} to={t.to} className={`card hover:border-beam-200 ${waits ? "border-l-4 border-l-caution-600" : ""}`}>
              <p className="text-sm text-ink-600">{t.label}</p>
              <p className="mt-1 text-3xl font-bold">
                {waits ? <span aria-hidden="true">! </span> : null}
                {t.value}
              </p>
              {t.none !== undefined && t.value === 0 ? <p className="mt-1 text-xs text-ink-600">{t.none}</p> : null}
            </Link>
          );
        })}
      </div>
    </section>
  );
}

export default function AdminHome({ loaderData: stats }: Route.ComponentProps) {
  const waiting: Tile[] = [
    { label: "Applications in review", value: stats.inReview, to: "/admin/vetting-queue?state=in_review", none: "No lab waits for vetting." },
    { label: "Open disputes", value: stats.openDisputes, to: "/admin/disputes", none: "No dispute waits for a decision." },
    { label: "Parked e-mails", value: stats.parked, to: "/admin/outbox", none: "Every e-mail went out or is being retried." },
  ];
  const tiles: Tile[] = [
    { label: "People", value: stats.people, to: "/admin/users" },
    { label: "Client organisations", value: stats.clients, to: "/admin/users" },
    { label: "Labs", value: stats.labs, to: "/admin/vetting-queue" },
  ];
  return (
    <div className="space-y-8">
      <PageHeader title="Platform overview" subtitle="Vet labs, settle disputes, read the ledger and the audit log." />
      <TileSection id="waiting" heading="Waiting for you" tiles={waiting} />
      <TileSection id="platform" heading="On the platform" tiles={tiles} />
    </div>
  );
}

export function meta(_: Route.MetaArgs) {
  return [
    { title: "Admin — Diffractory" },
    { name: "description", content: "What waits for an admin's decision — lab applications, disputes, undeliverable e-mail — and the platform's size." },
  ];
}
