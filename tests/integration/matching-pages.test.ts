// The paged matching screens: the client's request page shows how many labs fit and one page of them, the lab's
// inbox one page of its requests, both read through classes of equal instruments and needs in SQL. The pages must
// hold exactly what matching every lab / every request with the rules of app/domain/matching.ts gives, in the
// same order (docs/performance.md#pages-matching).
import { and, eq } from "drizzle-orm";
import { beforeAll, describe, expect, it } from "vitest";
import { db, schema } from "~/db/client.server";
import { seedDemo } from "~/demo/seed.server";
import type { LabMatch } from "~/domain/matching";
import { fittingLabsPage, labInboxPage, matchLabsForRequest, requestsMatchingLab, requestsWithClients } from "~/models/labs/matching.server";
import { quoteStatesOfLab } from "~/models/requests/quotes.server";
import { loader as clientRequestLoader } from "~/routes/client/request";
import { loader as inboxLoader } from "~/routes/lab/inbox";
import { action as signInAction } from "~/routes/public/sign-in";
import { sortAndPage, type PageInfo } from "~/utils/table";
import { callRoute, cookieFrom, formRequest, getRequest } from "./route-call";

const cookies: Record<string, string> = {};
async function as(email: string) {
  cookies[email] ??= cookieFrom(await callRoute(signInAction, formRequest("/sign-in", { email, password: "diffractory-demo" })))!;
  return cookies[email];
}
const CLIENT = "owner@halvorsen.example";
const GRANITE = "lab@graniteridge.example";

const orgId = async (slug: string) => (await db.select().from(schema.organisations).where(eq(schema.organisations.slug, slug)))[0].id;

let lfpId: string;
let graniteId: string;
let lakesideId: string;

/** A copy of a request with its samples, changed as given (opened a minute earlier per `n`). */
async function copyRequest(id: string, n: number, change: Partial<typeof schema.requests.$inferInsert> = {}) {
  const [r] = await db.select().from(schema.requests).where(eq(schema.requests.id, id));
  const { id: _, ...rest } = r;
  const [copy] = await db
    .insert(schema.requests)
    .values({ ...rest, title: `${r.title} (copy ${n})`, openedAt: new Date(Date.now() - n * 60_000), ...change })
    .returning();
  for (const s of await db.select().from(schema.samples).where(eq(schema.samples.requestId, id))) {
    const { id: _s, ...sample } = s;
    await db.insert(schema.samples).values({ ...sample, requestId: copy.id });
  }
  return copy.id;
}

/** An approved lab with copies of Granite Ridge's instruments, stages, hazard acceptance and prices. */
async function copyGranite(n: number) {
  const [org] = await db
    .insert(schema.organisations)
    .values({ kind: "lab", name: `Copy Lab ${String(n).padStart(2, "0")}`, slug: `copy-lab-${n}`, city: "Testville", country: "Nowhere" })
    .returning();
  const [lab] = await db.select().from(schema.labs).where(eq(schema.labs.organisationId, graniteId));
  await db.insert(schema.labs).values({ ...lab, organisationId: org.id });
  for (const i of await db.select().from(schema.instruments).where(eq(schema.instruments.labId, graniteId))) {
    const { id: _, ...instrument } = i;
    const [copy] = await db
      .insert(schema.instruments)
      .values({ ...instrument, labId: org.id })
      .returning();
    for (const s of await db.select().from(schema.sampleStages).where(eq(schema.sampleStages.instrumentId, i.id))) {
      const { id: _s, ...stage } = s;
      await db.insert(schema.sampleStages).values({ ...stage, instrumentId: copy.id });
    }
  }
  const [acceptance] = await db.select().from(schema.hazardAcceptance).where(eq(schema.hazardAcceptance.labId, graniteId));
  if (acceptance) await db.insert(schema.hazardAcceptance).values({ ...acceptance, labId: org.id });
  for (const p of await db.select().from(schema.priceLists).where(eq(schema.priceLists.labId, graniteId))) {
    const { id: _p, ...prices } = p as typeof p & { id?: string };
    await db.insert(schema.priceLists).values({ ...prices, labId: org.id });
  }
  return org.id;
}

