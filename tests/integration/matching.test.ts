// Matching on the real PostgreSQL with the demo labs, and who may read a request's matches.
import { eq } from "drizzle-orm";
import { beforeAll, describe, expect, it } from "vitest";
import { db, schema } from "~/db/client.server";
import { seedDemo } from "~/demo/seed.server";
import type { LabMatch } from "~/domain/matching";
import { matchLabsForRequest, requestsMatchingLab } from "~/models/labs/matching.server";
import { loader as matchesApi } from "~/routes/api/request-matches";
import { action as signInAction } from "~/routes/public/sign-in";
import { callRoute, cookieFrom, formRequest, getRequest } from "./route-call";

let requestId: string;
async function as(email: string) {
  return cookieFrom(await callRoute(signInAction, formRequest("/sign-in", { email, password: "diffractory-demo" })))!;
}

beforeAll(async () => {
  await seedDemo();
  const [r] = await db.select().from(schema.requests).where(eq(schema.requests.title, "Phase check of LFP cathode batch HC-2611"));
  requestId = r.id;
});

describe("the demo's iron phosphate request", () => {
  it("fits Granite Ridge with a fluorescence warning on its Cu instrument naming the Co one; Lakeside does not fit", async () => {
    const matches = await matchLabsForRequest(requestId);
    const granite = matches.find((m) => m.labName === "Granite Ridge Characterisation")!;
    const lakeside = matches.find((m) => m.labName === "Lakeside Institute X-ray Core")!;
    expect(matches.map((m) => m.labName)).not.toContain("Meridian Analytical");
    expect(granite.fits).toBe(true);
    expect(granite.instrumentName).toBe("Reflection diffractometer B (Co)");
    const cu = granite.instruments.find((i) => i.source === "Cu Kα")!;
    // Fe K edge 7.112 keV lies just below Cu Kα1 8.048 keV (docs/reference-values.md#k-absorption-edges, lib xraylib)
    expect(cu.warnings.join(" ")).toMatch(/Fluorescence: Fe/);
    expect(cu.warnings.join(" ")).toMatch(/Reflection diffractometer B \(Co\)/);
    expect(lakeside.fits).toBe(false);
    expect(lakeside.reasons.find((r) => !r.ok)!.text).toMatch(/Technique is powder transmission/);
    expect(granite.estimatedPriceMinor).toBe(18000 + 1500);
  });

  it("appears in Granite Ridge's inbox and not in Lakeside's", async () => {
    const [granite] = await db.select().from(schema.organisations).where(eq(schema.organisations.slug, "granite-ridge-characterisation"));
    const [lakeside] = await db.select().from(schema.organisations).where(eq(schema.organisations.slug, "lakeside-institute-x-ray-core"));
    expect((await requestsMatchingLab(granite.id)).map((r) => r.requestId)).toContain(requestId);
    expect((await requestsMatchingLab(lakeside.id)).map((r) => r.requestId)).not.toContain(requestId);
  });
});

describe("GET /api/requests/:id/matches", () => {
  it("answers the requesting organisation", async () => {
    const a = await callRoute(matchesApi, getRequest(`/api/requests/${requestId}/matches`, await as("owner@halvorsen.example")), { id: requestId });
    expect(a.status).toBe(200);
    expect((a.body as { matches: LabMatch[] }).matches.find((m) => m.fits)!.labName).toBe("Granite Ridge Characterisation");
  });
  it("looks like a missing request to another organisation (404), refuses labs (403) and signed-out callers (401)", async () => {
    expect((await callRoute(matchesApi, getRequest(`/api/requests/${requestId}/matches`, await as("owner@pinecrest.example")), { id: requestId })).status).toBe(
      404,
    );
    expect(
      (await callRoute(matchesApi, getRequest(`/api/requests/${requestId}/matches`, await as("lab@graniteridge.example")), { id: requestId })).status,
    ).toBe(403);
    expect((await callRoute(matchesApi, getRequest(`/api/requests/${requestId}/matches`), { id: requestId })).status).toBe(401);
    expect(
      (await callRoute(matchesApi, getRequest(`/api/requests/not-a-uuid/matches`, await as("owner@halvorsen.example")), { id: "not-a-uuid" })).status,
    ).toBe(404);
  });
});
