// The audit log (admins only): each entry a sentence about who did what, newest first, 50 a page, sortable by time,
// person and action, filtered by kind (?kind=) and person (?person=); sign-ins apart under ?kind=sign_ins with the
// recent sign-in attempts, failed ones included (docs/design.md#records-that-hold).
import { data, Form, Link, useSearchParams } from "react-router";
import { PageNav, SortableTable } from "~/components/data-table";
import { Badge, EmptyState, PageHeader, TableCard } from "~/components/ui";
import { AUDIT_KIND_LABELS, AUDIT_KINDS, type AuditKind } from "~/domain/audit-words";
import { isUuid } from "~/domain/ids";
import { auditLogCount, auditLogEntries, auditLogPeople, signInAttempts } from "~/models/platform/audit-log.server";
import { requireAdmin } from "~/utils/permissions.server";
import type { Route } from "./+types/audit-log";
import { useFormat } from "~/components/locale";
import { pageOf, readTableQuery, type TableSpec } from "~/utils/table";

const TABLE: TableSpec<"at" | "who" | "action"> = { sorts: ["at", "who", "action"], defaultSort: "at", firstDir: { at: "desc" }, pageSize: 50 };

/** The kinds offered in the filter; sign-ins have their own tab. */
const FILTER_KINDS = AUDIT_KINDS.filter((k) => k !== "sign_ins");

/** Reads ?kind= and ?person=; a value that is neither answers 400 with a sentence. */
function readFilter(request: Request) {
  const params = new URL(request.url).searchParams;
  const kind = params.get("kind") || null;
  if (kind && !(AUDIT_KINDS as readonly string[]).includes(kind)) {
    throw data(
      { message: `The log can be filtered by ${FILTER_KINDS.map((k) => AUDIT_KIND_LABELS[k].toLowerCase()).join(", ")}, or show sign-ins.` },
      { status: 400 },
    );
  }
  const person = params.get("person") || null;
  if (person && !isUuid(person)) throw data({ message: "Choose a person from the list." }, { status: 400 });
  return { kind: kind as AuditKind | null, actorUserId: person };
}

export async function loader({ request }: Route.LoaderArgs) {
  await requireAdmin(request);
  const q = readTableQuery(request, TABLE);
  const filter = readFilter(request);
  const info = pageOf(await auditLogCount(filter), q);
  const [entries, people, attempts] = await Promise.all([
    auditLogEntries({ sort: q.sort, dir: q.dir, limit: info.pageSize, offset: info.offset, ...filter }),
    auditLogPeople(),
    filter.kind === "sign_ins" ? signInAttempts(50) : Promise.resolve([]),
  ]);
  return {
    info,
    sort: q.sort,
    dir: q.dir,
    kind: filter.kind,
    person: filter.actorUserId,
    kinds: FILTER_KINDS.map((k) => ({ value: k, label: AUDIT_KIND_LABELS[k] })),
    people,
    entries,
    attempts,
  };
}

function Tabs({ signIns }: { signIns: boolean }) {
  const [params] = useSearchParams();
  const person = params.get("person");
  const keep = person ? `person=${person}` : "";
  const tab = (active: boolean) => `border-b-2 px-3 py-2 text-sm font-semibold ${active ? "border-beam-700 text-ink-900" : "border-transparent text-ink-600"}`;
  return (
    <nav aria-label="Audit log views" className="mb-4 flex gap-2 border-b border-ink-200">
      <Link to={keep ? `?${keep}` : "?"} className={tab(!signIns)} aria-current={!signIns ? "page" : undefined}>
        Activity
      </Link>
      <Link to={`?kind=sign_ins${keep ? `&${keep}` : ""}`} className={tab(signIns)} aria-current={signIns ? "page" : undefined}>
        Sign-ins
      </Link>
    </nav>
  );
}

