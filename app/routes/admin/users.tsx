// Every person on the platform with their organisations (admins only), 50 a page, sortable by name, e-mail and joining
// date; below, the kinds client organisations state (academic, non-profit, industry), which an admin confirms.
import { data, Form } from "react-router";
import { z } from "zod";
import { PageNav, SortableTable } from "~/components/data-table";
import { useFormat } from "~/components/locale";
import { Badge, EmptyState, PageHeader } from "~/components/ui";
import { SubmitButton } from "~/components/pending";
import { CLIENT_KIND_LABELS, CLIENT_KINDS } from "~/domain/profile-forms";
import { membershipsOfPeople, peopleCount, peoplePage } from "~/models/accounts/people.server";
import { statedClientKinds, confirmClientKind } from "~/models/accounts/profiles.server";
import { readForm } from "~/utils/form.server";
import { orNotFound, requireAdmin } from "~/utils/permissions.server";
import { redirectWithToast } from "~/utils/toast.server";
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
  const clientKinds = await statedClientKinds();
  return { people, info, sort: q.sort, dir: q.dir, clientKinds };
}

const ConfirmKindSchema = z.object({
  organisationId: z.uuid("Choose a client organisation from the list."),
  clientKind: z.enum(CLIENT_KINDS, { error: "Choose a client organisation from the list." }),
});

export async function action({ request, context }: Route.ActionArgs) {
  const { user } = await requireAdmin(request);
  const form = await readForm(request);
  const parsed = ConfirmKindSchema.safeParse({ organisationId: form.get("organisationId") ?? undefined, clientKind: form.get("clientKind") ?? undefined });
  if (!parsed.success) return data({ error: parsed.error.issues[0].message }, { status: 400 });
  const refused = await orNotFound(
    confirmClientKind(parsed.data.organisationId, parsed.data.clientKind, { userId: user.id, clientAddress: context.clientAddress }),
  );
  if (refused) return data({ error: refused }, { status: 409 });
  return redirectWithToast("/admin/users", { kind: "success", message: `Confirmed as ${CLIENT_KIND_LABELS[parsed.data.clientKind].toLowerCase()}.` });
}

export default function Users({ loaderData, actionData }: Route.ComponentProps) {
  const fmt = useFormat();
  const { people, info, sort, dir, clientKinds } = loaderData;
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
      <section className="mt-10 space-y-3" aria-labelledby="client-kinds-heading">
        <h2 id="client-kinds-heading" className="text-lg font-semibold">
          Kinds of client
        </h2>
        <p className="text-sm text-ink-600">
          Labs may price by the kind a client states; confirm it once you have checked the organisation. A client that changes its kind waits for a new
          confirmation.
        </p>
        {actionData?.error ? (
          <p role="alert" className="text-sm font-medium text-danger-700">
            {actionData.error}
          </p>
        ) : null}
        {clientKinds.length === 0 ? (
          <p className="text-sm text-ink-600">No client has stated its kind yet.</p>
        ) : (
          <ul className="divide-y divide-ink-200 rounded-md border border-ink-200 bg-white">
            {clientKinds.map((c) => (
              <li key={c.id} className="flex flex-wrap items-center justify-between gap-3 px-4 py-2 text-sm" data-testid="client-kind-row">
                <span>
                  <span className="font-medium">{c.name}</span>: {CLIENT_KIND_LABELS[c.clientKind as keyof typeof CLIENT_KIND_LABELS] ?? c.clientKind}{" "}
                  {c.confirmedAt ? <Badge tone="ok">confirmed {fmt.date(c.confirmedAt)}</Badge> : <Badge tone="caution">awaiting confirmation</Badge>}
                </span>
                {c.confirmedAt ? null : (
                  <Form method="post">
                    <input type="hidden" name="organisationId" value={c.id} />
                    <input type="hidden" name="clientKind" value={c.clientKind ?? ""} />
                    <SubmitButton className="btn-secondary py-1" match={{ organisationId: c.id }} aria-label={`Confirm ${c.name}`}>
                      Confirm
                    </SubmitButton>
                  </Form>
                )}
              </li>
            ))}
          </ul>
        )}
      </section>
    </div>
  );
}

export function meta(_: Route.MetaArgs) {
  return [
    { title: "Users — Diffractory" },
    { name: "description", content: "Everyone on Diffractory with their organisations, and the organisation kinds that wait for confirmation." },
  ];
}
