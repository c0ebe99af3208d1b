// Scan checks: a stored scan is checked once and stored once, retries are safe, the job queue runs it,
// and only the order's client organisation and its lab can read the result.
import { createHash } from "node:crypto";
import { and, eq } from "drizzle-orm";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { db, schema } from "~/db/client.server";
import { seedDemo } from "~/demo/seed.server";
import { parseScan } from "~/diffraction";
import { formatScanAsXy, simulatePattern } from "~/diffraction/simulate";
import { LITHIUM_IRON_PHOSPHATE, SILICON } from "~/diffraction/structures";
import { getBoss, stopBoss } from "~/jobs/queues.server";
import { startWorkers } from "~/jobs/worker.server";
import { STORED_PROFILE_POINTS } from "~/domain/lattice-check";
import { samplesWithoutCompletedCheck } from "~/models/checks/queries.server";
import { enqueueScanCheck, runScanCheck } from "~/models/checks/scan-check.server";
import type { StoredCheckResult } from "~/domain/check-result";
import { loader as checkApi } from "~/routes/api/check";
import { loader as peaksCsv } from "~/routes/check-peaks-csv";
import { loader as resultJson } from "~/routes/check-result-json";
import { loader as checkScreen } from "~/routes/check";
import { putObject } from "~/models/files/storage.server";
import { acceptedQuoteAndOrder } from "./order-fixtures";
import { callRoute, getRequest, sessionCookieFor } from "./route-call";

const CU = { kind: "anode", anode: "Cu", monochromation: "k_alpha_doublet" } as const;
// Certified lattice parameter of silicon, NIST SRM 640c: a = 5.4311946 ± 0.0000092 Å (docs/reference-values.md#certified-lattice-parameters, certificate).
const SI_CERTIFIED_A = 5.4311946;

const cookies: Record<string, string> = {};
async function as(email: string) {
  // The admin's sign-in takes a second-factor code too.
  cookies[email] ??= await sessionCookieFor(email);
  return cookies[email];
}

let orderId = "";
let siSampleId = "";
let otherSampleId = "";
let counter = 0;

async function storeFile(text: string, sampleId: string | null, name = `scan-${++counter}.xy`) {
  const bytes = new TextEncoder().encode(text);
  const storageKey = `orders/${orderId}/test/${counter}/${name}`;
  await putObject(storageKey, bytes, "text/plain");
  const [file] = await db
    .insert(schema.orderFiles)
    .values({
      orderId,
      sampleId,
      name,
      version: 1,
      sizeBytes: bytes.byteLength,
      contentType: "text/plain",
      sha256: createHash("sha256").update(bytes).digest("hex"),
      storageKey,
      state: "stored",
      storedAt: new Date(),
    })
    .returning();
  return file.id;
}

const checksOf = (fileId: string) => db.select().from(schema.scanChecks).where(eq(schema.scanChecks.fileId, fileId));

function siliconScan(points?: number) {
  const span = 120 - 20;
  return formatScanAsXy(
    simulatePattern({
      structure: SILICON,
      radiation: CU,
      twoThetaMin: 20,
      twoThetaMax: 120,
      step: points ? span / (points - 1) : 0.02,
      zeroShift: -0.02,
      background: { constant: 80 },
      noise: { seed: 640 },
    }),
  );
}

beforeAll(async () => {
  await seedDemo();
  const one = async <T>(rows: Promise<T[]>) => (await rows)[0];
  const granite = await one(db.select().from(schema.organisations).where(eq(schema.organisations.slug, "granite-ridge-characterisation")));
  const halvorsen = await one(db.select().from(schema.organisations).where(eq(schema.organisations.slug, "halvorsen-cathode-works")));
  const owner = await one(db.select().from(schema.users).where(eq(schema.users.email, "owner@halvorsen.example")));
  const cuInstrument = await one(
    db
      .select()
      .from(schema.instruments)
      .where(and(eq(schema.instruments.labId, granite.id), eq(schema.instruments.anode, "Cu"))),
  );
  const [request] = await db
    .insert(schema.requests)
    .values({ organisationId: halvorsen.id, createdBy: owner.id, title: "Scan check test", state: "awarded", rangeMin: 10, rangeMax: 120 })
    .returning();
  const [si] = await db
    .insert(schema.samples)
    .values({
      requestId: request.id,
      position: 0,
      label: "SI-640",
      formula: "Si",
      expectedPhase: "silicon",
      crystalSystem: "cubic",
      centering: "F",
      cellA: 5.431,
    })
    .returning();
  const [other] = await db
    .insert(schema.samples)
    .values({
      requestId: request.id,
      position: 1,
      label: "LFP-7",
      formula: "LiFePO4",
      crystalSystem: "orthorhombic",
      centering: "P",
      cellA: 10.33,
      cellB: 6.01,
      cellC: 4.69,
    })
    .returning();
  siSampleId = si.id;
  otherSampleId = other.id;
  const { order } = await acceptedQuoteAndOrder({
    requestId: request.id,
    clientOrganisationId: halvorsen.id,
    labId: granite.id,
    instrumentId: cuInstrument.id,
  });
  orderId = order.id;
});

