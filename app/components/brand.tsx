// The Diffractory wordmark used in every header: the rings in beam on light grounds, in copper on the dark rail.
import { Link } from "react-router";
import { DiffractionRingsIcon } from "./ui";

export function Brand({ to = "/", tone = "light" }: { to?: string; tone?: "light" | "dark" }) {
  const dark = tone === "dark";
  return (
    <Link
      to={to}
      className={`flex shrink-0 items-center gap-2 font-display font-semibold ${dark ? "text-white focus-visible:outline-beam-200" : "text-ink-900"}`}
      aria-label="Diffractory home"
    >
      <DiffractionRingsIcon className={`h-7 w-7 ${dark ? "text-anode-200" : "text-beam-600"}`} />
      <span className="text-lg tracking-tight sm:text-xl">Diffractory</span>
    </Link>
  );
}
