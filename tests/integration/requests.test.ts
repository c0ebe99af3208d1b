// The new-request wizard on the real PostgreSQL and the S3 fake: drafts per step, field errors that change
// nothing, the safety data sheet rule at publishing, and other organisations' requests answering 404.
import { createHash } from "node:crypto";
import { count, eq } from "drizzle-orm";
import { beforeAll, describe, expect, it } from "vitest";
import { db, schema } from "~/db/client.server";
import { seedDemo } from "~/demo/seed.server";
import { REQUESTS_PAGE_SIZE, sdsPrefix } from "~/models/requests/requests.server";
import { loader as requestPage } from "~/routes/client/request";
import { action as hazardsAction, loader as hazardsLoader } from "~/routes/client/request-hazards";
import { action as labsAction } from "~/routes/client/request-labs";
import { action as measurementAction } from "~/routes/client/request-measurement";
import { action as reviewAction } from "~/routes/client/request-review";
import { action as samplesAction } from "~/routes/client/request-samples";
import { action as sdsUploadAction } from "~/routes/client/request-sds-upload";
import { loader as requestsList } from "~/routes/client/requests";
import { action as signInAction } from "~/routes/public/sign-in";
import { putObject } from "~/models/files/storage.server";
import { SAMPLE_FIELDS } from "./form-fixtures";
import { callRoute, cookieFrom, formRequest, getRequest, type RouteAnswer } from "./route-call";

const cookies: Record<string, string> = {};
async function as(email: string) {
  cookies[email] ??= cookieFrom(await callRoute(signInAction, formRequest("/sign-in", { email, password: "diffractory-demo" })))!;
  return cookies[email];
}
const CLIENT = "owner@halvorsen.example";
const MEMBER = "member@halvorsen.example";
const OTHER = "owner@pinecrest.example";

const SAMPLE = SAMPLE_FIELDS;
const NEW = { title: "Cathode batch 12", technique: "powder_reflection", ...SAMPLE };

function fieldErrors(answer: RouteAnswer) {
  return ((answer.body as { result: { error: Record<string, string[]> } }).result.error ?? {}) as Record<string, string[]>;
}
async function requestCount() {
  const [{ n }] = await db.select({ n: count() }).from(schema.requests);
  return n;
}
async function load(id: string) {
  const [row] = await db.select().from(schema.requests).where(eq(schema.requests.id, id));
  const samples = await db.select().from(schema.samples).where(eq(schema.samples.requestId, id));
  return { row, samples };
}

let requestId: string;
let sampleId: string;
const path = (step: string) => `/client/requests/${requestId}/edit/${step}`;
const hazards = (extra: Record<string, string> = {}) => ({ "samples[0].id": sampleId, "samples[0].afterMeasurement": "return", ...extra });

beforeAll(async () => {
  await seedDemo();
});

