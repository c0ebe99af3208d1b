// The lab's inbox: open requests its instruments and hazard acceptance fit, and requests it was invited to.
import { Formula } from "~/components/symbols";
import { Link } from "react-router";
import { PageNav, SortableTable } from "~/components/data-table";
import { Badge, EmptyState, PageHeader } from "~/components/ui";
import { type InboxSort, labInboxPage } from "~/models/labs/matching.server";
import { vettingStateOf } from "~/models/requests/quotes.server";
import { requireOrgRole } from "~/utils/permissions.server";
import type { Route } from "./+types/inbox";
import { useFormat } from "~/components/locale";
import { pageOf, readTableQuery, type TableSpec } from "~/utils/table";

const TABLE: TableSpec<InboxSort> = {
  sorts: ["title", "client", "estimate", "deadline", "opened"],
  defaultSort: "opened",
  firstDir: { opened: "desc" },
  pageSize: 50,
};

export async function loader({ request }: Route.LoaderArgs) {
  const { membership } = await requireOrgRole(request, "lab");
  const labId = membership.organisation.id;
  const q = readTableQuery(request, TABLE);
  const vetting = await vettingStateOf(labId);
  if (vetting !== "approved") return { vetting, items: [], sort: q.sort, dir: q.dir, info: pageOf(0, q) };
  // Only the page's requests are read: the matching and the paging run in SQL over classes of equal needs (labInboxPage).
  const { items, info } = await labInboxPage(labId, q);
  return { vetting, items, sort: q.sort, dir: q.dir, info };
}

export default function LabInbox({ loaderData }: Route.ComponentProps) {
  const fmt = useFormat();
  const { vetting, items, sort, dir, info } = loaderData;
  if (vetting !== "approved") {
    return (
      <div>
        <PageHeader title="Inbox" />
        <EmptyState
          title="Not approved yet"
          action={
            <Link to="/lab/vetting" className="btn-primary">
              See your vetting application
            </Link>
          }
        >
          Requests arrive here once an admin has approved your lab; only approved labs can quote.
        </EmptyState>
      </div>
    );
  }
  return (
    <div>
      <PageHeader title="Inbox" subtitle="Open requests your lab can serve, and invitations." />
      {items.length === 0 ? (
        <EmptyState
          title="No matching requests"
          action={
            <Link to="/lab/capabilities" className="btn-secondary">
              Review your instruments and hazard acceptance
            </Link>
          }
        >
          Open requests that your instruments and hazard acceptance can serve, and invitations, arrive here.
        </EmptyState>
      ) : (
        <>
          <SortableTable
            columns={[
              { label: "Request", sort: "title" },
              { label: "Client", sort: "client" },
              { label: "Fit" },
              { label: "Estimate", sort: "estimate" },
              { label: "Deadline", sort: "deadline" },
              { label: "Opened", sort: "opened", firstDir: "desc" },
            ]}
            sort={sort}
            dir={dir}
            caption="Matching requests"
          >
            {items.map((i) => (
              <tr key={i.id}>
                <td className="font-medium">
                  <Link to={`/lab/requests/${i.id}`} className="text-beam-700 underline">
                    <Formula>{i.title}</Formula>
                  </Link>
                  <div className="mt-1 flex gap-1">
                    {i.invited ? <Badge tone="brand">invited</Badge> : null}
                    {i.quoted ? <Badge tone="ok">quoted</Badge> : null}
                  </div>
                </td>
                <td>{i.client}</td>
                <td>
                  {i.fits ? <Badge tone="ok">fits</Badge> : <Badge tone="danger">does not fit</Badge>}
                  {i.warnings ? (
                    <span className="ml-1 text-xs text-caution-700">
                      ! {i.warnings} warning{i.warnings === 1 ? "" : "s"}
                    </span>
                  ) : null}
                </td>
                <td>{i.estimate !== null && i.currency ? fmt.money(i.estimate, i.currency) : "—"}</td>
                <td>{i.deadline ? fmt.date(i.deadline) : "—"}</td>
                <td>{i.openedAt ? fmt.date(i.openedAt) : "—"}</td>
              </tr>
            ))}
          </SortableTable>
          <PageNav info={info} noun={["request", "requests"]} />
        </>
      )}
    </div>
  );
}

export function meta(_: Route.MetaArgs) {
  return [
    { title: "Inbox — Diffractory" },
    { name: "description", content: "Open requests your instruments and accepted hazards fit, and requests your lab was invited to quote for." },
  ];
}
