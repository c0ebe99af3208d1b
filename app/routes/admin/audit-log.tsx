// The audit log: who did what, when, from where (admins only), newest first.
import { desc, eq } from "drizzle-orm";
import { useLoaderData } from "react-router";
import { EmptyState, PageHeader, TableCard } from "~/components/ui";
import { db, schema } from "~/db/client.server";
import { requireAdmin } from "~/utils/permissions.server";
import type { Route } from "./+types/audit-log";
import { useFormat } from "~/components/locale";

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
    })
    .from(schema.auditLog)
    .leftJoin(schema.users, eq(schema.users.id, schema.auditLog.actorUserId))
    .leftJoin(schema.organisations, eq(schema.organisations.id, schema.auditLog.organisationId))
    .orderBy(desc(schema.auditLog.id))
    .limit(200);
  return { entries };
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
        <TableCard columns={["When", "Who", "What", "Organisation", "From"]}>
          {entries.map((e) => (
            <tr key={e.id}>
              <td className="whitespace-nowrap">{fmt.dateTime(e.at)}</td>
              <td>{e.actor ?? "—"}</td>
              <td className="font-mono text-xs">{e.action}</td>
              <td>{e.organisation ?? "—"}</td>
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
