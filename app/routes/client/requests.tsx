// The client organisation's requests, grouped by state, with the way to start a new one.
import { Link, useLoaderData } from "react-router";
import { formatDate, RequestStateBadge } from "~/components/request-parts";
import { EmptyState, PageHeader, TableCard } from "~/components/ui";
import { listOrganisationRequests } from "~/models/requests.server";
import { requireOrgRole } from "~/utils/permissions.server";
import type { Route } from "./+types/requests";

const STATE_ORDER = ["draft", "open", "awarded", "expired", "withdrawn"] as const;

export async function loader({ request }: Route.LoaderArgs) {
  const { membership } = await requireOrgRole(request, "client");
  return { organisation: membership.organisation.name, requests: await listOrganisationRequests(membership.organisation.id) };
}

export default function Requests() {
  const { organisation, requests } = useLoaderData<typeof loader>();
  const newButton = (
    <Link to="/client/requests/new" className="btn-primary">
      New request
    </Link>
  );
  if (requests.length === 0) {
    return (
      <div>
        <PageHeader title="Requests" subtitle={organisation} />
        <EmptyState title="No requests yet" action={newButton}>
          Post a measurement request with your samples, their declared phase and cell, and a hazard declaration for each.
        </EmptyState>
      </div>
    );
  }
  return (
    <div>
      <PageHeader title="Requests" subtitle={organisation} actions={newButton} />
      <div className="space-y-6">
        {STATE_ORDER.map((state) => {
          const rows = requests.filter((r) => r.state === state);
          if (rows.length === 0) return null;
          return (
            <section key={state} aria-label={`${state} requests`}>
              <h2 className="mb-2 text-sm font-semibold tracking-wide text-ink-500 uppercase">{state}</h2>
              <TableCard columns={["Title", "State", "Samples", "Quotes", "Deadline", "Created"]} caption={`${state} requests`}>
                {rows.map((r) => (
                  <tr key={r.id}>
                    <td className="font-medium">
                      <Link to={r.state === "draft" ? `/client/requests/${r.id}/edit/${r.draftStep}` : `/client/requests/${r.id}`} className="text-beam-700 underline">
                        {r.title}
                      </Link>
                    </td>
                    <td>
                      <RequestStateBadge state={r.state} />
                    </td>
                    <td>{r.samples}</td>
                    <td>{r.quotes}</td>
                    <td>{r.deadline ? formatDate(r.deadline) : "—"}</td>
                    <td>{formatDate(r.createdAt)}</td>
                  </tr>
                ))}
              </TableCard>
            </section>
          );
        })}
      </div>
    </div>
  );
}

export function meta(_: Route.MetaArgs) {
  return [{ title: "Requests — Diffractory" }];
}
