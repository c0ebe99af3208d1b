// Paging in SQL of the lab's quotes and the client's data room on the real PostgreSQL: a page of 25 with the
// total, the next page with the next rows, a page past the end gives the last page, a bad page number a 400
// with a sentence; the data room reads only orders with files the client may see; orders sort and page in SQL.
import { and, count, eq } from "drizzle-orm";
import { beforeAll, describe, expect, it } from "vitest";
import { db, schema } from "~/db/client.server";
import { seedDemo } from "~/demo/seed.server";
import { DATA_ROOM_PAGE_SIZE } from "~/models/files/data-room.server";
import { LAB_QUOTES_PAGE_SIZE } from "~/models/requests/quotes.server";
import { loader as dataRoomLoader } from "~/routes/client/data-room";
import { loader as labQuotesLoader } from "~/routes/lab/quotes";
import { loader as clientOrdersLoader } from "~/routes/client/orders";
import { loader as workQueueLoader } from "~/routes/lab/work-queue";
import { loader as payoutsLoader } from "~/routes/lab/payouts";
import { PAYOUTS_PAGE_SIZE } from "~/models/orders/queries.server";
import { postPayout } from "~/models/payments/provider.server";
import { ORDER_STATES, type OrderState } from "~/domain/order-states";
import { callRoute, getRequest, sessionCookies } from "./route-call";

const as = sessionCookies();
const CLIENT = "owner@halvorsen.example";
const GRANITE = "lab@graniteridge.example";
const BAD_PAGES = ["0", "-1", "1.5", "abc", "1e3"];

const orgId = async (name: string) => (await db.select().from(schema.organisations).where(eq(schema.organisations.name, name)))[0].id;
const minute = (i: number) => new Date(Date.UTC(2026, 0, 1, 0, i));

let clientId: string;
let graniteId: string;

/** `n` open requests of Halvorsen's, one quote of Granite Ridge on each, sent a minute apart (the last newest). */
async function quotedRequests(n: number, prefix: string) {
  const [owner] = await db.select().from(schema.users).where(eq(schema.users.email, CLIENT));
  const requests = await db
    .insert(schema.requests)
    .values(Array.from({ length: n }, (_, i) => ({ organisationId: clientId, createdBy: owner.id, title: `${prefix} ${i}`, state: "open" as const })))
    .returning({ id: schema.requests.id });
  const quotes = await db
    .insert(schema.quotes)
    .values(
      requests.map((r, i) => ({
        requestId: r.id,
        labId: graniteId,
        lineItems: [{ description: "Measurement, per sample", quantity: 1, unitMinor: 10_000 + i, totalMinor: 10_000 + i }],
        totalMinor: 10_000 + i,
        currency: "EUR",
        validUntil: new Date(Date.now() + 30 * 86_400_000),
        turnaroundDays: 5,
        sentAt: minute(i),
      })),
    )
    .returning({ id: schema.quotes.id, requestId: schema.quotes.requestId });
  return quotes;
}

beforeAll(async () => {
  await seedDemo();
  clientId = await orgId("Halvorsen Cathode Works");
  graniteId = await orgId("Granite Ridge Characterisation");
});

