// The one way long lists sort and page: `?sort=<column>&dir=asc|desc&page=<n>` in the URL, read here on the server
// (browser-safe: the screens build their links from the same names). A page past the end shows the last page.
import { data } from "react-router";

export type SortDir = "asc" | "desc";

export interface TableSpec<K extends string> {
  /** The columns a list may be sorted by, as they appear in `?sort=`. */
  sorts: readonly K[];
  defaultSort: K;
  /** The direction a column sorts in when first chosen (dates newest first, names A–Z). */
  firstDir: Partial<Record<K, SortDir>>;
  pageSize: number;
}

export interface TableQuery<K extends string = string> {
  sort: K;
  dir: SortDir;
  /** The page asked for (1-based); clamp with `pageOf` once the total is known. */
  page: number;
  pageSize: number;
}

export interface PageInfo {
  page: number;
  pageCount: number;
  pageSize: number;
  total: number;
  offset: number;
}

/** The first direction of a column. */
export const firstDirOf = <K extends string>(spec: TableSpec<K>, key: K): SortDir => spec.firstDir[key] ?? "asc";

/** Reads sort, direction and page; anything else in the URL (filters) is the screen's. Bad values answer 400 with a sentence. */
export function readTableQuery<K extends string>(input: Request | URLSearchParams, spec: TableSpec<K>): TableQuery<K> {
  const params = input instanceof URLSearchParams ? input : new URL(input.url).searchParams;
  const sort = params.get("sort") ?? spec.defaultSort;
  if (!(spec.sorts as readonly string[]).includes(sort)) {
    throw data({ message: `A list can be sorted by ${spec.sorts.join(", ")}.` }, { status: 400 });
  }
  const dir = params.get("dir") ?? firstDirOf(spec, sort as K);
  if (dir !== "asc" && dir !== "desc") throw data({ message: "The sort direction is asc or desc." }, { status: 400 });
  const page = params.get("page") ?? "1";
  if (!/^[1-9][0-9]{0,5}$/.test(page)) throw data({ message: "The page number must be a whole number from 1." }, { status: 400 });
  return { sort: sort as K, dir, page: Number(page), pageSize: spec.pageSize };
}

/** The page shown for a total: the one asked for, or the last one when that is past the end. */
export function pageOf(total: number, q: Pick<TableQuery, "page" | "pageSize">): PageInfo {
  const pageCount = Math.max(1, Math.ceil(total / q.pageSize));
  const page = Math.min(q.page, pageCount);
  return { page, pageCount, pageSize: q.pageSize, total, offset: (page - 1) * q.pageSize };
}

type SortValue = string | number | boolean | Date | null | undefined;

/** Sorts and pages a list held in memory (short lists, or lists computed rather than queried); empty values go last. */
export function sortAndPage<T, K extends string>(rows: T[], q: TableQuery<K>, by: Record<K, (row: T) => SortValue>) {
  const key = by[q.sort];
  const sign = q.dir === "asc" ? 1 : -1;
  const value = (v: SortValue) => (v instanceof Date ? v.getTime() : typeof v === "string" && /^\d{4}-\d\d-\d\dT/.test(v) ? Date.parse(v) : v);
  const sorted = rows
    .map((row, index) => ({ row, index, v: value(key(row)) }))
    .sort((a, b) => {
      if (a.v === b.v) return a.index - b.index;
      if (a.v === null || a.v === undefined) return 1;
      if (b.v === null || b.v === undefined) return -1;
      const c = typeof a.v === "string" && typeof b.v === "string" ? a.v.localeCompare(b.v, "en", { sensitivity: "base", numeric: true }) : a.v < b.v ? -1 : 1;
      return c === 0 ? a.index - b.index : c * sign;
    })
    .map((r) => r.row);
  const info = pageOf(rows.length, q);
  return { rows: sorted.slice(info.offset, info.offset + info.pageSize), ...info, sort: q.sort, dir: q.dir };
}
