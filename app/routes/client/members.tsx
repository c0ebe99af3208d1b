// The client organisation's members and their roles.
import { asc, eq } from "drizzle-orm";
import { useLoaderData } from "react-router";
import { Badge, PageHeader, TableCard } from "~/components/ui";
import { db, schema } from "~/db/client.server";
import { requireOrgRole } from "~/utils/permissions.server";
import type { Route } from "./+types/members";

export async function loader({ request }: Route.LoaderArgs) {
  const { membership } = await requireOrgRole(request, "client");
  const members = await db
    .select({ name: schema.users.name, email: schema.users.email, role: schema.memberships.role, since: schema.memberships.createdAt })
    .from(schema.memberships)
    .innerJoin(schema.users, eq(schema.users.id, schema.memberships.userId))
    .where(eq(schema.memberships.organisationId, membership.organisation.id))
    .orderBy(asc(schema.memberships.createdAt));
  return { organisation: membership.organisation.name, members };
}

export default function Members() {
  const { organisation, members } = useLoaderData<typeof loader>();
  return (
    <div>
      <PageHeader title="Members" subtitle={`People of ${organisation}`} />
      <TableCard columns={["Name", "E-mail", "Role", "Member since"]}>
        {members.map((m) => (
          <tr key={m.email}>
            <td className="font-medium">{m.name}</td>
            <td>{m.email}</td>
            <td>
              <Badge tone={m.role === "owner" ? "brand" : "neutral"}>{m.role}</Badge>
            </td>
            <td>{new Date(m.since).toLocaleDateString()}</td>
          </tr>
        ))}
      </TableCard>
    </div>
  );
}

export function meta(_: Route.MetaArgs) {
  return [{ title: "Members — Diffractory" }];
}
