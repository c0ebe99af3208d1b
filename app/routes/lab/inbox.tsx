// The lab's inbox: open requests its instruments and hazard acceptance fit, and requests it was invited to.
import { Formula } from "~/components/symbols";
import { Link } from "react-router";
import { PageNav, SortableTable } from "~/components/data-table";
import { Badge, EmptyState, PageHeader } from "~/components/ui";
import { requestsMatchingLab } from "~/models/labs/matching.server";
import { quoteStatesOfLab, vettingStateOf } from "~/models/requests/quotes.server";
import { requestsWithClients } from "~/models/requests/requests.server";
import { requireOrgRole } from "~/utils/permissions.server";
import type { Route } from "./+types/inbox";
import { useFormat } from "~/components/locale";
import { pageOf, readTableQuery, sortAndPage, type TableSpec } from "~/utils/table";

const TABLE: TableSpec<"title" | "client" | "estimate" | "deadline" | "opened"> = {
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
  const found = await requestsMatchingLab(labId);
  const ids = found.map((f) => f.requestId);
  const rows = await requestsWithClients(ids);
  const quoted = await quoteStatesOfLab(labId, ids);
  const byId = new Map(rows.map((r) => [r.id, r]));
  const quotedIds = new Set(quoted.filter((q) => q.state === "sent").map((q) => q.requestId));
  const items = found.flatMap((f) => {
    const row = byId.get(f.requestId);
    if (!row) return [];
    return [
      {
        ...row,
        invited: f.invited,
        fits: f.match.fits,
        estimate: f.match.estimatedPriceMinor,
        currency: f.match.currency,
        warnings: f.match.warnings.length,
        quoted: quotedIds.has(row.id),
      },
    ];
  });
  // Matching is computed per request, so the list is sorted and paged here rather than in SQL.
  const {
    rows: page,
    sort,
    dir,
    ...info
  } = sortAndPage(items, q, {
    title: (i) => i.title,
    client: (i) => i.client,
    estimate: (i) => (i.estimate === null ? null : `${i.currency}${String(i.estimate).padStart(12, "0")}`),
    deadline: (i) => i.deadline,
    opened: (i) => i.openedAt,
  });
  return { vetting, items: page, sort, dir, info };
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
