// Every person on the platform with their organisations (admins only), 50 a page, sortable by name, e-mail and joining date.
import { PageNav, SortableTable } from "~/components/data-table";
import { useFormat } from "~/components/locale";
import { Badge, EmptyState, PageHeader } from "~/components/ui";
import { membershipsOfPeople, peopleCount, peoplePage } from "~/models/accounts/people.server";
import { requireAdmin } from "~/utils/permissions.server";
import { pageOf, readTableQuery, type TableSpec } from "~/utils/table";
import type { Route } from "./+types/users";

const TABLE: TableSpec<"name" | "email" | "joined"> = { sorts: ["name", "email", "joined"], defaultSort: "email", firstDir: { joined: "desc" }, pageSize: 50 };

export async function loader({ request }: Route.LoaderArgs) {
  await requireAdmin(request);
  const q = readTableQuery(request, TABLE);
  const info = pageOf(await peopleCount(), q);
  const users = await peoplePage({ sort: q.sort, dir: q.dir, limit: info.pageSize, offset: info.offset });
  const memberships = await membershipsOfPeople(users.map((u) => u.id));
  const people = users.map((u) => ({
    ...u,
    orgs: memberships.filter((m) => m.userId === u.id).map((m) => `${m.organisation} (${m.kind}, ${m.role})`),
  }));
  return { people, info, sort: q.sort, dir: q.dir };
}

export default function Users({ loaderData }: Route.ComponentProps) {
  const fmt = useFormat();
  const { people, info, sort, dir } = loaderData;
  return (
    <div>
      <PageHeader title="Users" subtitle="Everyone with an account, with the organisations they belong to." />
      {people.length === 0 ? (
        <EmptyState title="No accounts yet">People appear here when they create an account at /create-account or accept an invitation.</EmptyState>
      ) : (
        <>
          <SortableTable
            columns={[
              { label: "Name", sort: "name" },
              { label: "E-mail", sort: "email" },
              { label: "Organisations" },
              { label: "Joined", sort: "joined", firstDir: "desc" },
            ]}
            sort={sort}
            dir={dir}
            caption="People"
          >
            {people.map((p) => (
              <tr key={p.id}>
                <td className="font-medium">
                  {p.name} {p.isAdmin ? <Badge tone="brand">admin</Badge> : null}
                </td>
                <td className="break-all">{p.email}</td>
                <td>{p.orgs.join("; ") || "—"}</td>
                <td className="whitespace-nowrap">{fmt.date(p.joined)}</td>
              </tr>
            ))}
          </SortableTable>
          <PageNav info={info} noun={["person", "people"]} />
        </>
      )}
    </div>
  );
}

export function meta(_: Route.MetaArgs) {
  return [{ title: "Users — Diffractory" }];
}
