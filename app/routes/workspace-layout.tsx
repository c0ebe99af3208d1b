// The layout of the client, lab and admin workspaces; a screen's 403 or 404 is answered inside it.
// Each screen below still checks access itself.
import { isRouteErrorResponse, Outlet } from "react-router";
import { GeneralErrorBoundary } from "~/components/error-boundary";
import { WorkspaceShell, type NavItem } from "~/components/workspace-shell";
import { summariseActor } from "~/models/accounts/me.server";
import { unreadTotals } from "~/models/messages/messages.server";
import { requireWorkspace } from "~/utils/permissions.server";
import type { Route } from "./+types/workspace-layout";

const EXTRA_NAV: Record<string, NavItem[]> = {
  client: [
    { to: "/client/members", label: "Members" },
    { to: "/client/profile", label: "Profile" },
  ],
  lab: [
    { to: "/lab/members", label: "Members" },
    { to: "/lab/profile", label: "Profile" },
  ],
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
  // Unread messages: request threads beside the requests (the lab's inbox), order threads beside the orders.
  if (kind !== "admin" && actor.active) {
    const unread = await unreadTotals(actor.user.id, actor.active.organisation.id);
    const where = kind === "client" ? { requests: "/client/requests", orders: "/client/orders" } : { requests: "/lab/inbox", orders: "/lab/work-queue" };
    for (const n of nav) n.unread = n.to === where.requests ? unread.requests : n.to === where.orders ? unread.orders : undefined;
  }
  return { me: summariseActor(actor), title, nav };
}

export default function WorkspaceLayout({ loaderData }: Route.ComponentProps) {
  const { me, title, nav } = loaderData;
  return (
    <WorkspaceShell me={me} title={title} nav={nav}>
      <Outlet />
    </WorkspaceShell>
  );
}

/**
 * A screen that refuses (403) or finds nothing (404) answers inside the workspace, so its navigation stays and the
 * person goes on from there. When the workspace itself refused, there is no shell to draw (no loader data), and any
 * other error is a fault rather than an answer: both get the plain error page.
 */
export function ErrorBoundary({ error, loaderData }: Route.ErrorBoundaryProps) {
  const answered = isRouteErrorResponse(error) && (error.status === 403 || error.status === 404);
  if (!loaderData || !answered) return <GeneralErrorBoundary />;
  const { me, title, nav } = loaderData;
  return (
    <WorkspaceShell me={me} title={title} nav={nav}>
      {/* The loader lists the overview first. */}
      <GeneralErrorBoundary workspace={{ overview: nav[0].to }} />
    </WorkspaceShell>
  );
}
