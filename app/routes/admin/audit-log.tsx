// The audit log: who did what, when, from where (admins only), newest first.
import { and, desc, eq, sql } from "drizzle-orm";
import { useLoaderData } from "react-router";
import { EmptyState, PageHeader, TableCard } from "~/components/ui";
import { db, schema } from "~/db/client.server";
import { requireAdmin } from "~/utils/permissions.server";
import type { Route } from "./+types/audit-log";
import { useFormat } from "~/components/locale";

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
    .orderBy(desc(schema.auditLog.id))
    .limit(200);
  return { entries: entries.map(({ details, currency, ...e }) => ({ ...e, details: describeDetails(details, currency) })) };
}

export default function AuditLog() {
  const fmt = useFormat();
  const { entries } = useLoaderData<typeof loader>();
  return (
    <div>
      <PageHeader title="Audit log" subtitle="The newest 200 entries." />
      {entries.length === 0 ? (
        <EmptyState title="Nothing recorded yet" />
      ) : (
        <TableCard columns={["When", "Who", "What", "Organisation", "Details", "From"]} caption="Audit log entries, newest first">
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
        </TableCard>
      )}
    </div>
  );
}

export function meta(_: Route.MetaArgs) {
  return [{ title: "Audit log — Diffractory" }];
}
