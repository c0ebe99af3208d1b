// The public lab directory (its filters and listing arrive with the marketplace).
import { EmptyState, PageHeader } from "~/components/ui";
import type { Route } from "./+types/labs";

export function meta(_: Route.MetaArgs) {
  return [{ title: "Lab directory — Diffractory" }];
}

export default function Labs() {
  return (
    <div className="mx-auto max-w-6xl px-4 py-12 sm:px-6">
      <PageHeader title="Lab directory" subtitle="Vetted labs, their instruments, sources, stages and prices." />
      <EmptyState title="No labs are listed yet">
        Labs appear here once an admin has approved their application and calibration scan.
      </EmptyState>
    </div>
  );
}
