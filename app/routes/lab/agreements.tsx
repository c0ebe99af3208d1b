// /lab/agreements — the lab's standing agreements with their state, material, lots used and period.
import { AgreementsTable } from "~/components/agreement-parts";
import { EmptyState, PageHeader } from "~/components/ui";
import { agreementsOf } from "~/models/agreements/agreements.server";
import { requireOrgRole } from "~/utils/permissions.server";
import type { Route } from "./+types/agreements";

export async function loader({ request }: Route.LoaderArgs) {
  const { membership } = await requireOrgRole(request, "lab");
  return { agreements: await agreementsOf("lab", membership.organisation.id) };
}

export default function LabAgreements({ loaderData }: Route.ComponentProps) {
  const { agreements } = loaderData;
  return (
    <div>
      <PageHeader
        title="Standing agreements"
        subtitle="A price per lot agreed once with a lab; clients propose them from your quotes; each lot becomes an order."
      />
      {agreements.length === 0 ? (
        <EmptyState title="No standing agreements yet">A client proposes one from an order of yours; it appears here for you to agree or decline.</EmptyState>
      ) : (
        <AgreementsTable rows={agreements} hrefBase="/lab/agreements" counterpart="Client" />
      )}
    </div>
  );
}

export function meta(_: Route.MetaArgs) {
  return [
    { title: "Standing agreements — Diffractory" },
    { name: "description", content: "Your lab's standing agreements with clients: state, material, lots used and period." },
  ];
}
