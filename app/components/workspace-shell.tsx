// The frame of the client, lab and admin workspaces (docs/design-system.md#the-frame): a deep beam rail with the
// sections, the copper anode marking the current one; a thin top bar with the organisation, the bell and the account.
// On a phone it folds into one bar (mark, workspace, bell, Menu) whose menu opens the sections and the account items.
// Each piece is in the page once: a grid places it, so the same organisation switcher, name and Sign out button
// serve both widths (on a phone the rail and the top bar step aside with `display: contents`).
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
  // On a phone the sections and the account fold behind a Menu button; from md up they are always shown.
  const [menuOpen, setMenuOpen] = useState(false);
  const { pathname } = useLocation();
  // biome-ignore lint/correctness/useExhaustiveDependencies: navigating to another page closes the phone menu
  useEffect(() => setMenuOpen(false), [pathname]);
  const navId = `${title.toLowerCase().replace(/\W+/g, "-")}-nav`;
  const accountId = `${navId}-account`;
  // "Client workspace" reads "Client" in the phone's bar; the whole title stays in the text for everyone else.
  const short = title.replace(/ workspace$/i, "");
  const rest = title.slice(short.length);
  const folded = menuOpen ? "" : "max-md:hidden";
  return (
    <div className="grid min-h-screen grid-cols-[minmax(0,1fr)_auto_auto] grid-rows-[auto_auto_auto_1fr] md:grid-cols-[15rem_minmax(0,1fr)] md:grid-rows-[auto_1fr]">
      {/* The phone's bar: one dark strip behind the mark, the bell and the Menu button. */}
      <div aria-hidden="true" className="col-span-full row-start-1 h-14 bg-beam-900 md:hidden" />
      <aside className="max-md:contents md:sticky md:top-0 md:col-start-1 md:row-span-2 md:row-start-1 md:flex md:h-screen md:flex-col md:overflow-y-auto md:bg-beam-900 md:text-beam-50">
        <div className="col-start-1 row-start-1 flex h-14 min-w-0 items-center gap-3 px-4 md:h-auto md:flex-col md:items-start md:gap-5 md:px-5 md:pt-5 md:pb-4">
          <Brand tone="dark" />
          <p
            className="truncate border-l border-beam-600 pl-3 text-sm font-medium text-beam-100 md:border-l-0 md:border-t md:border-beam-700 md:pt-3 md:pl-0 md:text-xs md:text-beam-200 md:self-stretch"
            data-testid="workspace-title"
          >
            {short}
            {rest ? <span className="max-md:sr-only">{rest}</span> : null}
          </p>
        </div>
        <button
          type="button"
          className="col-start-3 row-start-1 mr-2 flex h-10 w-10 items-center justify-center self-center rounded-md text-beam-50 hover:bg-beam-800 focus-visible:outline-beam-200 md:hidden"
          aria-label="Menu"
          aria-expanded={menuOpen}
          aria-controls={`${navId} ${accountId}`}
          onClick={() => setMenuOpen((o) => !o)}
        >
          <svg viewBox="0 0 16 16" className="h-5 w-5" aria-hidden="true" focusable="false">
            {menuOpen ? (
              <path d="m3.5 3.5 9 9m0-9-9 9" stroke="currentColor" strokeWidth="1.6" strokeLinecap="round" />
            ) : (
              <path d="M2.5 4h11M2.5 8h11M2.5 12h11" stroke="currentColor" strokeWidth="1.6" strokeLinecap="round" />
            )}
          </svg>
        </button>
        <nav
          id={navId}
          aria-label={`${title} navigation`}
          className={`${folded} col-span-full row-start-2 flex flex-col gap-px bg-beam-900 px-2 pb-3 md:flex-1 md:pt-1`}
        >
          {nav.map((n) => (
            <Fragment key={n.to}>
              <NavLink
                to={n.to}
                end={n.end}
                aria-describedby={n.unread ? `${navId}-${n.to.replace(/\W+/g, "-")}-unread` : undefined}
                className={({ isActive }) =>
                  `flex items-center justify-between gap-2 rounded-r-md border-l-[3px] focus-visible:outline-beam-200 py-2 pr-3 pl-3 text-sm ${
                    isActive
                      ? "border-anode-500 bg-beam-800 font-semibold text-white"
                      : "border-transparent text-beam-100 hover:border-beam-600 hover:bg-beam-800/60 hover:text-white"
                  }`
                }
              >
                {n.label}
                {/* The count describes the link rather than renaming it, so "Orders" stays "Orders" to a screen reader. */}
                {n.unread ? (
                  <span aria-hidden="true" className="min-w-5 rounded-badge bg-anode-600 px-1.5 text-center text-xs font-semibold text-white tabular-nums">
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
      <header className="max-md:contents md:col-start-2 md:row-start-1 md:flex md:h-12 md:items-center md:gap-4 md:border-b md:border-ink-200 md:bg-white md:px-6">
        <div className="col-start-2 row-start-1 flex items-center self-center md:order-2 md:ml-auto max-md:[&>div>button]:text-beam-50 max-md:[&>div>button]:hover:bg-beam-800 max-md:[&>div>button]:focus-visible:outline-beam-200">
          <NotificationBell />
        </div>
        <div
          id={accountId}
          className={`${folded} col-span-full row-start-3 flex flex-wrap items-center gap-x-4 gap-y-2 border-b border-ink-200 bg-white px-4 py-3 md:contents`}
        >
          <div className="flex min-w-0 items-center gap-2 max-md:basis-full md:order-1">
            {me.organisations.length > 1 ? (
              <Form method="post" action="/switch-organisation" className="flex min-w-0 items-center gap-2">
                <label htmlFor="switch-org" className="shrink-0 text-xs text-ink-600">
                  Working in
                </label>
                <select id="switch-org" name="organisationId" defaultValue={me.activeOrganisationId ?? ""} className="input w-auto min-w-0 py-1 text-sm">
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
              <span className="truncate text-sm font-medium text-ink-800">{active.name}</span>
            ) : null}
          </div>
          <div className="flex items-center gap-3 md:order-3 md:border-l md:border-ink-200 md:pl-4">
            <span className="text-sm font-medium text-ink-800" data-testid="signed-in-as">
              {me.user.name}
            </span>
            <Link to="/account/security" className="text-sm text-ink-600 hover:text-beam-700 hover:underline">
              Security
            </Link>
            <SignOutButton />
          </div>
        </div>
      </header>
      <main id="main" className="col-span-full row-start-4 mx-auto w-full max-w-6xl min-w-0 px-4 py-6 sm:px-6 md:col-start-2 md:row-start-2 md:py-8">
        {children}
      </main>
    </div>
  );
}
