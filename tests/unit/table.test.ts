// The shared list pattern: ?sort, ?dir and ?page read strictly (a sentence and 400 otherwise), a page past the end
// shows the last one, and in-memory sorting keeps ties in their original order with empty values last.
import { describe, expect, it } from "vitest";
import { pageOf, readTableQuery, sortAndPage, type TableSpec } from "~/utils/table";

const SPEC: TableSpec<"name" | "at"> = { sorts: ["name", "at"], defaultSort: "at", firstDir: { at: "desc" }, pageSize: 2 };
const q = (s: string) => readTableQuery(new URLSearchParams(s), SPEC);

async function status(f: () => unknown) {
  try {
    f();
    return 200;
  } catch (e) {
    return (e as { init?: { status?: number } }).init?.status ?? 500;
  }
}

describe("readTableQuery", () => {
  it("defaults to the default column in its first direction, page 1", () => {
    expect(q("")).toEqual({ sort: "at", dir: "desc", page: 1, pageSize: 2 });
    expect(q("sort=name")).toMatchObject({ sort: "name", dir: "asc" });
    expect(q("sort=name&dir=desc&page=3")).toMatchObject({ sort: "name", dir: "desc", page: 3 });
  });
  it("answers 400 to unknown columns, directions and pages", async () => {
    for (const bad of ["sort=password", "dir=up", "page=0", "page=-1", "page=1.5", "page=9999999", "page=abc"]) expect(await status(() => q(bad))).toBe(400);
  });
});

describe("pageOf and sortAndPage", () => {
  it("clamps a page past the end to the last page", () => {
    expect(pageOf(5, { page: 9, pageSize: 2 })).toEqual({ page: 3, pageCount: 3, pageSize: 2, total: 5, offset: 4 });
    expect(pageOf(0, { page: 1, pageSize: 2 })).toEqual({ page: 1, pageCount: 1, pageSize: 2, total: 0, offset: 0 });
  });
  it("sorts strings without regard to case, numbers inside names by value, empty values last either way", () => {
    const rows = [{ name: "lab 10" }, { name: null }, { name: "Lab 9" }, { name: "alpha" }];
    const names = (dir: "asc" | "desc") => sortAndPage(rows, { sort: "name", dir, page: 1, pageSize: 10 }, { name: (r) => r.name }).rows.map((r) => r.name);
    expect(names("asc")).toEqual(["alpha", "Lab 9", "lab 10", null]);
    expect(names("desc")).toEqual(["lab 10", "Lab 9", "alpha", null]);
  });
  it("sorts ISO times as times and pages the result", () => {
    const rows = ["2026-01-02T00:00:00Z", "2026-01-10T00:00:00Z", "2026-01-03T00:00:00Z"].map((at) => ({ at }));
    const r = sortAndPage(rows, { sort: "at", dir: "desc", page: 2, pageSize: 2 }, { at: (x) => x.at });
    expect(r.rows.map((x) => x.at)).toEqual(["2026-01-02T00:00:00Z"]);
    expect(r).toMatchObject({ page: 2, pageCount: 2, total: 3 });
  });
});