export default function AuditLog({ loaderData }: Route.ComponentProps) {
  const fmt = useFormat();
  const { entries, info, sort, dir, kind, person, kinds, people, attempts } = loaderData;
  const signIns = kind === "sign_ins";
  return (
    <div>
      <PageHeader
        title="Audit log"
        subtitle="Vetting decisions, requests, quotes, orders, payments, files and every other change, with who made it and from where."
      />
      <Tabs signIns={signIns} />
      <Form method="get" className="card mb-4 flex flex-wrap items-end gap-4" aria-label="Filter the audit log">
        {signIns ? (
          <input type="hidden" name="kind" value="sign_ins" />
        ) : (
          <label className="grid gap-1 text-sm">
            <span className="font-medium">Kind</span>
            <select name="kind" defaultValue={kind ?? ""} className="input">
              <option value="">Every kind</option>
              {kinds.map((k) => (
                <option key={k.value} value={k.value}>
                  {k.label}
                </option>
              ))}
            </select>
          </label>
        )}
        <label className="grid gap-1 text-sm">
          <span className="font-medium">Person</span>
          <select name="person" defaultValue={person ?? ""} className="input">
            <option value="">Everyone</option>
            {people.map((p) => (
              <option key={p.id} value={p.id}>
                {p.name} ({p.email})
              </option>
            ))}
          </select>
        </label>
        <button type="submit" className="btn-secondary">
          Filter
        </button>
        {kind && !signIns ? (
          <Link to={person ? `?person=${person}` : "?"} className="text-sm underline">
            Clear the kind
          </Link>
        ) : null}
      </Form>
      {entries.length === 0 ? (
        <EmptyState title={kind || person ? "Nothing matches the filter" : "Nothing recorded yet"}>
          {kind || person ? "Choose another kind or person." : "Entries appear as people sign in and work; nothing needs doing here."}
        </EmptyState>
      ) : (
        <>
          <SortableTable
            columns={[
              { label: "When", sort: "at", firstDir: "desc" },
              { label: "Who", sort: "who" },
              { label: "What happened", sort: "action" },
              { label: "Organisation" },
              { label: "From" },
            ]}
            sort={sort}
            dir={dir}
            caption={signIns ? "Sign-in entries" : "Audit log entries"}
          >
            {entries.map((e) => (
              <tr key={e.id}>
                <td className="whitespace-nowrap">{fmt.dateTime(e.at)}</td>
                <td>
                  {e.who ?? "Diffractory"}
                  {e.email ? <span className="block text-xs text-ink-500">{e.email}</span> : null}
                </td>
                <td className="max-w-xl">
                  <span className="block">{e.sentence}.</span>
                  {e.kind ? <span className="block text-xs text-ink-500">{e.kind}</span> : null}
                  {e.details ? <span className="block text-xs break-words text-ink-600">{e.details}</span> : null}
                </td>
                <td>{e.organisation ?? "—"}</td>
                <td className="font-mono text-xs">{e.clientAddress ?? "—"}</td>
              </tr>
            ))}
          </SortableTable>
          <PageNav info={info} noun={["entry", "entries"]} />
        </>
      )}
      {signIns ? (
        <section aria-labelledby="attempts-heading" className="mt-8 space-y-2">
          <h2 id="attempts-heading" className="text-lg font-semibold">
            Recent sign-in attempts
          </h2>
          <p className="text-sm text-ink-600">Every password sign-in tried, the failed ones included; the sign-in limit counts these.</p>
          {attempts.length === 0 ? (
            <p className="text-sm text-ink-600">No sign-in has been tried yet.</p>
          ) : (
            <TableCard columns={["When", "E-mail", "Result", "From"]} caption="Recent sign-in attempts">
              {attempts.map((a) => (
                <tr key={a.id}>
                  <td className="whitespace-nowrap">{fmt.dateTime(a.at)}</td>
                  <td>{a.email}</td>
                  <td>{a.succeeded ? <Badge tone="ok">Signed in</Badge> : <Badge tone="danger">Failed</Badge>}</td>
                  <td className="font-mono text-xs">{a.clientAddress}</td>
                </tr>
              ))}
            </TableCard>
          )}
        </section>
      ) : null}
    </div>
  );
}

export function meta(_: Route.MetaArgs) {
  return [
    { title: "Audit log — Diffractory" },
    { name: "description", content: "Who did what on Diffractory, newest first: sign-ins, order moves, payments and decisions, filtered by kind and person." },
  ];
}
