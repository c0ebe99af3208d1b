// The admins' vetting queue: every lab by vetting state, applications in review first.
import { Link, useSearchParams } from "react-router";
import { VerdictBadge } from "~/components/calibration-summary";
import { PageNav, SortableTable } from "~/components/data-table";
import { useFormat } from "~/components/locale";
import { EmptyState, PageHeader } from "~/components/ui";
import { VettingBadge } from "~/components/vetting-badge";
import { listLabsForVetting } from "~/models/labs/vetting.server";
import { VETTING_STATE_BADGES, VETTING_STATES, type VettingState } from "~/domain/vetting";
import { requireAdmin } from "~/utils/permissions.server";
import { readTableQuery, sortAndPage, type TableSpec } from "~/utils/table";
import type { Route } from "./+types/vetting-queue";

const TABLE: TableSpec<"name" | "location" | "updated"> = {
  sorts: ["name", "location", "updated"],
  defaultSort: "updated",
  firstDir: { updated: "asc" },
  pageSize: 50,
};

export async function loader({ request }: Route.LoaderArgs) {
  await requireAdmin(request);
  const q = readTableQuery(request, TABLE);
  const asked = new URL(request.url).searchParams.get("state");
  const state = VETTING_STATES.find((s) => s === asked) ?? "in_review";
  const all = await listLabsForVetting();
  const counts = Object.fromEntries(VETTING_STATES.map((s) => [s, all.filter((l) => l.state === s).length])) as Record<VettingState, number>;
  // The oldest change first by default: who has waited longest is reviewed first.
  const { rows, sort, dir, ...info } = sortAndPage(
    all.filter((l) => l.state === state),
    q,
    { name: (l) => l.name, location: (l) => [l.country, l.city].filter(Boolean).join(" ") || null, updated: (l) => l.updatedAt },
  );
  return { state, counts, labs: rows, sort, dir, info };
}

export default function VettingQueue({ loaderData }: Route.ComponentProps) {
  const fmt = useFormat();
  const { state, counts, labs, sort, dir, info } = loaderData;
  const [params] = useSearchParams();
  return (
    <div>
      <PageHeader title="Vetting queue" subtitle="Lab applications with their accreditation evidence and calibration checks." />
      <nav aria-label="Vetting states" className="mb-4 flex flex-wrap gap-2">
        {VETTING_STATES.map((s) => {
          const next = new URLSearchParams(params);
          next.set("state", s);
          next.delete("page");
          return (
            <Link key={s} to={`?${next}`} aria-current={s === state ? "page" : undefined} className={s === state ? "btn-primary" : "btn-secondary"}>
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
        <>
          <SortableTable
            caption={`Labs ${VETTING_STATE_BADGES[state].label}`}
            columns={[
              { label: "Lab", sort: "name" },
              { label: "Location", sort: "location" },
              { label: "State" },
              { label: "Calibration" },
              { label: "Last change", sort: "updated" },
              { label: "Review" },
            ]}
            sort={sort}
            dir={dir}
          >
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
                <td className="whitespace-nowrap">{fmt.date(lab.updatedAt)}</td>
                <td>
                  <Link to={`/admin/labs/${lab.id}`} className="font-semibold text-beam-700 underline">
                    Review {lab.name}
                  </Link>
                </td>
              </tr>
            ))}
          </SortableTable>
          <PageNav info={info} noun={["lab", "labs"]} />
        </>
      )}
    </div>
  );
}

export function meta(_: Route.MetaArgs) {
  return [{ title: "Vetting queue — Diffractory" }, { name: "description", content: "Labs by vetting state, with applications in review first." }];
}