afterAll(async () => {
  await stopBoss();
});

describe("runScanCheck", () => {
  it("checks a stored silicon scan: consistent, refined a within 2e-4 Å of the simulated certified cell", async () => {
    const fileId = await storeFile(siliconScan(), siSampleId);
    const outcome = await runScanCheck(fileId);
    expect(outcome.status).toBe("done");
    const [check] = await checksOf(fileId);
    expect(check.status).toBe("done");
    expect(check.verdict).toBe("consistent");
    expect(check.finishedAt).toBeInstanceOf(Date);
    const result = check.result as unknown as StoredCheckResult;
    // Simulated from SRM 640c's certified a (docs/reference-values.md#certified-lattice-parameters); the check must find it again, the zero shift too.
    expect(Math.abs(result.cell!.a - SI_CERTIFIED_A)).toBeLessThan(2e-4);
    expect(result.zeroShift).toBeCloseTo(-0.02, 2);
    expect(result.radiation).toMatchObject({ kind: "anode", anode: "Cu" });
    expect(result.declaredFrom.sampleLabel).toBe("SI-640");
    // Si 111 at 28.442° 2θ for a = 5.431 Å, Cu Kα1 (docs/reference-values.md#silicon-reflections, pymatgen and gemmi agree); shifted by the zero shift.
    const p111 = result.peaks.find((p) => p.hkl?.join("") === "111")!;
    expect(p111.twoTheta).toBeCloseTo(28.442 - 0.02, 1);
    expect(result.profile.thinned).toBe(false);
    expect(result.profile.twoTheta.length).toBe(result.profile.points);
    expect(JSON.stringify(result)).not.toMatch(/NaN|Infinity/);
  });

  it("stores an unreadable file as failed with the engine's own sentence", async () => {
    const text = "this is a lab notebook page, not a scan\nno numbers here\n";
    const fileId = await storeFile(text, siSampleId, "notes.txt");
    const outcome = await runScanCheck(fileId);
    const engine = parseScan(text);
    expect(engine.ok).toBe(false);
    expect(outcome).toMatchObject({ status: "failed", error: (engine as { error: string }).error });
    const [check] = await checksOf(fileId);
    expect(check).toMatchObject({ status: "failed", verdict: null, result: null, error: (engine as { error: string }).error });
  });

  it("a worker killed half-way, then the job run again (twice): one row, one result", async () => {
    const fileId = await storeFile(siliconScan(), siSampleId);
    // The killed worker got as far as marking the check running.
    await db.insert(schema.scanChecks).values({ fileId, status: "running", startedAt: new Date(), attempts: 1 });
    await runScanCheck(fileId);
    await runScanCheck(fileId);
    const rows = await checksOf(fileId);
    expect(rows).toHaveLength(1);
    expect(rows[0]).toMatchObject({ status: "done", verdict: "consistent", attempts: 3, error: null });
  });

  it("thins the plotted profile of a 70 000-point scan and keeps every peak", async () => {
    const fileId = await storeFile(siliconScan(70_000), siSampleId);
    await runScanCheck(fileId);
    const [check] = await checksOf(fileId);
    const result = check.result as unknown as StoredCheckResult;
    expect(result.profile.points).toBe(70_000);
    expect(result.profile.thinned).toBe(true);
    expect(result.profile.twoTheta.length).toBeLessThanOrEqual(STORED_PROFILE_POINTS);
    for (const key of ["observed", "background", "fitted"] as const) expect(result.profile[key]).toHaveLength(result.profile.twoTheta.length);
    // The thinning keeps each stretch's highest count, so the pattern's maximum is still there.
    const top = Math.max(...result.peaks.map((p) => p.height));
    expect(Math.max(...result.profile.observed)).toBeGreaterThan(top * 0.9);
    expect(result.peaks.filter((p) => p.hkl).length).toBeGreaterThanOrEqual(9);
    expect(check.verdict).toBe("consistent");
  });

  it("skips files that are not stored", async () => {
    const fileId = await storeFile(siliconScan(), siSampleId);
    await db.update(schema.orderFiles).set({ state: "rejected" }).where(eq(schema.orderFiles.id, fileId));
    expect((await runScanCheck(fileId)).status).toBe("skipped");
    expect(await checksOf(fileId)).toHaveLength(0);
  });
});

describe("the job queue", () => {
  it("enqueueScanCheck with a real pg-boss worker: queued, then done; the times for 5k and 70k points", async () => {
    const boss = await getBoss();
    await startWorkers(boss);
    const timings: Record<string, number> = {};
    for (const points of [5_000, 70_000]) {
      const fileId = await storeFile(siliconScan(points), siSampleId);
      const started = performance.now();
      await enqueueScanCheck(fileId);
      const [queued] = await checksOf(fileId);
      expect(["queued", "running", "done"]).toContain(queued.status);
      let row = queued;
      while (row.status !== "done" && row.status !== "failed" && performance.now() - started < 25_000) {
        await new Promise((r) => setTimeout(r, 100));
        [row] = await checksOf(fileId);
      }
      timings[points] = performance.now() - started;
      expect(row.status).toBe("done");
      expect(row.verdict).toBe("consistent");
      expect(await checksOf(fileId)).toHaveLength(1);
    }
    console.info(`stored → check done through the queue: 5k points ${timings[5000].toFixed(0)} ms, 70k points ${timings[70000].toFixed(0)} ms`);
  });
});

