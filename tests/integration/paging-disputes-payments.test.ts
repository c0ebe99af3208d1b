// Paging of the admin's disputes list and the client's payments list, read a page at a time in SQL (docs/performance.md,
// "Pages: disputes and payments"): page 1 shows a page of rows and the total, page 2 the next ones, a page past the
// end shows the last page, a bad page number answers 400 with a sentence; open disputes come before decided ones,
// newest first; the per-row facts (money held, files with their checks, the timeline) are those of each row's own
// order; and a decision made on page 2 lands the admin back on page 2. Expectations are the product's own rules
// (app/utils/table.ts, docs/design.md#disputes).
import { sql } from "drizzle-orm";
import { createElement } from "react";
import { renderToString } from "react-dom/server";
import { createRoutesStub } from "react-router";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { moneyWorld, type MoneyWorld } from "./money-fixtures";
import { callRoute, formRequest, getRequest, sessionCookies } from "./route-call";

let w: MoneyWorld;
const as = sessionCookies();
const CLIENT = "owner@halvorsen.example";
const ADMIN = "admin@diffractory.example";

type RouteModule = { loader: (...a: never[]) => unknown; action?: (...a: never[]) => unknown; default: unknown };
let routes: Record<"disputes" | "payments", RouteModule>;

/** The loader's answer for the person, and the page rendered to HTML from it (as the app renders it). */
async function page(route: RouteModule, path: string, who: string) {
  const answer = await callRoute(route.loader as never, getRequest(path, await as(who)));
  if (answer.status !== 200) return { status: answer.status, body: answer.body, html: "" };
  const Stub = createRoutesStub([{ id: "page", path: path.split("?")[0], Component: route.default as never, loader: () => answer.body }]);
  const html = renderToString(createElement(Stub, { initialEntries: [path], hydrationData: { loaderData: { page: answer.body } } }));
  return { status: answer.status, body: answer.body, html: html.replace(/<!-- -->/g, "") };
}

interface PageInfo {
  page: number;
  pageCount: number;
  pageSize: number;
  total: number;
}
interface DisputeRow {
  orderId: string;
  state: "open" | "resolved";
  openedAt: string | Date;
  heldMinor: number;
  files: { name: string; version: number; verdict: string | null }[];
  timeline: { toState: string; note: string }[];
  timelineEvents: number;
}
type DisputesBody = { disputes: DisputeRow[]; info: PageInfo; open: number; decided: number };
type PaymentsBody = { payments: { id: string; at: string | Date }[]; info: PageInfo };

const minutesAgo = (m: number) => new Date(Date.now() - m * 60_000);
let paid: { orderId: string; fileName: string };
let decidedLong: string;

beforeAll(async () => {
  w = await moneyWorld();
  await w.onboardLab();
  routes = { disputes: await import("~/routes/admin/disputes"), payments: await import("~/routes/client/payments") };

  // A paid, delivered, disputed order with a scan file and its check: money held, opened long ago, so that 24 newer
  // open disputes put it on page 2.
  const orderId = await w.makeOrder(30_000);
  await w.pay(orderId);
  const [order] = await w.db.select().from(w.schema.orders).where(w.eq(w.schema.orders.id, orderId));
  const [sample] = await w.db.insert(w.schema.samples).values({ requestId: order.requestId, label: "Paging lot", formula: "LiCoO2" }).returning();
  const [file] = await w.db
    .insert(w.schema.orderFiles)
    .values({
      orderId,
      sampleId: sample.id,
      name: "paging-lot.xy",
      version: 1,
      sizeBytes: 10,
      contentType: "text/plain",
      sha256: "0".repeat(64),
      storageKey: `orders/${orderId}/files/paging-lot.xy`,
      state: "stored",
    })
    .returning();
  await w.db.insert(w.schema.scanChecks).values({ fileId: file.id, status: "done", verdict: "consistent" });
  await w.deliver(orderId);
  await w.app.orders.openDispute(orderId, w.owner.id, "The second scan stops at 60° although the quote said 90°.");
  await w.db
    .update(w.schema.disputes)
    .set({ openedAt: minutesAgo(10_000) })
    .where(w.eq(w.schema.disputes.orderId, orderId));
  paid = { orderId, fileName: "paging-lot.xy" };

  // 24 newer open disputes and 6 decided ones (orders made directly in the database, nothing held).
  for (let i = 0; i < 30; i++) {
    const id = await w.makeOrder(10_000 + i);
    const decided = i >= 24;
    await w.db.insert(w.schema.disputes).values({
      orderId: id,
      openedBy: w.owner.id,
      reason: `Paging dispute ${i}: the scan range is shorter than quoted.`,
      openedAt: minutesAgo(i + 1),
      state: decided ? "resolved" : "open",
      ...(decided ? { refundMinor: 0, payoutMinor: 0, decisionReason: "Nothing was held on this order." } : {}),
    });
    if (i === 29) {
      // A decided dispute whose order has a long timeline: the list shows its last events, its page all of them.
      for (let e = 0; e < 5; e++)
        await w.db.insert(w.schema.orderEvents).values({ orderId: id, toState: "measuring", actorUserId: w.labManager.id, note: `Lab note ${e}` });
      decidedLong = id;
    }
  }

  // 30 more payment attempts for the client's paid order, a minute apart (open attempts are listed too).
  for (let i = 0; i < 30; i++)
    await w.db
      .insert(w.schema.payments)
      .values({ orderId, status: "open", amountMinor: 30_000, currency: "EUR", method: "card", updatedAt: minutesAgo(i + 5) });
}, 120_000);

