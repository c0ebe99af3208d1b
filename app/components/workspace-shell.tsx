// The frame of the client, lab and admin workspaces: navigation, organisation switcher, account area.
import type { ReactNode } from "react";
import { Form, Link, NavLink } from "react-router";
import type { MeSummary } from "~/models/me.server";
import { Brand } from "./brand";
import { NotificationBell } from "./notification-bell";
import { SignOutButton } from "./sign-out-button";

export interface NavItem {
  to: string;
  label: string;
  end?: boolean;
}

export function WorkspaceShell({ me, title, nav, children }: { me: MeSummary; title: string; nav: NavItem[]; children: ReactNode }) {
  const active = me.organisations.find((o) => o.id === me.activeOrganisationId);
  return (
    <div className="flex min-h-screen flex-col md:flex-row">
      <aside className="border-b border-ink-200 bg-white md:w-64 md:shrink-0 md:border-r md:border-b-0">
        <div className="flex items-center justify-between px-4 py-4 md:block">
          <Brand />
          <p className="mt-0 text-xs font-semibold tracking-wide text-ink-500 uppercase md:mt-4" data-testid="workspace-title">
            {title}
          </p>
        </div>
        <nav aria-label={`${title} navigation`} className="flex gap-1 overflow-x-auto px-2 pb-3 md:flex-col md:overflow-visible">
          {nav.map((n) => (
            <NavLink
              key={n.to}
              to={n.to}
              end={n.end}
              className={({ isActive }) =>
                `rounded-md px-3 py-2 text-sm font-medium whitespace-nowrap ${isActive ? "bg-beam-50 text-beam-700" : "text-ink-700 hover:bg-ink-100"}`
              }
            >
              {n.label}
            </NavLink>
          ))}
        </nav>
      </aside>
      <div className="flex min-w-0 flex-1 flex-col">
        <header className="flex flex-wrap items-center justify-end gap-3 border-b border-ink-200 bg-white px-4 py-3 sm:px-6">
          {me.organisations.length > 1 ? (
            <Form method="post" action="/switch-organisation" className="flex items-center gap-2">
              <label htmlFor="switch-org" className="text-xs text-ink-600">
                Working in
              </label>
              <select id="switch-org" name="organisationId" defaultValue={me.activeOrganisationId ?? ""} className="input w-auto py-1">
                {me.organisations.map((o) => (
                  <option key={o.id} value={o.id}>
                    {o.name} ({o.kind === "lab" ? "lab" : "client"}, {o.role})
                  </option>
                ))}
              </select>
              <button type="submit" className="btn-secondary py-1">
                Switch
              </button>
            </Form>
          ) : active ? (
            <span className="text-sm text-ink-600">{active.name}</span>
          ) : null}
          <NotificationBell />
          <span className="text-sm font-medium text-ink-800" data-testid="signed-in-as">
            {me.user.name}
          </span>
          <Link to="/account/security" className="text-sm text-ink-600 hover:text-beam-700 hover:underline">
            Security
          </Link>
          <SignOutButton />
        </header>
        <main id="main" className="mx-auto w-full max-w-6xl flex-1 px-4 py-8 sm:px-6">
          {children}
        </main>
      </div>
    </div>
  );
}