beforeAll(async () => {
  await seedDemo();
  const [r] = await db.select().from(schema.requests).where(eq(schema.requests.title, "Phase check of LFP cathode batch HC-2611"));
  lfpId = r.id;
  graniteId = await orgId("granite-ridge-characterisation");
  lakesideId = await orgId("lakeside-institute-x-ray-core");
  // Needs the rules read in different ways: a hot stage in nitrogen, a preferred source, declared hazards, a
  // request only for invited labs (Lakeside, which does not fit it), and one that fits no lab at all.
  await copyRequest(lfpId, 1, { temperaturePointsK: [298, 500], atmosphere: "nitrogen" });
  await copyRequest(lfpId, 2, { preferredSource: "Co" });
  await copyRequest(lfpId, 3, { preferredSource: "Cu", technique: "powder_transmission" });
  const invited = await copyRequest(lfpId, 4, { visibility: "invited" });
  await db.insert(schema.requestInvitations).values({ requestId: invited, labId: lakesideId });
  await copyRequest(lfpId, 5, { temperaturePointsK: [2500], atmosphere: "vacuum" });
  const hazardous = await copyRequest(lfpId, 6);
  await db
    .update(schema.samples)
    .set({ ghsPictograms: ["GHS07"] })
    .where(eq(schema.samples.requestId, hazardous));
});

/** The inbox as the route built it before paging in SQL: every matching request, sorted and paged in memory. */
async function wholeInbox(labId: string) {
  const found = await requestsMatchingLab(labId);
  const ids = found.map((f) => f.requestId);
  const rows = await requestsWithClients(ids);
  const quoted = new Set((await quoteStatesOfLab(labId, ids)).filter((q) => q.state === "sent").map((q) => q.requestId));
  const byId = new Map(rows.map((r) => [r.id, r]));
  return found.flatMap((f) => {
    const row = byId.get(f.requestId);
    if (!row) return [];
    const m = f.match;
    return [
      {
        ...row,
        invited: f.invited,
        fits: m.fits,
        estimate: m.estimatedPriceMinor,
        currency: m.currency,
        warnings: m.warnings.length,
        quoted: quoted.has(row.id),
      },
    ];
  });
}

describe("the same labs and requests as matching each one", () => {
  it("pages exactly the fitting labs of every open or closed request, in the matching order", async () => {
    const requests = await db.select({ id: schema.requests.id, state: schema.requests.state }).from(schema.requests);
    for (const r of requests.filter((x) => x.state !== "draft")) {
      const fitting = (await matchLabsForRequest(r.id)).filter((m) => m.fits);
      const paged = await fittingLabsPage(r.id, { page: 1, pageSize: 1000 });
      expect(paged.info.total).toBe(fitting.length);
      expect(paged.matches).toEqual(fitting);
    }
  });

  it("pages exactly the requests of every lab's inbox, by every column and direction", async () => {
    const labs = await db.select({ id: schema.labs.organisationId }).from(schema.labs);
    for (const { id } of labs) {
      const whole = await wholeInbox(id);
      for (const sort of ["opened", "deadline", "title", "client", "estimate"] as const) {
        for (const dir of ["asc", "desc"] as const) {
          const q = { sort, dir, page: 1, pageSize: 1000 };
          const want = sortAndPage(whole, q, {
            title: (i) => i.title,
            client: (i) => i.client,
            estimate: (i) => (i.estimate === null ? null : `${i.currency}${String(i.estimate).padStart(12, "0")}`),
            deadline: (i) => i.deadline,
            opened: (i) => i.openedAt,
          });
          const got = await labInboxPage(id, q);
          expect(got.info.total).toBe(want.total);
          expect(got.items).toEqual(want.rows);
        }
      }
    }
  });

  it("puts a request for invited labs in the invited lab's inbox even where it does not fit, and in no other lab's", async () => {
    const lakeside = await labInboxPage(lakesideId, { sort: "opened", dir: "desc", page: 1, pageSize: 50 });
    const invited = lakeside.items.find((i) => i.title.endsWith("(copy 4)"));
    expect(invited).toMatchObject({ invited: true, fits: false });
    const granite = await labInboxPage(graniteId, { sort: "opened", dir: "desc", page: 1, pageSize: 50 });
    expect(granite.items.map((i) => i.title)).not.toContain(invited!.title);
  });
});