afterAll(async () => {
  await w?.close();
});

describe("the admin's disputes list, a page at a time", () => {
  it("page 1 shows 20 disputes, open ones first and newest first, with the totals per state", async () => {
    const [counts] = await w.db
      .select({ open: sql<number>`count(*) filter (where state = 'open')::int`, resolved: sql<number>`count(*) filter (where state = 'resolved')::int` })
      .from(w.schema.disputes);
    const { status, body, html } = await page(routes.disputes, "/admin/disputes", ADMIN);
    expect(status).toBe(200);
    const d = body as DisputesBody;
    expect(d.open).toBe(counts.open);
    expect(d.decided).toBe(counts.resolved);
    expect(d.open).toBeGreaterThanOrEqual(25);
    expect(d.info).toMatchObject({ page: 1, pageSize: 20, total: counts.open + counts.resolved });
    expect(d.disputes).toHaveLength(20);
    // All open (there are more than 20), newest first.
    expect(d.disputes.every((r) => r.state === "open")).toBe(true);
    const opened = d.disputes.map((r) => new Date(r.openedAt).getTime());
    expect([...opened].sort((a, b) => b - a)).toEqual(opened);
    expect(html).toContain(`1–20 of ${d.info.total} disputes`);
    expect(html).toContain(`${d.open} open, ${d.decided} decided`);
  });

  it("page 2 shows the next disputes, the held money, files with checks and whole timeline of each open one's own order", async () => {
    const first = (await page(routes.disputes, "/admin/disputes", ADMIN)).body as DisputesBody;
    const { body } = await page(routes.disputes, "/admin/disputes?page=2", ADMIN);
    const d = body as DisputesBody;
    expect(d.info.page).toBe(2);
    expect(d.disputes.length).toBe(Math.min(20, d.info.total - 20));
    const ids = new Set(first.disputes.map((r) => r.orderId));
    expect(d.disputes.some((r) => ids.has(r.orderId))).toBe(false);
    const row = d.disputes.find((r) => r.orderId === paid.orderId)!;
    expect(row).toBeDefined();
    expect(row.heldMinor).toBe(await w.app.ledger.heldForOrder(w.db, paid.orderId));
    expect(row.heldMinor).toBe(30_000);
    expect(row.files).toEqual([{ name: paid.fileName, version: 1, verdict: "consistent" }]);
    const events = await w.db.select().from(w.schema.orderEvents).where(w.eq(w.schema.orderEvents.orderId, paid.orderId));
    expect(row.timeline).toHaveLength(events.length);
    expect(row.timelineEvents).toBe(events.length);
    expect(row.timeline.map((e) => e.toState)).toContain("disputed");
    // Open disputes come before decided ones across pages too.
    const states = [...first.disputes, ...d.disputes].map((r) => r.state);
    expect(states.indexOf("resolved") === -1 || states.slice(states.indexOf("resolved")).every((s) => s === "resolved")).toBe(true);
  });

  it("a decided dispute shows the last events of its timeline and the way to the whole of it", async () => {
    const info = ((await page(routes.disputes, "/admin/disputes", ADMIN)).body as DisputesBody).info;
    const { body, html } = await page(routes.disputes, `/admin/disputes?page=${info.pageCount}`, ADMIN);
    const row = (body as DisputesBody).disputes.find((r) => r.orderId === decidedLong)!;
    expect(row).toBeDefined();
    expect(row.timelineEvents).toBe(6);
    expect(row.timeline.map((e) => e.note)).toEqual(["Lab note 2", "Lab note 3", "Lab note 4"]);
    expect(html).toContain("The last 3 of 6 events on the order");
    expect(html).toContain(`href="/admin/disputes/${decidedLong}"`);
  });

  it("a page past the end shows the last page, and a bad page number answers 400 with a sentence", async () => {
    const first = (await page(routes.disputes, "/admin/disputes", ADMIN)).body as DisputesBody;
    const past = (await page(routes.disputes, "/admin/disputes?page=999", ADMIN)).body as DisputesBody;
    expect(past.info.page).toBe(first.info.pageCount);
    expect(past.disputes.length).toBe(first.info.total - (first.info.pageCount - 1) * 20);
    for (const bad of ["0", "-1", "two", "1.5"]) {
      const answer = await page(routes.disputes, `/admin/disputes?page=${bad}`, ADMIN);
      expect(answer.status, bad).toBe(400);
      expect((answer.body as { message: string }).message).toBe("The page number must be a whole number from 1.");
    }
  });

  it("a decision made on page 2 settles the dispute and lands the admin back on page 2", async () => {
    const decided = await callRoute(
      routes.disputes.action as never,
      formRequest(
        "/admin/disputes?page=2",
        { orderId: paid.orderId, refund: "100.00", reason: "The range was short; a third of the price comes back." },
        await as(ADMIN),
      ),
    );
    expect(decided.status).toBe(302);
    expect(decided.headers.get("location")).toBe("/admin/disputes?page=2");
    const [row] = await w.db.select().from(w.schema.disputes).where(w.eq(w.schema.disputes.orderId, paid.orderId));
    expect(row).toMatchObject({ state: "resolved", refundMinor: 10_000 });
  });
});

