// The per-request memo the session lookup uses: shared by the loaders of one request, never between requests.
import { describe, expect, it } from "vitest";
import { oncePerRequest, withRequestScope } from "~/utils/request-scope.server";

describe("oncePerRequest", () => {
  it("runs a lookup once per key within one request, again in the next request", async () => {
    let runs = 0;
    const lookUp = () => oncePerRequest("actor a", async () => ++runs);
    const first = await withRequestScope(async () => [await lookUp(), await Promise.all([lookUp(), lookUp()])]);
    expect(first).toEqual([1, [1, 1]]);
    expect(await withRequestScope(lookUp)).toBe(2);
    // Another key in the same request is its own lookup.
    expect(await withRequestScope(async () => [await lookUp(), await oncePerRequest("actor b", async () => "b")])).toEqual([3, "b"]);
  });

  it("keeps nothing outside a request scope", async () => {
    let runs = 0;
    await oncePerRequest("k", async () => ++runs);
    await oncePerRequest("k", async () => ++runs);
    expect(runs).toBe(2);
  });

  it("keeps two requests running at the same time apart", async () => {
    let runs = 0;
    const slow = () => oncePerRequest("k", () => new Promise<number>((r) => setTimeout(() => r(++runs), 5)));
    const answers = await Promise.all([withRequestScope(() => Promise.all([slow(), slow()])), withRequestScope(() => Promise.all([slow(), slow()]))]);
    expect(answers.map((pair) => pair[0] === pair[1])).toEqual([true, true]);
    expect(answers[0][0]).not.toBe(answers[1][0]);
    expect(runs).toBe(2);
  });
});
