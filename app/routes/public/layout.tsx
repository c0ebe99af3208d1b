// The public pages' frame: header with the directory, how it works, safety notes and the account area.
import { NavLink, Outlet } from "react-router";
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
        <div className="mx-auto flex max-w-6xl flex-wrap items-center justify-between gap-4 px-4 py-3 sm:px-6">
          <Brand />
          <nav aria-label="Main" className="flex flex-wrap gap-1 text-sm">
            {NAV.map((n) => (
              <NavLink
                key={n.to}
                to={n.to}
                className={({ isActive }) => `rounded-md px-3 py-2 font-medium ${isActive ? "bg-beam-50 text-beam-700" : "text-ink-700 hover:bg-ink-100"}`}
              >
                {n.label}
              </NavLink>
            ))}
          </nav>
          <AccountMenu />
        </div>
      </header>
      <main id="main" className="flex-1">
        <Outlet />
      </main>
      <footer className="border-t border-ink-200 bg-white py-6 text-center text-xs text-ink-500">
        Diffractory — a marketplace for powder-diffraction measurements. All demo organisations and people are invented.
      </footer>
    </div>
  );
}
