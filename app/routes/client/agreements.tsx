// /client/agreements — the organisation's standing agreements with their state, material, lots used and period.
import { Link } from "react-router";
import { AgreementsTable } from "~/components/agreement-parts";
import { EmptyState, PageHeader } from "~/components/ui";
import { agreementsOf } from "~/models/agreements/agreements.server";
import { requireOrgRole } from "~/utils/permissions.server";
import type { Route } from "./+types/agreements";

export async function loader({ request }: Route.LoaderArgs) {
  const { membership } = await requireOrgRole(request, "client");
  return { agreements: await agreementsOf("client", membership.organisation.id) };
}

export default function ClientAgreements({ loaderData }: Route.ComponentProps) {
  const { agreements } = loaderData;
  return (
    <div>
      <PageHeader title="Standing agreements" subtitle="A price per lot agreed once with a lab; each new lot becomes an order without a round of quotes." />
      {agreements.length === 0 ? (
        <EmptyState
          title="No standing agreements yet"
          action={
            <Link to="/client/orders" className="btn-primary">
              Go to your orders
            </Link>
          }
        >
          Open an order whose quote suits you and choose "Make this a standing agreement".
        </EmptyState>
      ) : (
        <AgreementsTable rows={agreements} hrefBase="/client/agreements" counterpart="Lab" />
      )}
    </div>
  );
}

export function meta(_: Route.MetaArgs) {
  return [
    { title: "Standing agreements — Diffractory" },
    { name: "description", content: "Your organisation's standing agreements with labs: state, material, lots used and period." },
  ];
}
