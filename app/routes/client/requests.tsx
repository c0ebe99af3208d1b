// The client organisation's requests, grouped by state, REQUESTS_PAGE_SIZE (25) to a page, with the way to start a new one.
import { Formula } from "~/components/symbols";
import { data, Link } from "react-router";
import { RequestStateBadge } from "~/components/request-parts";
import { PageNav } from "~/components/data-table";
import { EmptyState, PageHeader, TableCard } from "~/components/ui";
import { listOrganisationRequests, REQUESTS_PAGE_SIZE } from "~/models/requests/requests.server";
import { requireOrgRole } from "~/utils/permissions.server";
import type { Route } from "./+types/requests";
import { useFormat } from "~/components/locale";

const STATE_ORDER = ["draft", "open", "awarded", "expired", "withdrawn"] as const;

export async function loader({ request }: Route.LoaderArgs) {
  const { membership } = await requireOrgRole(request, "client");
  const pageParam = new URL(request.url).searchParams.get("page") ?? "1";
  if (!/^[1-9][0-9]{0,5}$/.test(pageParam)) throw data({ message: "The page number must be a whole number from 1." }, { status: 400 });
  // A page past the end shows the last one.
  const list = await listOrganisationRequests(membership.organisation.id, Number(pageParam));
  return { organisation: membership.organisation.name, pageSize: REQUESTS_PAGE_SIZE, ...list };
}

export default function Requests({ loaderData }: Route.ComponentProps) {
  const fmt = useFormat();
  const { organisation, requests, page, pageCount, pageSize, total, countByState } = loaderData;
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
              <h2 className="mb-2 text-sm font-semibold text-ink-500">
                {state} <span className="font-normal normal-case">({countByState[state] ?? rows.length})</span>
              </h2>
              <TableCard columns={["Title", "State", "Samples", "Quotes", "Deadline", "Created"]} caption={`${state} requests`}>
                {rows.map((r) => (
                  <tr key={r.id}>
                    <td className="font-medium">
                      <Link
                        to={r.state === "draft" ? `/client/requests/${r.id}/edit/${r.draftStep}` : `/client/requests/${r.id}`}
                        className="text-beam-700 underline"
                      >
                        <Formula>{r.title}</Formula>
                      </Link>
                    </td>
                    <td>
                      <RequestStateBadge state={r.state} />
                    </td>
                    <td>{r.samples}</td>
                    <td>{r.quotes}</td>
                    <td>{r.deadline ? fmt.date(r.deadline) : "—"}</td>
                    <td>{fmt.date(r.createdAt)}</td>
                  </tr>
                ))}
              </TableCard>
            </section>
          );
        })}
      </div>
      <PageNav info={{ page, pageCount, pageSize, total, offset: (page - 1) * pageSize }} noun={["request", "requests"]} />
    </div>
  );
}

export function meta(_: Route.MetaArgs) {
  return [{ title: "Requests — Diffractory" }, { name: "description", content: "Your organisation's requests by state, and the way to start a new one." }];
}