describe("the new-request wizard", () => {
  it("refuses a bad formula with a field error and creates nothing", async () => {
    const before = await requestCount();
    const answer = await callRoute(samplesAction, formRequest("/client/requests/new", { ...NEW, "samples[0].formula": "LiXxPO4" }, await as(CLIENT)));
    expect(answer.status).toBe(400);
    expect(fieldErrors(answer)["samples[0].formula"].join(" ")).toMatch(/“Xx” .* is not an element symbol/);
    expect(await requestCount()).toBe(before);
  });

  it("refuses a cell that does not fit its crystal system, and a centering the system cannot have", async () => {
    const before = await requestCount();
    const answer = await callRoute(
      samplesAction,
      formRequest("/client/requests/new", { ...NEW, "samples[0].crystalSystem": "cubic", "samples[0].centering": "C" }, await as(CLIENT)),
    );
    expect(answer.status).toBe(400);
    expect(fieldErrors(answer)["samples[0].cellA"].join(" ")).toMatch(/A cubic cell needs a = b = c/);
    expect(fieldErrors(answer)["samples[0].centering"].join(" ")).toMatch(/cannot have centering C/);
    expect(await requestCount()).toBe(before);
  });

  it("saves the samples step as a draft and goes on to hazards", async () => {
    const answer = await callRoute(samplesAction, formRequest("/client/requests/new", NEW, await as(MEMBER)));
    expect(answer.status).toBe(302);
    requestId = answer.headers.get("location")!.split("/")[3];
    expect(answer.headers.get("location")).toBe(path("hazards"));
    const { row, samples } = await load(requestId);
    expect(row).toMatchObject({ state: "draft", draftStep: "hazards", title: "Cathode batch 12" });
    expect(samples).toHaveLength(1);
    expect(samples[0]).toMatchObject({ formula: "LiFePO4", elements: ["Li", "Fe", "P", "O"], crystalSystem: "orthorhombic", cellA: 10.33 });
    sampleId = samples[0].id;
  });

  it("refuses H999 and a radioactive sample without its activity, changing nothing", async () => {
    const cookie = await as(CLIENT);
    const bad = await callRoute(hazardsAction, formRequest(path("hazards"), hazards({ "samples[0].hStatements": "H302, H999" }), cookie), { id: requestId });
    expect(bad.status).toBe(400);
    expect(fieldErrors(bad)["samples[0].hStatements"].join(" ")).toMatch(/H999 is not a hazard statement code/);
    const noBq = await callRoute(
      hazardsAction,
      formRequest(
        path("hazards"),
        hazards({ "samples[0].special.radioactive.declared": "on", "samples[0].special.radioactive.details": "U-238 traces" }),
        cookie,
      ),
      { id: requestId },
    );
    expect(noBq.status).toBe(400);
    expect(fieldErrors(noBq)["samples[0].special.radioactive.activityBq"].join(" ")).toMatch(/activity in becquerels/);
    const negative = await callRoute(
      hazardsAction,
      formRequest(
        path("hazards"),
        hazards({
          "samples[0].special.radioactive.declared": "on",
          "samples[0].special.radioactive.details": "U-238",
          "samples[0].special.radioactive.activityBq": "-5",
        }),
        cookie,
      ),
      { id: requestId },
    );
    expect(fieldErrors(negative)["samples[0].special.radioactive.activityBq"].join(" ")).toMatch(/positive/);
    const { row, samples } = await load(requestId);
    expect(row.draftStep).toBe("hazards");
    expect(samples[0]).toMatchObject({ hStatements: [], ghsPictograms: [], specialHazards: [] });
  });

  it("saves a hazard declaration with combined H-statements and a radioactive activity", async () => {
    const answer = await callRoute(
      hazardsAction,
      formRequest(
        path("hazards"),
        hazards({
          "samples[0].ghs": "GHS07",
          "samples[0].hStatements": "H302+H312, h315",
          "samples[0].special.nanomaterial.declared": "on",
          "samples[0].special.nanomaterial.details": "Primary particles about 50 nm",
          "samples[0].handlingNotes": "Open in a fume hood.",
        }),
        await as(CLIENT),
      ),
      { id: requestId },
    );
    expect(answer.status).toBe(302);
    expect(answer.headers.get("location")).toBe(path("measurement"));
    const { row, samples } = await load(requestId);
    expect(row.draftStep).toBe("measurement");
    expect(samples[0]).toMatchObject({
      ghsPictograms: ["GHS07"],
      hStatements: ["H302+H312", "H315"],
      specialHazards: [{ category: "nanomaterial", details: "Primary particles about 50 nm", activityBq: null }],
      handlingNotes: "Open in a fume hood.",
    });
  });

  it("saves the measurement step (budget in minor units) and the labs step", async () => {
    const cookie = await as(CLIENT);
    const bad = await callRoute(
      measurementAction,
      formRequest(
        path("measurement"),
        {
          rangeKind: "two_theta",
          rangeMin: "90",
          rangeMax: "10",
          preferredSource: "Xx",
          atmosphere: "air",
          quality: "standard",
          deadline: "2020-01-01",
          currency: "EUR",
        },
        cookie,
      ),
      { id: requestId },
    );
    expect(bad.status).toBe(400);
    expect(Object.keys(fieldErrors(bad))).toEqual(expect.arrayContaining(["preferredSource", "deadline"]));
    const answer = await callRoute(
      measurementAction,
      formRequest(
        path("measurement"),
        {
          rangeKind: "two_theta",
          rangeMin: "10",
          rangeMax: "120",
          preferredSource: "any",
          temperaturePoints: "573, 298",
          atmosphere: "air",
          quality: "standard",
          deadline: "2099-06-30",
          budget: "1250.50",
          currency: "EUR",
        },
        cookie,
      ),
      { id: requestId },
    );
    expect(answer.status).toBe(302);
    let { row } = await load(requestId);
    expect(row).toMatchObject({ draftStep: "labs", rangeMin: 10, rangeMax: 120, temperaturePointsK: [298, 573], budgetMinor: 125050, deadline: "2099-06-30" });
    const labs = await callRoute(labsAction, formRequest(path("labs"), { visibility: "open" }, cookie), { id: requestId });
    expect(labs.status).toBe(302);
    ({ row } = await load(requestId));
    expect(row).toMatchObject({ draftStep: "review", visibility: "open" });
  });

  it("refuses to invite a lab that is not approved", async () => {
    const [meridian] = await db.select().from(schema.organisations).where(eq(schema.organisations.name, "Meridian Analytical"));
    const answer = await callRoute(labsAction, formRequest(path("labs"), { visibility: "invited", "invitedLabIds[0]": meridian.id }, await as(CLIENT)), {
      id: requestId,
    });
    expect(answer.status).toBe(400);
    expect(fieldErrors(answer).invitedLabIds.join(" ")).toMatch(/Only approved labs/);
    expect((await load(requestId)).row.visibility).toBe("open");
  });

  it("refuses to publish a declared hazard without a safety data sheet", async () => {
    const answer = await callRoute(reviewAction, formRequest(path("review"), {}, await as(CLIENT)), { id: requestId });
    expect(answer.status).toBe(400);
    expect((answer.body as { errors: string[] }).errors.join(" ")).toMatch(/LFP-12 declares hazards: upload its safety data sheet/);
    expect((await load(requestId)).row.state).toBe("draft");
  });

  it("hands out upload targets for PDFs only, under the request's own folder", async () => {
    const cookie = await as(CLIENT);
    const target = (fields: Record<string, string>, who = cookie) =>
      callRoute(sdsUploadAction, formRequest(`/client/requests/${requestId}/sds-upload`, { intent: "upload-target", purpose: "sds", ...fields }, who), {
        id: requestId,
      });
    const ok = await target({ fileName: "sds.pdf", size: "2048", type: "application/pdf" });
    expect(ok.status).toBe(200);
    const { row } = await load(requestId);
    expect((ok.body as { target: { storageKey: string } }).target.storageKey.startsWith(`${sdsPrefix(row)}/`)).toBe(true);
    const image = await target({ fileName: "sds.png", size: "2048", type: "image/png" });
    expect(image.status).toBe(400);
    expect((image.body as { error: string }).error).toMatch(/Upload a PDF/);
    expect((await target({ fileName: "sds.pdf", size: "2048", type: "application/pdf" }, await as(OTHER))).status).toBe(404);
  });

  it("refuses a stored file whose checksum differs, or one outside the request's own folder", async () => {
    const cookie = await as(CLIENT);
    const { row } = await load(requestId);
    const key = `${sdsPrefix(row)}/tampered/sds.pdf`;
    await putObject(key, "%PDF-1.4\n% tampered\n", "application/pdf");
    const answer = await callRoute(
      hazardsAction,
      formRequest(
        path("hazards"),
        hazards({ "samples[0].ghs": "GHS07", "samples[0].sdsStorageKey": key, "samples[0].sdsFileName": "sds.pdf", "samples[0].sdsSha256": "0".repeat(64) }),
        cookie,
      ),
      { id: requestId },
    );
    expect(answer.status).toBe(400);
    expect(fieldErrors(answer)["samples[0].sds"].join(" ")).toMatch(/checksum does not match/);
    const foreign = await callRoute(
      hazardsAction,
      formRequest(
        path("hazards"),
        hazards({ "samples[0].ghs": "GHS07", "samples[0].sdsStorageKey": "requests/someone-else/sds.pdf", "samples[0].sdsFileName": "sds.pdf" }),
        cookie,
      ),
      { id: requestId },
    );
    expect(fieldErrors(foreign)["samples[0].sds"]).toBeTruthy();
    expect((await load(requestId)).samples[0].sdsStorageKey).toBeNull();
  });

  it("publishes once the safety data sheet is uploaded and verified", async () => {
    const cookie = await as(CLIENT);
    const { row } = await load(requestId);
    const body = "%PDF-1.4\n1 0 obj << >> endobj\n%%EOF\n";
    const key = `${sdsPrefix(row)}/upload-1/lfp-12-sds.pdf`;
    await putObject(key, body, "application/pdf");
    const sha256 = createHash("sha256").update(body).digest("hex");
    const saved = await callRoute(
      hazardsAction,
      formRequest(
        path("hazards"),
        hazards({
          "samples[0].ghs": "GHS07",
          "samples[0].hStatements": "H302",
          "samples[0].sdsStorageKey": key,
          "samples[0].sdsFileName": "lfp-12-sds.pdf",
          "samples[0].sdsSha256": sha256,
        }),
        cookie,
      ),
      { id: requestId },
    );
    expect(saved.status).toBe(302);
    expect((await load(requestId)).samples[0]).toMatchObject({ sdsStorageKey: key, sdsFileName: "lfp-12-sds.pdf", sdsSizeBytes: body.length });
    const published = await callRoute(reviewAction, formRequest(path("review"), {}, cookie), { id: requestId });
    expect(published.status).toBe(302);
    expect(published.headers.get("location")).toBe(`/client/requests/${requestId}`);
    const after = (await load(requestId)).row;
    expect(after.state).toBe("open");
    expect(after.openedAt).toBeInstanceOf(Date);
    // An open request is edited as a new revision (tests/integration/request-life.test.ts); once a quote is
    // accepted it is no longer edited through the wizard.
    await db.update(schema.requests).set({ state: "awarded" }).where(eq(schema.requests.id, requestId));
    const late = await callRoute(hazardsAction, formRequest(path("hazards"), hazards(), cookie), { id: requestId });
    await db.update(schema.requests).set({ state: "open" }).where(eq(schema.requests.id, requestId));
    expect(late.status).toBe(400);
  });

  it("lists the organisation's requests by state", async () => {
    const answer = await callRoute(requestsList, getRequest("/client/requests", await as(CLIENT)));
    const titles = (answer.body as { requests: { title: string; state: string }[] }).requests.map((r) => `${r.title}:${r.state}`);
    expect(titles).toContain("Cathode batch 12:open");
    const other = await callRoute(requestsList, getRequest("/client/requests", await as(OTHER)));
    expect((other.body as { requests: unknown[] }).requests).toEqual([]);
  });

  it("answers 404 to another organisation, for loaders and actions alike", async () => {
    const cookie = await as(OTHER);
    expect((await callRoute(requestPage, getRequest(`/client/requests/${requestId}`, cookie), { id: requestId })).status).toBe(404);
    expect((await callRoute(hazardsLoader, getRequest(path("hazards"), cookie), { id: requestId })).status).toBe(404);
    expect((await callRoute(hazardsAction, formRequest(path("hazards"), hazards({ "samples[0].ghs": "GHS01" }), cookie), { id: requestId })).status).toBe(404);
    expect((await callRoute(reviewAction, formRequest(path("review"), {}, cookie), { id: requestId })).status).toBe(404);
    expect((await callRoute(samplesAction, formRequest(path("samples"), NEW, cookie), { id: requestId })).status).toBe(404);
    expect((await callRoute(requestPage, getRequest("/client/requests/not-a-uuid", cookie), { id: "not-a-uuid" })).status).toBe(404);
    expect((await load(requestId)).samples[0].ghsPictograms).toEqual(["GHS07"]);
  });
});