describe("the lab's quotes", () => {
  type Listed = { quotes: { id: string; requestTitle: string; labId: string }[]; page: number; pageCount: number; total: number };
  const list = async (query = "") => callRoute(labQuotesLoader, getRequest(`/lab/quotes${query}`, await as(GRANITE)));

  it("pages LAB_QUOTES_PAGE_SIZE at a time, newest first, with the total", async () => {
    await quotedRequests(60, "Paging quote");
    const [{ n }] = await db.select({ n: count() }).from(schema.quotes).where(eq(schema.quotes.labId, graniteId));
    const first = (await list()).body as Listed;
    expect(first.quotes).toHaveLength(LAB_QUOTES_PAGE_SIZE);
    expect(first.total).toBe(n);
    expect(first.page).toBe(1);
    expect(first.pageCount).toBe(Math.ceil(n / LAB_QUOTES_PAGE_SIZE));
    expect(first.quotes.slice(0, 3).map((q) => q.requestTitle)).toEqual(["Paging quote 59", "Paging quote 58", "Paging quote 57"]);
    const second = (await list("?page=2")).body as Listed;
    expect(second.page).toBe(2);
    expect(second.quotes[0].requestTitle).toBe(`Paging quote ${59 - LAB_QUOTES_PAGE_SIZE}`);
    // Every quote once over all pages, all of them the lab's own.
    const all: Listed["quotes"] = [];
    for (let page = 1; page <= first.pageCount; page++) all.push(...((await list(`?page=${page}`)).body as Listed).quotes);
    expect(new Set(all.map((q) => q.id)).size).toBe(n);
    expect(all.every((q) => q.labId === graniteId)).toBe(true);
  });

  it("shows the last page for a page past the end and refuses a bad page number with a sentence", async () => {
    const last = (await list("?page=999")).body as Listed;
    expect(last.page).toBe(last.pageCount);
    expect(last.quotes.length).toBeGreaterThan(0);
    for (const bad of BAD_PAGES) {
      const answer = await list(`?page=${bad}`);
      expect(answer.status, bad).toBe(400);
      expect((answer.body as { message: string }).message).toBe("The page number must be a whole number from 1.");
    }
  });
  it("lapses the lab's own quotes past their validity before the page is read, and no other lab's", async () => {
    const [own] = await quotedRequests(1, "Lapsing quote");
    const lakesideId = await orgId("Lakeside Institute X-ray Core");
    const [other] = await db
      .insert(schema.quotes)
      .values({
        requestId: own.requestId,
        labId: lakesideId,
        lineItems: [],
        totalMinor: 1,
        currency: "EUR",
        validUntil: new Date(Date.now() - 86_400_000),
        turnaroundDays: 5,
      })
      .returning({ id: schema.quotes.id });
    await db
      .update(schema.quotes)
      .set({ validUntil: new Date(Date.now() - 86_400_000) })
      .where(eq(schema.quotes.id, own.id));
    await list();
    const stateOf = async (id: string) => (await db.select({ state: schema.quotes.state }).from(schema.quotes).where(eq(schema.quotes.id, id)))[0].state;
    expect(await stateOf(own.id)).toBe("lapsed");
    expect(await stateOf(other.id)).toBe("sent");
  });
});

