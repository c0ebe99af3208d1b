// The client workspace's overview: where the organisation's requests, orders and data stand.
import { Link } from "react-router";
import { OrdersByState, WaitingPanel } from "~/components/overview";
import { EmptyState, PageHeader } from "~/components/ui";
import { clientOverview } from "~/models/orders/overview.server";
import { requireOrgRole } from "~/utils/permissions.server";
import type { Route } from "./+types/home";

export async function loader({ request }: Route.LoaderArgs) {
  const { membership } = await requireOrgRole(request, "client");
  return { organisation: { name: membership.organisation.name }, role: membership.role, overview: await clientOverview(membership.organisation.id) };
}

export default function ClientHome({ loaderData }: Route.ComponentProps) {
  const { organisation, role, overview } = loaderData;
  const started = overview.requestCount > 0 || overview.orders.length > 0;
  return (
    <div>
      <PageHeader title={organisation.name} subtitle={`Client organisation · you are ${role === "owner" ? "an owner" : "a member"}`} />
      <div className="grid gap-6 lg:grid-cols-3">
        <div className="space-y-6 lg:col-span-2">
          {started ? (
            <>
              <WaitingPanel items={overview.waiting} />
              {overview.orders.length > 0 ? <OrdersByState orders={overview.orders} to="/client/orders" /> : null}
              <p className="flex flex-wrap gap-3 text-sm">
                <Link to="/client/requests/new" className="btn-primary">
                  New request
                </Link>
                <Link to="/labs" className="btn-secondary">
                  Find a lab
                </Link>
              </p>
            </>
          ) : (
            <EmptyState
              title="No requests yet"
              action={
                <Link to="/labs" className="btn-primary">
                  Find a lab
                </Link>
              }
            >
              Start by posting a measurement request: your samples, their declared phase and approximate cell, a hazard declaration for each, and the
              measurement you need.
            </EmptyState>
          )}
        </div>
      </div>
    </div>
  );
}

export function meta(_: Route.MetaArgs) {
  return [
    { title: "Client workspace — Diffractory" },
    { name: "description", content: "Where your organisation's requests, orders and delivered data stand." },
  ];
}