describe("the requests list", () => {
  type Listed = {
    requests: { id: string; title: string; state: string; samples: number; quotes: number }[];
    page: number;
    pageCount: number;
    total: number;
    countByState: Record<string, number>;
  };

  it("counts each request's own samples and quotes", async () => {
    const list = (await callRoute(requestsList, getRequest("/client/requests", await as(CLIENT)))).body as Listed;
    for (const r of list.requests) {
      const [{ n }] = await db.select({ n: count() }).from(schema.samples).where(eq(schema.samples.requestId, r.id));
      expect(r.samples, r.title).toBe(n);
    }
    expect(list.requests.find((r) => r.title === "Cathode batch 12")?.samples).toBe(1);
  });

  it("pages REQUESTS_PAGE_SIZE at a time in state order, newest first within a state, with the counts per state", async () => {
    const cookie = await as(CLIENT);
    const [{ organisationId }] = await db
      .select({ organisationId: schema.requests.organisationId })
      .from(schema.requests)
      .where(eq(schema.requests.id, requestId));
    await db
      .insert(schema.requests)
      .values(Array.from({ length: 60 }, (_, i) => ({ organisationId, title: `Paging draft ${i}`, createdAt: new Date(Date.UTC(2026, 0, 1, 0, i)) })));
    const first = (await callRoute(requestsList, getRequest("/client/requests", cookie))).body as Listed;
    expect(first.requests).toHaveLength(REQUESTS_PAGE_SIZE);
    expect(first.total).toBeGreaterThan(60);
    expect(first.pageCount).toBe(Math.ceil(first.total / REQUESTS_PAGE_SIZE));
    expect(first.countByState.draft).toBeGreaterThanOrEqual(60);
    expect(first.requests[0].title).toBe("Paging draft 59");
    const states = ["draft", "open", "awarded", "expired", "withdrawn"];
    const all: Listed["requests"] = [];
    for (let page = 1; page <= first.pageCount; page++)
      all.push(...((await callRoute(requestsList, getRequest(`/client/requests?page=${page}`, cookie))).body as Listed).requests);
    expect(all.map((r) => states.indexOf(r.state))).toEqual([...all.map((r) => states.indexOf(r.state))].sort((a, b) => a - b));
    expect(new Set(all.map((r) => r.id)).size).toBe(first.total);
    // A page past the end shows the last one; a page that is not a whole number is refused.
    expect(((await callRoute(requestsList, getRequest("/client/requests?page=999", cookie))).body as Listed).page).toBe(first.pageCount);
    for (const bad of ["0", "-1", "1.5", "abc", "1e3"]) {
      expect((await callRoute(requestsList, getRequest(`/client/requests?page=${bad}`, cookie))).status, bad).toBe(400);
    }
  });
});
