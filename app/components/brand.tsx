// The Diffractory wordmark used in every header.
import { Link } from "react-router";
import { DiffractionRingsIcon } from "./ui";

export function Brand({ to = "/" }: { to?: string }) {
  return (
    <Link to={to} className="flex items-center gap-2 font-bold text-ink-900" aria-label="Diffractory home">
      <DiffractionRingsIcon className="h-7 w-7 text-beam-600" />
      <span className="text-lg tracking-tight">Diffractory</span>
    </Link>
  );
}