describe("the data room", () => {
  type Listed = {
    orders: { id: string; title: string; files: { name: string; version: number }[] }[];
    page: number;
    pageCount: number;
    total: number;
  };
  const list = async (query = "") => callRoute(dataRoomLoader, getRequest(`/client/data-room${query}`, await as(CLIENT)));

  it("pages the orders that have files, DATA_ROOM_PAGE_SIZE at a time, newest change first, with their files", async () => {
    const before = (await list()).body as Listed;
    const quotes = await quotedRequests(30, "Data room order");
    const orders = await db
      .insert(schema.orders)
      .values(
        quotes.map((q, i) => ({
          requestId: q.requestId,
          quoteId: q.id,
          clientOrganisationId: clientId,
          labId: graniteId,
          number: `HCW-PAGING-${i}`,
          state: "data_delivered" as const,
          amountMinor: 10_000,
          currency: "EUR",
          updatedAt: new Date(Date.now() + (i + 1) * 60_000),
        })),
      )
      .returning({ id: schema.orders.id });
    const file = (orderId: string, name: string, version: number, state: "stored" | "uploading" = "stored") => ({
      orderId,
      name,
      version,
      kind: "report" as const,
      sizeBytes: 1000 + version,
      contentType: "application/pdf",
      sha256: "0".repeat(64),
      storageKey: `orders/${orderId}/${name}/${version}`,
      state,
    });
    // Order i has report.pdf in two versions; the first order's file is still uploading, so that order is not listed.
    await db
      .insert(schema.orderFiles)
      .values([
        ...orders.slice(1).flatMap((o) => [file(o.id, "report.pdf", 1), file(o.id, "report.pdf", 2)]),
        file(orders[0].id, "report.pdf", 1, "uploading"),
      ]);
    const first = (await list()).body as Listed;
    expect(first.total).toBe(before.total + 29);
    expect(first.orders).toHaveLength(DATA_ROOM_PAGE_SIZE);
    expect(first.pageCount).toBe(Math.ceil(first.total / DATA_ROOM_PAGE_SIZE));
    expect(first.orders.slice(0, 2).map((o) => o.title)).toEqual(["Data room order 29", "Data room order 28"]);
    expect(first.orders[0].files.map((f) => `${f.name} v${f.version}`)).toEqual(["report.pdf v2", "report.pdf v1"]);
    const second = (await list("?page=2")).body as Listed;
    expect(second.page).toBe(2);
    expect(second.orders[0].title).toBe(`Data room order ${29 - DATA_ROOM_PAGE_SIZE}`);
    const all: Listed["orders"] = [];
    for (let page = 1; page <= first.pageCount; page++) all.push(...((await list(`?page=${page}`)).body as Listed).orders);
    expect(new Set(all.map((o) => o.id)).size).toBe(first.total);
    expect(all.every((o) => o.files.length > 0)).toBe(true);
    expect(all.map((o) => o.id)).not.toContain(orders[0].id);
  });

  it("shows the last page for a page past the end and refuses a bad page number with a sentence", async () => {
    const last = (await list("?page=999")).body as Listed;
    expect(last.page).toBe(last.pageCount);
    expect(last.orders.length).toBeGreaterThan(0);
    for (const bad of BAD_PAGES) {
      const answer = await list(`?page=${bad}`);
      expect(answer.status, bad).toBe(400);
      expect((answer.body as { message: string }).message).toBe("The page number must be a whole number from 1.");
    }
  });
});

describe("orders, client and lab side, sorted and paged in SQL", () => {
  type Listed = {
    orders: { id: string; number: string; state: string; amountMinor: number; title: string }[];
    info: { total: number; pageCount: number; page: number };
  };
  const clientList = async (query = "") => (await callRoute(clientOrdersLoader, getRequest(`/client/orders${query}`, await as(CLIENT)))).body as Listed;
  const labList = async (query = "") => (await callRoute(workQueueLoader, getRequest(`/lab/work-queue${query}`, await as(GRANITE)))).body as Listed;
  const everyPage = async (list: (q: string) => Promise<Listed>, query: string) => {
    const first = await list(query);
    const all = [...first.orders];
    for (let page = 2; page <= first.info.pageCount; page++) all.push(...(await list(`${query}&page=${page}`)).orders);
    return { first, all };
  };
  const STATES = ["funds_held", "samples_received", "measuring", "data_delivered", "paid_out"] as const;

  it("more orders than ever fitted one read (250): every one reachable, in the asked order across pages", async () => {
    const quotes = await quotedRequests(250, "Paging order");
    await db.insert(schema.orders).values(
      quotes.map((q, i) => ({
        requestId: q.requestId,
        quoteId: q.id,
        clientOrganisationId: clientId,
        labId: graniteId,
        number: `PAGING-${String(i).padStart(4, "0")}`,
        state: STATES[i % STATES.length],
        amountMinor: 10_000 + ((i * 37) % 250),
        currency: "EUR",
        dueAt: minute(1000 + ((i * 53) % 250)),
        updatedAt: minute(i),
      })),
    );
    const [{ n }] = await db.select({ n: count() }).from(schema.orders).where(eq(schema.orders.clientOrganisationId, clientId));
    // Newest change first by default: the last inserted first.
    const byUpdated = await everyPage(clientList, "?sort=updated");
    expect(byUpdated.first.info.total).toBe(n);
    expect(byUpdated.all).toHaveLength(n);
    expect(new Set(byUpdated.all.map((o) => o.id)).size).toBe(n);
    const mine = byUpdated.all.filter((o) => o.number.startsWith("PAGING-")).map((o) => o.number);
    expect(mine).toEqual(Array.from({ length: 250 }, (_, i) => `PAGING-${String(249 - i).padStart(4, "0")}`));
    // By amount, largest first, across all pages (one currency here).
    const byAmount = (await everyPage(clientList, "?sort=amount&dir=desc")).all.filter((o) => o.number.startsWith("PAGING-"));
    expect(byAmount.map((o) => o.amountMinor)).toEqual([...byAmount.map((o) => o.amountMinor)].sort((a, b) => b - a));
    // By state, in the order an order moves through them.
    const byState = (await everyPage(clientList, "?sort=state&dir=asc")).all;
    const ranks = byState.map((o) => ORDER_STATES.indexOf(o.state as OrderState));
    expect(ranks).toEqual([...ranks].sort((a, b) => a - b));
    // The lab's work queue: by due date, the owed ones (samples received, measuring) first, soonest first.
    const due = (await everyPage(labList, "?sort=due&dir=asc")).all as unknown as { state: string; due: { at: string | null; kind: string } }[];
    const owed = due.filter((o) => o.due.kind !== "none");
    expect(due.slice(0, owed.length).every((o) => o.due.kind !== "none")).toBe(true);
    expect(owed.map((o) => o.due.at)).toEqual([...owed.map((o) => o.due.at)].sort());
  });
});

