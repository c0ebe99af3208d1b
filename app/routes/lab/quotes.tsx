// The lab's quotes with their state, LAB_QUOTES_PAGE_SIZE (25) to a page, newest first; lapsed ones are marked before the page is read.
import { Formula } from "~/components/symbols";
import { Link } from "react-router";
import { QuoteStateBadge } from "~/components/request-parts";
import { PageNav } from "~/components/data-table";
import { EmptyState, PageHeader, TableCard } from "~/components/ui";
import { LAB_QUOTES_PAGE_SIZE, quotesPageForLab } from "~/models/requests/quotes.server";
import { readTableQuery, type TableSpec } from "~/utils/table";
import { requireOrgRole } from "~/utils/permissions.server";
import type { Route } from "./+types/quotes";
import { useFormat } from "~/components/locale";

const QUOTES_TABLE: TableSpec<"sent"> = { sorts: ["sent"], defaultSort: "sent", firstDir: { sent: "desc" }, pageSize: LAB_QUOTES_PAGE_SIZE };

export async function loader({ request }: Route.LoaderArgs) {
  const { membership } = await requireOrgRole(request, "lab");
  // Bad page numbers answer 400 with a sentence; a page past the end shows the last one.
  const q = readTableQuery(request, QUOTES_TABLE);
  return quotesPageForLab(membership.organisation.id, q);
}

export default function LabQuotes({ loaderData }: Route.ComponentProps) {
  const fmt = useFormat();
  const { quotes, page, pageCount, pageSize, total, offset } = loaderData;
  return (
    <div>
      <PageHeader title="Quotes" subtitle="Quotes your lab has sent, and what became of them." />
      {quotes.length === 0 ? (
        <EmptyState
          title="No quotes sent"
          action={
            <Link to="/lab/inbox" className="btn-primary">
              Open the inbox
            </Link>
          }
        >
          Quotes you send on requests from your inbox are listed here with their state.
        </EmptyState>
      ) : (
        <>
          <TableCard columns={["Request", "Total", "Instrument", "Turnaround", "Valid until", "State"]} caption="Quotes">
            {quotes.map((q) => (
              <tr key={q.id}>
                <td className="font-medium">
                  <Link to={`/lab/requests/${q.requestId}`} className="text-beam-700 underline">
                    <Formula>{q.requestTitle}</Formula>
                  </Link>
                </td>
                <td>{fmt.money(q.totalMinor, q.currency)}</td>
                <td>
                  {q.instrumentName ?? "—"}
                  {q.source ? <span className="text-ink-500"> · {q.source}</span> : null}
                </td>
                <td>{q.turnaroundDays} days</td>
                <td>{fmt.date(q.validUntil)}</td>
                <td>
                  <QuoteStateBadge state={q.state} />
                </td>
              </tr>
            ))}
          </TableCard>
          <PageNav info={{ page, pageCount, pageSize, total, offset }} noun={["quote", "quotes"]} />
        </>
      )}
    </div>
  );
}

export function meta(_: Route.MetaArgs) {
  return [{ title: "Quotes — Diffractory" }, { name: "description", content: "The quotes your lab sent, with their state." }];
}
