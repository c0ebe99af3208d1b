// The public pages' frame: header with the directory, how it works, safety notes and the account area; the current
// page is marked by the copper anode rule under its name, as in the workspaces' rail (docs/design-system.md#the-frame).
import { Link, NavLink, Outlet } from "react-router";
import { AccountMenu } from "~/components/account-menu";
import { Brand } from "~/components/brand";

const NAV = [
  { to: "/labs", label: "Lab directory" },
  { to: "/how-it-works", label: "How it works" },
  { to: "/safety", label: "Safety notes" },
];

export default function PublicLayout() {
  return (
    <div className="flex min-h-screen flex-col">
      <header className="border-b border-ink-200 bg-white">
        <div className="mx-auto flex max-w-6xl flex-wrap items-center gap-x-3 gap-y-1 md:gap-x-6 px-4 pt-2 sm:px-6 md:h-16 md:flex-nowrap md:py-0">
          <Brand />
          <div className="ml-auto md:order-3">
            <AccountMenu />
          </div>
          <nav aria-label="Main" className="-mx-2 flex basis-full gap-1 overflow-x-auto text-sm md:mx-0 md:basis-auto md:self-stretch">
            {NAV.map((n) => (
              <NavLink
                key={n.to}
                to={n.to}
                className={({ isActive }) =>
                  `flex items-center border-b-[3px] px-2 py-2.5 font-medium whitespace-nowrap md:px-3 ${
                    isActive ? "border-anode-500 text-ink-900" : "border-transparent text-ink-600 hover:border-ink-300 hover:text-ink-900"
                  }`
                }
              >
                {n.label}
              </NavLink>
            ))}
          </nav>
        </div>
      </header>
      <main id="main" className="flex-1">
        <Outlet />
      </main>
      <footer className="border-t border-ink-200 bg-white py-6 text-xs text-ink-500">
        <div className="mx-auto flex max-w-6xl flex-wrap items-center justify-between gap-3 px-4 sm:px-6">
          <p>Diffractory — a marketplace for powder-diffraction measurements. All demo organisations and people are invented.</p>
          <Link to="/design-system" className="hover:text-beam-700 hover:underline">
            Design system
          </Link>
        </div>
      </footer>
    </div>
  );
}
