// The layout of the client, lab and admin workspaces; each screen below still checks access itself.
import { Outlet, useLoaderData } from "react-router";
import { WorkspaceShell, type NavItem } from "~/components/workspace-shell";
import { summariseActor } from "~/models/accounts/me.server";
import { requireWorkspace } from "~/models/workspace-access.server";
import type { Route } from "./+types/workspace-layout";

const EXTRA_NAV: Record<string, NavItem[]> = {
  client: [{ to: "/client/members", label: "Members" }],
  lab: [{ to: "/lab/members", label: "Members" }],
  admin: [
    { to: "/admin/users", label: "Users" },
    { to: "/admin/audit-log", label: "Audit log" },
    { to: "/admin/outbox", label: "Outbox" },
  ],
};

export async function loader({ request }: Route.LoaderArgs) {
  const { kind, actor, title, sections } = await requireWorkspace(request);
  const nav: NavItem[] = [
    { to: `/${kind}`, label: "Overview", end: true },
    ...sections.map((s) => ({ to: `/${kind}/${s.slug}`, label: s.label })),
    ...EXTRA_NAV[kind],
  ];
  return { me: summariseActor(actor), title, nav };
}

export default function WorkspaceLayout() {
  const { me, title, nav } = useLoaderData<typeof loader>();
  return (
    <WorkspaceShell me={me} title={title} nav={nav}>
      <Outlet />
    </WorkspaceShell>
  );
}
