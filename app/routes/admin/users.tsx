// Every person on the platform with their organisations (admins only).
import { asc, eq } from "drizzle-orm";
import { useLoaderData } from "react-router";
import { Badge, PageHeader, TableCard } from "~/components/ui";
import { db, schema } from "~/db/client.server";
import { requireAdmin } from "~/utils/permissions.server";
import type { Route } from "./+types/users";

export async function loader({ request }: Route.LoaderArgs) {
  await requireAdmin(request);
  const rows = await db
    .select({
      id: schema.users.id,
      name: schema.users.name,
      email: schema.users.email,
      isAdmin: schema.users.isAdmin,
      organisation: schema.organisations.name,
      kind: schema.organisations.kind,
      role: schema.memberships.role,
    })
    .from(schema.users)
    .leftJoin(schema.memberships, eq(schema.memberships.userId, schema.users.id))
    .leftJoin(schema.organisations, eq(schema.organisations.id, schema.memberships.organisationId))
    .orderBy(asc(schema.users.email))
    .limit(500);
  const people = new Map<string, { name: string; email: string; isAdmin: boolean; orgs: string[] }>();
  for (const r of rows) {
    const p = people.get(r.id) ?? { name: r.name, email: r.email, isAdmin: r.isAdmin, orgs: [] };
    if (r.organisation) p.orgs.push(`${r.organisation} (${r.kind}, ${r.role})`);
    people.set(r.id, p);
  }
  return { people: [...people.values()] };
}

export default function Users() {
  const { people } = useLoaderData<typeof loader>();
  return (
    <div>
      <PageHeader title="Users" subtitle={`${people.length} people`} />
      <TableCard columns={["Name", "E-mail", "Organisations"]}>
        {people.map((p) => (
          <tr key={p.email}>
            <td className="font-medium">
              {p.name} {p.isAdmin ? <Badge tone="brand">admin</Badge> : null}
            </td>
            <td>{p.email}</td>
            <td>{p.orgs.join("; ") || "—"}</td>
          </tr>
        ))}
      </TableCard>
    </div>
  );
}

export function meta(_: Route.MetaArgs) {
  return [{ title: "Users — Diffractory" }];
}
