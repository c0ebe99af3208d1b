// The audit log: who did what, when, from where (admins only), newest first, 50 a page, sortable by time, person and action.
import { and, asc, count, desc, eq, sql } from "drizzle-orm";
import { useLoaderData } from "react-router";
import { PageNav, SortableTable } from "~/components/data-table";
import { EmptyState, PageHeader } from "~/components/ui";
import { db, schema } from "~/db/client.server";
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
      const label = k.replace(/Minor$/, "").replace(/([A-Z])/g, " $1").toLowerCase();
      if (k.endsWith("Minor") && typeof v === "number") return `${label} ${(v / 100).toFixed(2)}${currency ? ` ${currency}` : ""}`;
      const text = typeof v === "string" ? v : JSON.stringify(v);
      return `${label}: ${text.length > 200 ? `${text.slice(0, 200)}…` : text}`;
    })
    .join("; ");
}

export async function loader({ request }: Route.LoaderArgs) {
  await requireAdmin(request);
  const q = readTableQuery(request, TABLE);
  const [{ total }] = await db.select({ total: count() }).from(schema.auditLog);
  const info = pageOf(total, q);
  const by = q.dir === "asc" ? asc : desc;
  // The id breaks ties in the order entries were written.
  const order = { at: [by(schema.auditLog.at), by(schema.auditLog.id)], who: [by(sql`coalesce(${schema.users.email}, '')`), desc(schema.auditLog.id)], action: [by(schema.auditLog.action), desc(schema.auditLog.id)] }[q.sort];
  const entries = await db
    .select({
      id: schema.auditLog.id,
      at: schema.auditLog.at,
      action: schema.auditLog.action,
      subjectType: schema.auditLog.subjectType,
      subjectId: schema.auditLog.subjectId,
      clientAddress: schema.auditLog.clientAddress,
      actor: schema.users.email,
      organisation: schema.organisations.name,
      details: schema.auditLog.details,
      currency: schema.orders.currency,
    })
    .from(schema.auditLog)
    .leftJoin(schema.users, eq(schema.users.id, schema.auditLog.actorUserId))
    .leftJoin(schema.organisations, eq(schema.organisations.id, schema.auditLog.organisationId))
    .leftJoin(schema.orders, and(eq(schema.auditLog.subjectType, "order"), eq(sql`${schema.orders.id}::text`, schema.auditLog.subjectId)))
    .orderBy(...order)
    .limit(info.pageSize)
    .offset(info.offset);
  return { info, sort: q.sort, dir: q.dir, entries: entries.map(({ details, currency, ...e }) => ({ ...e, details: describeDetails(details, currency) })) };
}

export default function AuditLog() {
  const fmt = useFormat();
  const { entries, info, sort, dir } = useLoaderData<typeof loader>();
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