describe("samplesWithoutCompletedCheck", () => {
  it("names the samples that have no completed check yet", async () => {
    expect(await samplesWithoutCompletedCheck(orderId)).toEqual(["LFP-7"]);
    const fileId = await storeFile(
      formatScanAsXy(simulatePattern({ structure: LITHIUM_IRON_PHOSPHATE, radiation: CU, twoThetaMin: 15, twoThetaMax: 90, step: 0.02, noise: { seed: 3 } })),
      otherSampleId,
    );
    await runScanCheck(fileId);
    expect(await samplesWithoutCompletedCheck(orderId)).toEqual([]);
  });
});

describe("who can read a check", () => {
  let checkId = "";
  beforeAll(async () => {
    const fileId = await storeFile(siliconScan(), siSampleId);
    const outcome = await runScanCheck(fileId);
    checkId = (outcome as { checkId: string }).checkId;
  });

  it("the status API answers the client organisation and the lab, 404 for another organisation, 401 signed out", async () => {
    const path = `/api/checks/${checkId}`;
    for (const email of ["owner@halvorsen.example", "member@halvorsen.example", "lab@graniteridge.example", "operator@graniteridge.example"]) {
      const answer = await callRoute(checkApi, getRequest(path, await as(email)), { id: checkId });
      expect(answer.status, email).toBe(200);
      // No acceptance window was set for this sample: the second answer is null, apart from the verdict.
      expect(answer.body).toMatchObject({ id: checkId, status: "done", verdict: "consistent", withinWindow: null, error: null });
      expect(Object.keys(answer.body as object).sort()).toEqual(["error", "fileId", "finishedAt", "id", "status", "verdict", "withinWindow"]);
    }
    for (const email of ["owner@pinecrest.example", "lab@lakeside.example", "admin@diffractory.example"]) {
      expect((await callRoute(checkApi, getRequest(path, await as(email)), { id: checkId })).status, email).toBe(404);
    }
    expect((await callRoute(checkApi, getRequest(path), { id: checkId })).status).toBe(401);
    expect((await callRoute(checkApi, getRequest("/api/checks/nope", await as("owner@halvorsen.example")), { id: "nope" })).status).toBe(404);
  });

  it("the check screen, the CSV and the JSON follow the same rule", async () => {
    const client = await as("owner@halvorsen.example");
    const outsider = await as("owner@pinecrest.example");
    const screen = await callRoute(checkScreen, getRequest(`/checks/${checkId}`, client), { id: checkId });
    expect(screen.status).toBe(200);
    expect((screen.body as { side: string }).side).toBe("client");
    expect((await callRoute(checkScreen, getRequest(`/checks/${checkId}`, outsider), { id: checkId })).status).toBe(404);
    expect((await callRoute(checkScreen, getRequest(`/checks/${checkId}`), { id: checkId })).status).toBe(302);

    const csv = await callRoute(peaksCsv, getRequest(`/checks/${checkId}/peaks.csv`, await as("lab@graniteridge.example")), { id: checkId });
    expect(csv.status).toBe(200);
    expect(csv.headers.get("content-type")).toContain("text/csv");
    const lines = String(csv.body).trim().split("\r\n");
    expect(lines[0]).toMatch(/^peak,h,k,l,d_angstrom,two_theta_obs_deg/);
    expect(lines[1]).toMatch(/^1,1,1,1,3\.13/);
    expect((await callRoute(peaksCsv, getRequest(`/checks/${checkId}/peaks.csv`, outsider), { id: checkId })).status).toBe(404);

    const json = await callRoute(resultJson, getRequest(`/checks/${checkId}/result.json`, client), { id: checkId });
    expect(json.status).toBe(200);
    const body = json.body as { check: { verdict: string }; result: StoredCheckResult };
    expect(body.check.verdict).toBe("consistent");
    expect(body.result.peaks.length).toBeGreaterThan(5);
    expect((await callRoute(resultJson, getRequest(`/checks/${checkId}/result.json`, outsider), { id: checkId })).status).toBe(404);
  });

  it("the CSV of a check that has not finished is a clear 409", async () => {
    const fileId = await storeFile(siliconScan(), siSampleId);
    await db.insert(schema.scanChecks).values({ fileId, status: "queued" });
    const [row] = await checksOf(fileId);
    const answer = await callRoute(peaksCsv, getRequest(`/checks/${row.id}/peaks.csv`, await as("owner@halvorsen.example")), { id: row.id });
    expect(answer.status).toBe(409);
    expect(String(answer.body)).toMatch(/not finished/);
  });
});