describe("the client's payments list, a page at a time", () => {
  it("page 1 shows the 25 newest payments and the total; page 2 the next ones", async () => {
    const { status, body, html } = await page(routes.payments, "/client/payments", CLIENT);
    expect(status).toBe(200);
    const p1 = body as PaymentsBody;
    expect(p1.info.total).toBeGreaterThanOrEqual(31);
    expect(p1.info).toMatchObject({ page: 1, pageSize: 25 });
    expect(p1.payments).toHaveLength(25);
    const at = (rows: PaymentsBody["payments"]) => rows.map((r) => new Date(r.at).getTime());
    expect([...at(p1.payments)].sort((a, b) => b - a)).toEqual(at(p1.payments));
    expect(html).toContain(`1–25 of ${p1.info.total} payments`);
    const p2 = (await page(routes.payments, "/client/payments?page=2", CLIENT)).body as PaymentsBody;
    expect(p2.info.page).toBe(2);
    expect(p2.payments).toHaveLength(Math.min(25, p1.info.total - 25));
    expect(p2.payments.some((r) => p1.payments.some((q) => q.id === r.id))).toBe(false);
    // Page 2 continues where page 1 stopped: older than the last row of page 1.
    expect(Math.max(...at(p2.payments))).toBeLessThanOrEqual(Math.min(...at(p1.payments)));
  });

  it("a page past the end shows the last page, and a bad page number answers 400 with a sentence", async () => {
    const first = (await page(routes.payments, "/client/payments", CLIENT)).body as PaymentsBody;
    const past = (await page(routes.payments, "/client/payments?page=40", CLIENT)).body as PaymentsBody;
    expect(past.info.page).toBe(first.info.pageCount);
    expect(past.payments).toHaveLength(first.info.total - (first.info.pageCount - 1) * 25);
    for (const bad of ["0", "x", "2.0"]) {
      const answer = await page(routes.payments, `/client/payments?page=${bad}`, CLIENT);
      expect(answer.status, bad).toBe(400);
      expect((answer.body as { message: string }).message).toBe("The page number must be a whole number from 1.");
    }
  });
});