describe("the lab's payouts, paged in SQL", () => {
  type Listed = {
    payouts: { transferId: string | null; amount: number; feeMinor: number | null; orderNumber: string }[];
    info: { total: number; pageCount: number; page: number };
  };
  const list = async (query = "") => (await callRoute(payoutsLoader, getRequest(`/lab/payouts${query}`, await as(GRANITE)))).body as Listed;

  it("PAYOUTS_PAGE_SIZE a page, newest first, each with its order and the fee kept from it", async () => {
    const orders = await db.select().from(schema.orders).where(eq(schema.orders.labId, graniteId)).limit(30);
    expect(orders.length).toBe(30);
    for (const [i, order] of orders.entries()) {
      await db.transaction((tx) => postPayout(tx, order, `tr_paging_${String(i).padStart(2, "0")}`, 9_000 + i, i % 3 === 0 ? 0 : 500 + i, "Paging payout"));
    }
    const [{ n }] = await db
      .select({ n: count() })
      .from(schema.ledgerTransactions)
      .innerJoin(schema.orders, eq(schema.orders.id, schema.ledgerTransactions.orderId))
      .where(and(eq(schema.ledgerTransactions.kind, "payout"), eq(schema.orders.labId, graniteId)));
    const first = await list();
    expect(first.info.total).toBe(n);
    expect(first.payouts).toHaveLength(Math.min(PAYOUTS_PAGE_SIZE, n));
    const all = [...first.payouts];
    for (let page = 2; page <= first.info.pageCount; page++) all.push(...(await list(`?page=${page}`)).payouts);
    const mine = all.filter((p) => p.transferId?.startsWith("tr_paging_"));
    // Posted one after another: the last posted first.
    expect(mine.map((p) => p.transferId)).toEqual(Array.from({ length: 30 }, (_, i) => `tr_paging_${String(29 - i).padStart(2, "0")}`));
    for (const p of mine) {
      const i = Number(p.transferId?.slice(-2));
      expect(p.amount).toBe(9_000 + i);
      expect(p.feeMinor).toBe(i % 3 === 0 ? null : 500 + i);
      expect(p.orderNumber).toBe(orders[i].number);
    }
    expect((await list("?page=999")).info.page).toBe(first.info.pageCount);
    for (const bad of BAD_PAGES) {
      const answer = await callRoute(payoutsLoader, getRequest(`/lab/payouts?page=${bad}`, await as(GRANITE)));
      expect(answer.status, bad).toBe(400);
    }
  });
});
