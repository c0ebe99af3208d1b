// Long lists: a table whose column headings sort it (links that change `?sort=` and `?dir=`, with aria-sort on the
// sorted heading) and page links with counts below. Other search parameters (filters) are kept; sorting starts at
// page 1 again. The server reads the same parameters with readTableQuery (app/utils/table.ts).
import type { ReactNode } from "react";
import { Link, useSearchParams } from "react-router";
import type { PageInfo, SortDir } from "~/utils/table";
import { useFormat } from "./locale";
import { labelRows, STACKED_TABLE, useStackLabels } from "./stacked-rows";

export interface Column {
  label: string;
  /** The `?sort=` name when the column sorts the list. */
  sort?: string;
  /** The direction the column sorts in when first chosen. */
  firstDir?: SortDir;
  className?: string;
}

function useHref() {
  const [params] = useSearchParams();
  return (changes: Record<string, string | null>) => {
    const next = new URLSearchParams(params);
    for (const [k, v] of Object.entries(changes)) {
      if (v === null) next.delete(k);
      else next.set(k, v);
    }
    const s = next.toString();
    return s ? `?${s}` : "?";
  };
}

function SortArrow({ dir }: { dir: SortDir | null }) {
  return (
    <svg viewBox="0 0 10 14" className="h-3 w-2.5 shrink-0" aria-hidden="true" focusable="false">
      <path d="M5 1 9 5.5H1Z" fill="currentColor" opacity={dir === "asc" ? 1 : 0.3} />
      <path d="M5 13 1 8.5h8Z" fill="currentColor" opacity={dir === "desc" ? 1 : 0.3} />
    </svg>
  );
}

export function SortableTable({
  columns,
  sort,
  dir,
  caption,
  children,
}: {
  columns: Column[];
  sort: string;
  dir: SortDir;
  caption: string;
  children: ReactNode;
}) {
  const href = useHref();
  const ref = useStackLabels<HTMLDivElement>();
  // relative: the sort links' visually hidden words are positioned inside this scroller, not out past the page's edge.
  return (
    <div ref={ref} className="card relative overflow-x-auto p-0">
      {/* On a phone the rows stack as small cards (stacked-rows.tsx). */}
      <table className={`table ${STACKED_TABLE}`}>
        <caption className="sr-only">
          {caption}
          {columns.find((c) => c.sort === sort)
            ? `, sorted by ${columns.find((c) => c.sort === sort)!.label.toLowerCase()} ${dir === "asc" ? "ascending" : "descending"}`
            : ""}
        </caption>
        <thead>
          <tr>
            {columns.map((c) => {
              const active = c.sort !== undefined && c.sort === sort;
              if (!c.sort) {
                return (
                  <th key={c.label} scope="col" className={c.className}>
                    {c.label}
                  </th>
                );
              }
              const nextDir: SortDir = active ? (dir === "asc" ? "desc" : "asc") : (c.firstDir ?? "asc");
              return (
                <th key={c.label} scope="col" className={c.className} aria-sort={active ? (dir === "asc" ? "ascending" : "descending") : undefined}>
                  <Link
                    to={href({ sort: c.sort, dir: nextDir, page: null })}
                    preventScrollReset
                    className={`inline-flex items-center gap-1 rounded hover:text-ink-900 ${active ? "text-ink-900" : ""}`}
                  >
                    {c.label}
                    {/* Words, not an aria-label, so the column's name stays the heading's text and never labels a form field. */}
                    <span className="sr-only">, sort {nextDir === "asc" ? "ascending" : "descending"}</span>
                    <SortArrow dir={active ? dir : null} />
                  </Link>
                </th>
              );
            })}
          </tr>
        </thead>
        <tbody>
          {labelRows(
            children,
            columns.map((c) => c.label),
          )}
        </tbody>
      </table>
    </div>
  );
}

/** The page numbers to link: the first, the last and two either side of the current one, with gaps between. */
function pageWindow(page: number, pageCount: number): (number | "gap")[] {
  const shown = [...new Set([1, page - 2, page - 1, page, page + 1, page + 2, pageCount])].filter((p) => p >= 1 && p <= pageCount).sort((a, b) => a - b);
  const out: (number | "gap")[] = [];
  for (const p of shown) {
    const last = out[out.length - 1];
    if (typeof last === "number" && p - last > 1) out.push("gap");
    out.push(p);
  }
  return out;
}

/** "41–60 of 312 entries" and the page links; nothing but the count when everything fits on one page. */
export function PageNav({ info, noun }: { info: PageInfo; noun: [singular: string, plural: string] }) {
  const href = useHref();
  const fmt = useFormat();
  const { page, pageCount, pageSize, total } = info;
  const first = total === 0 ? 0 : (page - 1) * pageSize + 1;
  const last = Math.min(total, page * pageSize);
  const count = (
    <p className="text-sm text-ink-600" aria-live="polite">
      {pageCount > 1
        ? `${fmt.number(first)}–${fmt.number(last)} of ${fmt.number(total)} ${noun[1]}`
        : `${fmt.number(total)} ${total === 1 ? noun[0] : noun[1]}`}
    </p>
  );
  if (pageCount <= 1) return <div className="mt-3">{count}</div>;
  return (
    <div className="mt-4 flex flex-wrap items-center justify-between gap-3">
      {count}
      <nav aria-label="Pages">
        <ul className="flex flex-wrap items-center gap-1 text-sm">
          <li>
            {page > 1 ? (
              <Link to={href({ page: String(page - 1) })} className="btn-secondary px-3 py-1" rel="prev">
                Previous
              </Link>
            ) : (
              <span className="btn-secondary cursor-default px-3 py-1 opacity-50" aria-disabled="true">
                Previous
              </span>
            )}
          </li>
          {pageWindow(page, pageCount).map((p, i) =>
            p === "gap" ? (
              <li key={`gap-${i}`} aria-hidden="true" className="px-1 text-ink-500">
                …
              </li>
            ) : (
              <li key={p}>
                <Link
                  to={href({ page: p === 1 ? null : String(p) })}
                  aria-label={`Page ${p}`}
                  aria-current={p === page ? "page" : undefined}
                  className={`inline-flex min-w-9 justify-center rounded-lg border px-2 py-1 ${p === page ? "border-beam-600 bg-beam-600 font-semibold text-white" : "border-ink-300 bg-white text-ink-800 hover:bg-ink-100"}`}
                >
                  {p}
                </Link>
              </li>
            ),
          )}
          <li>
            {page < pageCount ? (
              <Link to={href({ page: String(page + 1) })} className="btn-secondary px-3 py-1" rel="next">
                Next
              </Link>
            ) : (
              <span className="btn-secondary cursor-default px-3 py-1 opacity-50" aria-disabled="true">
                Next
              </span>
            )}
          </li>
        </ul>
      </nav>
    </div>
  );
}
