// The admins' vetting queue: every lab by vetting state, applications in review first.
import { Link, useLoaderData, useSearchParams } from "react-router";
import { VerdictBadge } from "~/components/calibration-summary";
import { EmptyState, PageHeader, TableCard } from "~/components/ui";
import { VettingBadge } from "~/components/vetting-badge";
import { listLabsForVetting } from "~/models/labs.server";
import { VETTING_STATE_BADGES, VETTING_STATES, type VettingState } from "~/models/vetting";
import { requireAdmin } from "~/utils/permissions.server";
import type { Route } from "./+types/vetting-queue";

export async function loader({ request }: Route.LoaderArgs) {
  await requireAdmin(request);
  const asked = new URL(request.url).searchParams.get("state");
  const state = VETTING_STATES.find((s) => s === asked) ?? "in_review";
  const all = await listLabsForVetting();
  const counts = Object.fromEntries(VETTING_STATES.map((s) => [s, all.filter((l) => l.state === s).length])) as Record<VettingState, number>;
  return { state, counts, labs: all.filter((l) => l.state === state) };
}

export default function VettingQueue() {
  const { state, counts, labs } = useLoaderData<typeof loader>();
  const [params] = useSearchParams();
  return (
    <div>
      <PageHeader title="Vetting queue" subtitle="Lab applications with their accreditation evidence and calibration checks." />
      <nav aria-label="Vetting states" className="mb-4 flex flex-wrap gap-2">
        {VETTING_STATES.map((s) => {
          const next = new URLSearchParams(params);
          next.set("state", s);
          return (
            <Link
              key={s}
              to={`?${next}`}
              aria-current={s === state ? "page" : undefined}
              className={s === state ? "btn-primary" : "btn-secondary"}
            >
              {VETTING_STATE_BADGES[s].label} ({counts[s]})
            </Link>
          );
        })}
      </nav>
      {labs.length === 0 ? (
        <EmptyState title={`No labs ${VETTING_STATE_BADGES[state].label.toLowerCase()}`}>
          Labs appear here when their vetting state is {VETTING_STATE_BADGES[state].label.toLowerCase()}.
        </EmptyState>
      ) : (
        <TableCard caption={`Labs ${VETTING_STATE_BADGES[state].label}`} columns={["Lab", "Location", "State", "Calibration", "Last change", ""]}>
          {labs.map((lab) => (
            <tr key={lab.id}>
              <td className="font-medium">{lab.name}</td>
              <td>{[lab.city, lab.country].filter(Boolean).join(", ") || "—"}</td>
              <td>
                <VettingBadge state={lab.state} />
              </td>
              <td>
                {lab.verdict ? (
                  <span className="flex items-center gap-2">
                    <VerdictBadge verdict={lab.verdict} />
                    {lab.deviationA !== null ? <span className="font-mono text-xs">Δa {lab.deviationA.toFixed(6)} Å</span> : null}
                  </span>
                ) : (
                  "no scan yet"
                )}
              </td>
              <td>{lab.updatedAt.slice(0, 10)}</td>
              <td>
                <Link to={`/admin/labs/${lab.id}`} className="font-semibold text-beam-700 underline">
                  Review {lab.name}
                </Link>
              </td>
            </tr>
          ))}
        </TableCard>
      )}
    </div>
  );
}

export function meta(_: Route.MetaArgs) {
  return [{ title: "Vetting queue — Diffractory" }];
}
