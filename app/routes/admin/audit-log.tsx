// The audit log: who did what, when, from where (admins only), newest first, 50 a page, sortable by time, person and action.
import { PageNav, SortableTable } from "~/components/data-table";
import { EmptyState, PageHeader } from "~/components/ui";
import { auditLogCount, auditLogEntries } from "~/models/platform/audit-log.server";
import { requireAdmin } from "~/utils/permissions.server";
import type { Route } from "./+types/audit-log";
import { useFormat } from "~/components/locale";
import { pageOf, readTableQuery, type TableSpec } from "~/utils/table";

const TABLE: TableSpec<"at" | "who" | "action"> = { sorts: ["at", "who", "action"], defaultSort: "at", firstDir: { at: "desc" }, pageSize: 50 };

/** An entry's details in one line: amounts in minor units shown in the order's currency, empty values left out. */
function describeDetails(details: Record<string, unknown>, currency: string | null) {
  return Object.entries(details)
    .filter(([, v]) => v !== null && v !== undefined && v !== false && v !== "")
    .map(([k, v]) => {
      const label = k
        .replace(/Minor$/, "")
        .replace(/([A-Z])/g, " $1")
        .toLowerCase();
      if (k.endsWith("Minor") && typeof v === "number") return `${label} ${(v / 100).toFixed(2)}${currency ? ` ${currency}` : ""}`;
      const text = typeof v === "string" ? v : JSON.stringify(v);
      return `${label}: ${text.length > 200 ? `${text.slice(0, 200)}…` : text}`;
    })
    .join("; ");
}

export async function loader({ request }: Route.LoaderArgs) {
  await requireAdmin(request);
  const q = readTableQuery(request, TABLE);
  const info = pageOf(await auditLogCount(), q);
  const entries = await auditLogEntries({ sort: q.sort, dir: q.dir, limit: info.pageSize, offset: info.offset });
  return { info, sort: q.sort, dir: q.dir, entries: entries.map(({ details, currency, ...e }) => ({ ...e, details: describeDetails(details, currency) })) };
}

export default function AuditLog({ loaderData }: Route.ComponentProps) {
  const fmt = useFormat();
  const { entries, info, sort, dir } = loaderData;
  return (
    <div>
      <PageHeader title="Audit log" subtitle="Sign-ins, vetting decisions, payments, refunds and every other change, with who made it and from where." />
      {entries.length === 0 ? (
        <EmptyState title="Nothing recorded yet">Entries appear as people sign in and work; nothing needs doing here.</EmptyState>
      ) : (
        <>
          <SortableTable
            columns={[
              { label: "When", sort: "at", firstDir: "desc" },
              { label: "Who", sort: "who" },
              { label: "What", sort: "action" },
              { label: "Organisation" },
              { label: "Details" },
              { label: "From" },
            ]}
            sort={sort}
            dir={dir}
            caption="Audit log entries"
          >
            {entries.map((e) => (
              <tr key={e.id}>
                <td className="whitespace-nowrap">{fmt.dateTime(e.at)}</td>
                <td>{e.actor ?? "—"}</td>
                <td className="font-mono text-xs">{e.action}</td>
                <td>{e.organisation ?? "—"}</td>
                <td className="max-w-96 text-xs break-words text-ink-700">{e.details || "—"}</td>
                <td className="font-mono text-xs">{e.clientAddress ?? "—"}</td>
              </tr>
            ))}
          </SortableTable>
          <PageNav info={info} noun={["entry", "entries"]} />
        </>
      )}
    </div>
  );
}

export function meta(_: Route.MetaArgs) {
  return [{ title: "Audit log — Diffractory" }];
}