describe("paging the client's matching labs", () => {
  type Page = { matches: LabMatch[]; matchInfo: PageInfo };
  const view = async (query = "") => callRoute(clientRequestLoader, getRequest(`/client/requests/${lfpId}${query}`, await as(CLIENT)), { id: lfpId });

  beforeAll(async () => {
    for (let n = 1; n <= 12; n++) await copyGranite(n);
  });

  it("shows the first ten fitting labs and how many fit, the next page the rest, a page past the end the last page", async () => {
    const fitting = (await matchLabsForRequest(lfpId)).filter((m) => m.fits);
    expect(fitting.length).toBeGreaterThanOrEqual(13); // Granite Ridge and its twelve copies
    const first = (await view()).body as Page;
    expect(first.matchInfo.total).toBe(fitting.length);
    expect(first.matches.map((m) => m.labName)).toEqual(fitting.slice(0, 10).map((m) => m.labName));
    const second = (await view("?page=2")).body as Page;
    expect(second.matches.map((m) => m.labName)).toEqual(fitting.slice(10, 20).map((m) => m.labName));
    const past = (await view("?page=99")).body as Page;
    expect(past.matchInfo.page).toBe(Math.ceil(fitting.length / 10));
    expect(past.matches.map((m) => m.labName)).toEqual(fitting.slice((past.matchInfo.page - 1) * 10).map((m) => m.labName));
    // Each lab's match is the whole one: instrument, fluorescence warning and estimate as matching gives them.
    expect([...first.matches, ...second.matches]).toEqual(fitting.slice(0, 20));
  });

  it("answers a bad page number with a sentence (400)", async () => {
    for (const bad of ["?page=0", "?page=abc", "?page=-1"]) {
      const answer = await view(bad);
      expect(answer.status).toBe(400);
      expect((answer.body as { message: string }).message).toBe("The page number must be a whole number from 1.");
    }
  });
});

describe("paging the lab's inbox", () => {
  type Inbox = { items: { title: string }[]; info: PageInfo };
  const view = async (query = "") => callRoute(inboxLoader, getRequest(`/lab/inbox${query}`, await as(GRANITE)));

  beforeAll(async () => {
    for (let n = 10; n < 65; n++) await copyRequest(lfpId, n);
  });

  it("shows 50 requests and the total, the next page the rest, a page past the end the last page", async () => {
    const newestFirst = { sort: "opened" as const, dir: "desc" as const, page: 1, pageSize: 1000 };
    const whole = sortAndPage(await wholeInbox(graniteId), newestFirst, { opened: (i) => i.openedAt }).rows;
    expect(whole.length).toBeGreaterThan(55);
    const first = (await view()).body as Inbox;
    expect(first.info.total).toBe(whole.length);
    expect(first.items.map((i) => i.title)).toEqual(whole.slice(0, 50).map((i) => i.title));
    const second = (await view("?page=2")).body as Inbox;
    expect(second.items.map((i) => i.title)).toEqual(whole.slice(50, 100).map((i) => i.title));
    const past = (await view("?page=40")).body as Inbox;
    expect(past.info.page).toBe(Math.ceil(whole.length / 50));
    expect(past.items.map((i) => i.title)).toEqual(whole.slice((past.info.page - 1) * 50).map((i) => i.title));
    const byTitle = (await view("?sort=title&dir=asc&page=2")).body as Inbox;
    expect(byTitle.info.page).toBe(2);
  });

  it("answers a bad page number with a sentence (400)", async () => {
    const answer = await view("?page=0");
    expect(answer.status).toBe(400);
    expect((answer.body as { message: string }).message).toBe("The page number must be a whole number from 1.");
  });

  it("leaves requests the lab has quoted on marked", async () => {
    const quoted = await db
      .select({ requestId: schema.quotes.requestId })
      .from(schema.quotes)
      .where(and(eq(schema.quotes.labId, graniteId), eq(schema.quotes.state, "sent")));
    const all = await labInboxPage(graniteId, { sort: "opened", dir: "desc", page: 1, pageSize: 1000 });
    for (const item of all.items) expect(item.quoted).toBe(quoted.some((q) => q.requestId === item.id));
  });
});
