// The frame of the client, lab and admin workspaces: navigation, organisation switcher, account area.
import { Fragment, useEffect, useState, type ReactNode } from "react";
import { Form, Link, NavLink, useLocation } from "react-router";
import type { MeSummary } from "~/models/accounts/me.server";
import { Brand } from "./brand";
import { NotificationBell } from "./notification-bell";
import { SubmitButton } from "./pending";
import { SignOutButton } from "./sign-out-button";

export interface NavItem {
  to: string;
  label: string;
  end?: boolean;
  /** Unread messages behind this section, shown beside its name. */
  unread?: number;
}

export function WorkspaceShell({ me, title, nav, children }: { me: MeSummary; title: string; nav: NavItem[]; children: ReactNode }) {
  const active = me.organisations.find((o) => o.id === me.activeOrganisationId);
  // On a phone the section links fold behind a Menu button; from md up they are always shown down the side.
  const [menuOpen, setMenuOpen] = useState(false);
  const { pathname } = useLocation();
  // biome-ignore lint/correctness/useExhaustiveDependencies: navigating to another page closes the phone menu
  useEffect(() => setMenuOpen(false), [pathname]);
  const navId = `${title.toLowerCase().replace(/\W+/g, "-")}-nav`;
  return (
    <div className="flex min-h-screen flex-col md:flex-row">
      <aside className="border-b border-ink-200 bg-white md:w-64 md:shrink-0 md:border-r md:border-b-0">
        <div className="flex items-center justify-between gap-3 px-4 py-3 md:block md:py-4">
          <Brand />
          <p className="ml-auto text-xs font-semibold tracking-wide text-ink-500 uppercase md:mt-4 md:ml-0" data-testid="workspace-title">
            {title}
          </p>
          <button
            type="button"
            className="btn-secondary px-3 py-1.5 md:hidden"
            aria-expanded={menuOpen}
            aria-controls={navId}
            onClick={() => setMenuOpen((o) => !o)}
          >
            <svg viewBox="0 0 16 16" className="h-4 w-4" aria-hidden="true" focusable="false">
              {menuOpen ? (
                <path d="m3.5 3.5 9 9m0-9-9 9" stroke="currentColor" strokeWidth="1.8" strokeLinecap="round" />
              ) : (
                <path d="M2.5 4h11M2.5 8h11M2.5 12h11" stroke="currentColor" strokeWidth="1.8" strokeLinecap="round" />
              )}
            </svg>
            Menu
          </button>
        </div>
        <nav id={navId} aria-label={`${title} navigation`} className={`${menuOpen ? "flex" : "hidden"} flex-col gap-1 px-2 pb-3 md:flex`}>
          {nav.map((n) => (
            <Fragment key={n.to}>
              <NavLink
                to={n.to}
                end={n.end}
                aria-describedby={n.unread ? `${navId}-${n.to.replace(/\W+/g, "-")}-unread` : undefined}
                className={({ isActive }) =>
                  `rounded-md px-3 py-2 text-sm font-medium ${isActive ? "bg-beam-50 text-beam-700" : "text-ink-700 hover:bg-ink-100"}`
                }
              >
                {n.label}
                {/* The count describes the link rather than renaming it, so "Orders" stays "Orders" to a screen reader. */}
                {n.unread ? (
                  <span aria-hidden="true" className="ml-2 rounded-full bg-beam-600 px-1.5 py-0.5 text-xs font-semibold text-white">
                    {n.unread}
                  </span>
                ) : null}
              </NavLink>
              {n.unread ? (
                <span id={`${navId}-${n.to.replace(/\W+/g, "-")}-unread`} className="sr-only">
                  {n.unread} unread message{n.unread === 1 ? "" : "s"}
                </span>
              ) : null}
            </Fragment>
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
              <SubmitButton className="btn-secondary py-1" action="/switch-organisation" pendingText="Switching…">
                Switch
              </SubmitButton>
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
