// The lab workspace's overview: vetting state, matching requests and work in progress.
import { Link, useLoaderData } from "react-router";
import { Badge, EmptyState, PageHeader } from "~/components/ui";
import { requireOrgRole } from "~/utils/permissions.server";
import type { Route } from "./+types/home";

export async function loader({ request }: Route.LoaderArgs) {
  const { membership } = await requireOrgRole(request, "lab");
  return { lab: { name: membership.organisation.name, city: membership.organisation.city }, role: membership.role };
}

export default function LabHome() {
  const { lab, role } = useLoaderData<typeof loader>();
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
    </div>
  );
}

export function meta(_: Route.MetaArgs) {
  return [{ title: "Lab workspace — Diffractory" }];
}
