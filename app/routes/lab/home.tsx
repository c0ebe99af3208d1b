// The lab workspace's overview: vetting state, matching requests and work in progress.
import { Link } from "react-router";
import { OrdersByState, WaitingPanel } from "~/components/overview";
import { Badge, EmptyState, PageHeader } from "~/components/ui";
import { labOverview } from "~/models/orders/overview.server";
import { requireOrgRole } from "~/utils/permissions.server";
import type { Route } from "./+types/home";

export async function loader({ request }: Route.LoaderArgs) {
  const { membership } = await requireOrgRole(request, "lab");
  return {
    lab: { name: membership.organisation.name, city: membership.organisation.city },
    role: membership.role,
    overview: await labOverview(membership.organisation.id),
  };
}

export default function LabHome({ loaderData }: Route.ComponentProps) {
  const { lab, role, overview } = loaderData;
  return (
    <div>
      <PageHeader
        title={lab.name}
        subtitle={
          <>
            Lab{lab.city ? ` in ${lab.city}` : ""} · you are {role === "manager" ? "a manager" : "an operator"}
          </>
        }
        actions={<Badge tone="brand">Lab</Badge>}
      />
      {overview.orders.length > 0 || overview.waiting.length > 0 ? (
        <div className="grid gap-6 lg:grid-cols-2">
          <WaitingPanel items={overview.waiting} />
          {overview.orders.length > 0 ? <OrdersByState orders={overview.orders} to="/lab/work-queue" /> : null}
        </div>
      ) : (
        <EmptyState
          title="Nothing in the inbox yet"
          action={
            <Link to="/lab/capabilities" className="btn-primary">
              Describe your instruments
            </Link>
          }
        >
          Requests that your instruments, stages and hazard acceptance can serve arrive here once your lab is approved.
        </EmptyState>
      )}
    </div>
  );
}

export function meta(_: Route.MetaArgs) {
  return [
    { title: "Lab workspace — Diffractory" },
    { name: "description", content: "Your lab's vetting state, the requests that match its instruments and the work in progress." },
  ];
}
