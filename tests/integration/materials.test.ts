// Materials and their lot record (docs/design.md#materials-and-lots): declared once through the material's form,
// refused with one sentence and nothing changed when wrong; a request made from a material whose samples are its
// lots; each finished check of a lot's scan on the material's record once, with the refined cell, esds, verdict
// and window answer; and GET /api/materials.
import { createHash, randomUUID } from "node:crypto";
import { and, asc, count, eq } from "drizzle-orm";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { db, schema } from "~/db/client.server";
import { seedDemo } from "~/demo/seed.server";
import { formatScanAsXy, simulatePattern } from "~/diffraction/simulate";
import { SILICON } from "~/diffraction/structures";
import { stopBoss } from "~/jobs/queues.server";
import { runScanCheck } from "~/models/checks/scan-check.server";
import { putObject } from "~/models/files/storage.server";
import { lotsOfMaterial, materialSdsPrefix, recordLot, requestFromMaterial } from "~/models/materials/materials.server";
import { loader as materialsApi } from "~/routes/api/materials";
import { action as materialAction, loader as materialLoader } from "~/routes/client/material";
import { loader as materialsLoader } from "~/routes/client/materials";
import { action as samplesAction, loader as samplesLoader } from "~/routes/client/request-samples";
import { acceptedQuoteAndOrder } from "./order-fixtures";
import { callRoute, formRequest, getRequest, type RouteAnswer, sessionCookies } from "./route-call";

const as = sessionCookies();
const OWNER = "owner@halvorsen.example";
const MEMBER = "member@halvorsen.example";
const OTHER_CLIENT = "owner@pinecrest.example";

// Certified lattice parameter of silicon, NIST SRM 640c: a = 5.4311946 ± 0.0000092 Å
// (docs/reference-values.md#certified-lattice-parameters, certificate). The declared cell 5.431 Å and the windows
// below are inputs, not computed values.
const SI_CERTIFIED_A = 5.4311946;
const CU = { kind: "anode", anode: "Cu", monochromation: "k_alpha_doublet" } as const;

/** The material's form as the browser posts it: silicon as a reference material with a window on a. */
const FORM: Record<string, string> = {
  intent: "save",
  productCode: "SI-REF",
  name: "Silicon reference powder",
  formula: "Si",
  form: "powder",
  massMg: "200",
  expectedPhase: "silicon",
  crystalSystem: "cubic",
  centering: "F",
  cellA: "5.431",
  cellB: "5.431",
  cellC: "5.431",
  cellAlpha: "90",
  cellBeta: "90",
  cellGamma: "90",
  "window.a.plusMinus": "0.002",
  "window.a.unit": "absolute",
  technique: "powder_reflection",
  rangeMin: "20",
  rangeMax: "120",
  quality: "standard",
  preferredSource: "Cu",
  ghs: "GHS07",
  hStatements: "H319",
  handlingNotes: "Fine powder; avoid dust.",
  afterMeasurement: "lab_disposes",
};

const errorsOf = (answer: RouteAnswer) => {
  const r = (answer.body as { result: { error?: Record<string, string[]> } }).result;
  return Object.values(r.error ?? {}).flat();
};
const materialCount = async () => (await db.select({ n: count() }).from(schema.materials))[0].n;
const snapshot = async () => db.select().from(schema.materials).orderBy(asc(schema.materials.productCode));

let halvorsenId = "";
let materialId = "";
let requestId = "";
let sampleIds: string[] = [];

beforeAll(async () => {
  await seedDemo();
  const [org] = await db.select().from(schema.organisations).where(eq(schema.organisations.slug, "halvorsen-cathode-works"));
  halvorsenId = org.id;
});

afterAll(async () => {
  await stopBoss();
});

describe("the material's form", () => {
  it("creates a material from the form, with its window, hazards and a QC person", async () => {
    const [member] = await db.select().from(schema.users).where(eq(schema.users.email, MEMBER));
    const answer = await callRoute(materialAction, formRequest("/client/materials/new", { ...FORM, qcUserIds: member.id }, await as(OWNER)));
    expect(answer.status).toBe(302);
    materialId = answer.headers.get("location")!.split("/").pop()!;
    const [m] = await db.select().from(schema.materials).where(eq(schema.materials.id, materialId));
    expect(m).toMatchObject({
      organisationId: halvorsenId,
      productCode: "SI-REF",
      crystalSystem: "cubic",
      centering: "F",
      cellA: 5.431,
      acceptanceWindow: { a: { plusMinus: 0.002, unit: "absolute" } },
      preferredSource: "Cu",
      rangeMin: 20,
      rangeMax: 120,
      ghsPictograms: ["GHS07"],
      hStatements: ["H319"],
      afterMeasurement: "lab_disposes",
      qcUserIds: [member.id],
    });
    const list = await callRoute(materialsLoader, getRequest("/client/materials", await as(OWNER)));
    const rows = (list.body as { materials: { productCode: string; lotsOnRecord: number }[] }).materials;
    expect(rows.find((r) => r.productCode === "SI-REF")).toMatchObject({ lotsOnRecord: 0 });
  });

  it.each([
    ["a product code the organisation already uses (letter case aside)", { productCode: "si-ref" }, /already used by another material/],
    ["a cubic cell with b unlike a", { cellB: "5.5" }, /cubic/i],
    ["a window on a parameter the system ties to a", { "window.b.plusMinus": "0.01", "window.b.unit": "absolute" }, /fixes b/],
    ["a 2θ range upside down", { rangeMin: "90", rangeMax: "20" }, /upper end must be above/],
    ["an H-statement that is none", { hStatements: "H999" }, /H999/],
    ["a QC person from another organisation", { productCode: "SI-NEW", qcUserIds: "00000000-0000-4000-8000-000000000001" }, /members/],
    [
      "a data sheet not uploaded on this page",
      { productCode: "SI-NEW", sdsStorageKey: "requests/other/sds/x.pdf", sdsFileName: "x.pdf" },
      /Upload the safety data sheet/,
    ],
  ])("refuses %s with one sentence and changes nothing", async (_what, change, sentence) => {
    const before = await snapshot();
    const answer = await callRoute(materialAction, formRequest("/client/materials/new", { ...FORM, ...change }, await as(OWNER)));
    expect(answer.status).toBe(400);
    const errors = errorsOf(answer);
    expect(errors).toHaveLength(1);
    expect(errors[0]).toMatch(sentence);
    expect(await snapshot()).toEqual(before);
  });

  it("saves an edit, refuses taking another material's code, and archives instead of deleting", async () => {
    const cookie = await as(OWNER);
    const other = await callRoute(materialAction, formRequest("/client/materials/new", { ...FORM, productCode: "SI-OTHER" }, cookie));
    expect(other.status).toBe(302);
    const otherId = other.headers.get("location")!.split("/").pop()!;
    const taken = await callRoute(materialAction, formRequest(`/client/materials/${otherId}`, { ...FORM }, cookie), { id: otherId });
    expect(taken.status).toBe(400);
    expect(errorsOf(taken)).toEqual(["The product code “SI-REF” is already used by another material of your organisation; choose another."]);
    const saved = await callRoute(materialAction, formRequest(`/client/materials/${otherId}`, { ...FORM, productCode: "SI-OTHER", name: "Renamed" }, cookie), {
      id: otherId,
    });
    expect(saved.status).toBe(302);
    const archived = await callRoute(materialAction, formRequest(`/client/materials/${otherId}`, { intent: "archive" }, cookie), { id: otherId });
    expect(archived.status).toBe(302);
    const [row] = await db.select().from(schema.materials).where(eq(schema.materials.id, otherId));
    expect(row.name).toBe("Renamed");
    expect(row.archivedAt).not.toBeNull();
    const list = await callRoute(materialsLoader, getRequest("/client/materials", cookie));
    expect((list.body as { materials: { productCode: string }[] }).materials.map((m) => m.productCode)).not.toContain("SI-OTHER");
    // An archived material takes no request.
    const refused = await callRoute(materialAction, formRequest(`/client/materials/${otherId}`, { intent: "request-lot", lotCodes: "X1" }, cookie), {
      id: otherId,
    });
    expect(errorsOf(refused)).toEqual(["SI-OTHER is archived; restore it to request a lot."]);
  });

  it("keeps a safety data sheet uploaded for the material, checked in storage as a request's", async () => {
    // A minimal PDF by the format's own layout (header, one object, trailer): common practice in these tests.
    const pdf = "%PDF-1.4\n1 0 obj << /Type /Catalog >> endobj\ntrailer << /Root 1 0 R >>\n%%EOF\n";
    const key = `${materialSdsPrefix(halvorsenId)}/${randomUUID()}/si-ref.pdf`;
    await putObject(key, new TextEncoder().encode(pdf), "application/pdf");
    const cookie = await as(OWNER);
    const sheet = { sdsStorageKey: key, sdsFileName: "si-ref.pdf" };
    const wrongSum = await callRoute(materialAction, formRequest(`/client/materials/${materialId}`, { ...FORM, ...sheet, sdsSha256: "0".repeat(64) }, cookie), {
      id: materialId,
    });
    expect(wrongSum.status).toBe(400);
    expect(errorsOf(wrongSum)).toHaveLength(1);
    const sha = createHash("sha256").update(pdf).digest("hex");
    const saved = await callRoute(materialAction, formRequest(`/client/materials/${materialId}`, { ...FORM, ...sheet, sdsSha256: sha }, cookie), {
      id: materialId,
    });
    expect(saved.status).toBe(302);
    const [m] = await db.select().from(schema.materials).where(eq(schema.materials.id, materialId));
    expect([m.sdsStorageKey, m.sdsFileName, m.sdsSizeBytes]).toEqual([key, "si-ref.pdf", pdf.length]);
  });

  it("is another organisation's to nobody else: 404 on the page and its form", async () => {
    const cookie = await as(OTHER_CLIENT);
    const before = await materialCount();
    expect((await callRoute(materialLoader, getRequest(`/client/materials/${materialId}`, cookie), { id: materialId })).status).toBe(404);
    expect((await callRoute(materialAction, formRequest(`/client/materials/${materialId}`, FORM, cookie), { id: materialId })).status).toBe(404);
    expect(await materialCount()).toBe(before);
  });
});

describe("a request made from a material", () => {
  it("fills one sample per lot from the material; each keeps the material and its lot code", async () => {
    const cookie = await as(OWNER);
    const answer = await callRoute(
      materialAction,
      formRequest(`/client/materials/${materialId}`, { intent: "request-lot", lotCodes: "L-001\nL-002" }, cookie),
      {
        id: materialId,
      },
    );
    expect(answer.status).toBe(302);
    const location = answer.headers.get("location")!;
    expect(location).toMatch(/^\/client\/requests\/[0-9a-f-]+\/edit\/samples$/);
    requestId = location.split("/")[3];
    const [request] = await db.select().from(schema.requests).where(eq(schema.requests.id, requestId));
    expect(request).toMatchObject({ organisationId: halvorsenId, state: "draft", preferredSource: "Cu", rangeMin: 20, rangeMax: 120 });
    const samples = await db.select().from(schema.samples).where(eq(schema.samples.requestId, requestId)).orderBy(asc(schema.samples.position));
    sampleIds = samples.map((s) => s.id);
    expect(samples.map((s) => [s.materialId, s.lotCode, s.formula, s.cellA, s.crystalSystem, s.afterMeasurement])).toEqual([
      [materialId, "L-001", "Si", 5.431, "cubic", "lab_disposes"],
      [materialId, "L-002", "Si", 5.431, "cubic", "lab_disposes"],
    ]);
    expect(samples[0].acceptanceWindow).toEqual({ a: { plusMinus: 0.002, unit: "absolute" } });
    expect(samples[0].ghsPictograms).toEqual(["GHS07"]);
    expect(samples.map((s) => s.sdsFileName)).toEqual(["si-ref.pdf", "si-ref.pdf"]);
    expect(samples[0].sdsStorageKey?.startsWith(`${materialSdsPrefix(halvorsenId)}/`)).toBe(true);
    // The wizard names the material beside each lot and gives its code to edit.
    const step = await callRoute(samplesLoader, getRequest(location, cookie), { id: requestId });
    const body = step.body as { lots: Record<string, string>; defaults: { samples: { lotCode?: string }[] } };
    expect(body.lots[sampleIds[0]]).toBe("Silicon reference powder (SI-REF)");
    expect(body.defaults.samples.map((s) => s.lotCode)).toEqual(["L-001", "L-002"]);
  });

  it("lets the wizard change a lot code, and refuses a lot without one", async () => {
    const cookie = await as(OWNER);
    const fields = (lot0: string) => {
      const out: Record<string, string> = { title: "SI-REF lots", technique: "powder_reflection" };
      for (const [i, id] of sampleIds.entries()) {
        for (const [k, v] of Object.entries(FORM)) {
          if (["formula", "form", "massMg", "expectedPhase", "crystalSystem", "centering"].includes(k) || k.startsWith("cell") || k.startsWith("window"))
            out[`samples[${i}].${k}`] = v;
        }
        out[`samples[${i}].id`] = id;
        out[`samples[${i}].label`] = `SI-REF lot ${i}`;
        out[`samples[${i}].lotCode`] = i === 0 ? lot0 : "L-002";
      }
      return out;
    };
    const blank = await callRoute(samplesAction, formRequest(`/client/requests/${requestId}/edit/samples`, fields(""), cookie), { id: requestId });
    expect(blank.status).toBe(400);
    expect(errorsOf(blank)).toEqual(["Enter the lot code of this lot."]);
    const saved = await callRoute(samplesAction, formRequest(`/client/requests/${requestId}/edit/samples`, fields("L-001a"), cookie), { id: requestId });
    expect(saved.status).toBe(302);
    const [s] = await db.select().from(schema.samples).where(eq(schema.samples.id, sampleIds[0]));
    expect([s.materialId, s.lotCode]).toEqual([materialId, "L-001a"]);
  });

  it("refuses another organisation's material and an empty list of lots with one sentence", async () => {
    const [pinecrest] = await db.select().from(schema.organisations).where(eq(schema.organisations.slug, "pinecrest-solid-forms"));
    const [owner] = await db.select().from(schema.users).where(eq(schema.users.email, OWNER));
    expect(pinecrest, "the demo's second client").toBeTruthy();
    expect(await requestFromMaterial(materialId, ["A"], { userId: owner.id, organisationId: pinecrest.id })).toEqual({
      ok: false,
      error: "There is no such material in your organisation.",
    });
    expect(await requestFromMaterial(materialId, [" ", ""], { userId: owner.id, organisationId: halvorsenId })).toEqual({
      ok: false,
      error: "Enter the lot code of each lot to measure.",
    });
  });
});

describe("the lot record", () => {
  let orderId = "";
  let counter = 0;
  async function storeScan(sampleId: string, a: number) {
    const text = formatScanAsXy(
      simulatePattern({
        structure: { ...SILICON, cell: { ...SILICON.cell, a, b: a, c: a } },
        radiation: CU,
        twoThetaMin: 20,
        twoThetaMax: 120,
        step: 0.02,
        zeroShift: -0.02,
        background: { constant: 80 },
        noise: { seed: 640 + counter },
      }),
    );
    const bytes = new TextEncoder().encode(text);
    const storageKey = `orders/${orderId}/test/${++counter}/lot.xy`;
    await putObject(storageKey, bytes, "text/plain");
    const [file] = await db
      .insert(schema.orderFiles)
      .values({
        orderId,
        sampleId,
        name: `lot-${counter}.xy`,
        version: 1,
        sizeBytes: bytes.byteLength,
        contentType: "text/plain",
        sha256: createHash("sha256").update(bytes).digest("hex"),
        storageKey,
        state: "stored",
        storedAt: new Date(),
      })
      .returning();
    scans.set(file.id, { storageKey, bytes });
    return file.id;
  }
  const scans = new Map<string, { storageKey: string; bytes: Uint8Array }>();
  let outsideFileId = "";

  beforeAll(async () => {
    const [granite] = await db.select().from(schema.organisations).where(eq(schema.organisations.slug, "granite-ridge-characterisation"));
    const [cu] = await db
      .select()
      .from(schema.instruments)
      .where(and(eq(schema.instruments.labId, granite.id), eq(schema.instruments.anode, "Cu")));
    await db.update(schema.requests).set({ state: "awarded" }).where(eq(schema.requests.id, requestId));
    ({
      order: { id: orderId },
    } = await acceptedQuoteAndOrder({ requestId, clientOrganisationId: halvorsenId, labId: granite.id, instrumentId: cu.id }));
  });

  it("puts a finished check of a lot on the record once, with the refined cell, its esd, the verdict and the window's answer", async () => {
    expect(SILICON.cell.a).toBeCloseTo(SI_CERTIFIED_A, 6);
    const fileId = await storeScan(sampleIds[0], SILICON.cell.a);
    const outcome = await runScanCheck(fileId);
    expect(outcome.status).toBe("done");
    const checkId = (outcome as { checkId: string }).checkId;
    // The check run again (a retried job) and the hook called again (a seed) leave one row.
    await runScanCheck(fileId);
    await recordLot(checkId);
    const lots = await lotsOfMaterial(materialId);
    expect(lots).toHaveLength(1);
    const [check] = await db.select().from(schema.scanChecks).where(eq(schema.scanChecks.id, checkId));
    const lot = lots[0];
    expect(lot).toMatchObject({ materialId, sampleId: sampleIds[0], orderId, checkId, lotCode: "L-001a", verdict: "consistent", withinWindow: true });
    expect(lot.measuredAt).toEqual(check.finishedAt);
    // Refined within 2e-4 Å of the simulated certified cell (as the scan-check test asks), with an esd.
    expect(Math.abs(lot.cell!.a - SI_CERTIFIED_A)).toBeLessThan(2e-4);
    expect(lot.cell!.a).toBe((check.result as { cell: { a: number } }).cell.a);
    expect(lot.esd!.a).toBeGreaterThan(0);
    expect(lot.esd!.a).toBe((check.result as { esd: { a: number } }).esd.a);
    expect(lot.orderNumber).toMatch(/^[A-Z]/);
  });

  it("records a lot outside the window as such, after the first in time order", async () => {
    // 5.436 Å lies 0.005 Å above the declared 5.431 Å: outside its ± 0.002 Å window.
    const fileId = await storeScan(sampleIds[1], 5.436);
    outsideFileId = fileId;
    const outcome = await runScanCheck(fileId);
    expect(outcome.status).toBe("done");
    const lots = await lotsOfMaterial(materialId);
    expect(lots.map((l) => [l.lotCode, l.withinWindow])).toEqual([
      ["L-001a", true],
      ["L-002", false],
    ]);
    expect(lots[1].cell!.a).toBeCloseTo(5.436, 3);
    expect(lots[1].verdict).toBe((outcome as { verdict: string }).verdict);
  });

  it("takes a lot off the record when its check is run again and fails, and ignores samples of no material", async () => {
    const [plain] = await db.insert(schema.samples).values({ requestId, position: 9, label: "no material", formula: "Si" }).returning();
    const fileId = await storeScan(plain.id, 5.431);
    const outcome = await runScanCheck(fileId);
    expect(await recordLot((outcome as { checkId: string }).checkId)).toBeNull();
    expect(await lotsOfMaterial(materialId)).toHaveLength(2);
    // The second lot's file replaced in storage by something that is no scan: its check fails, its row goes.
    const scan = scans.get(outsideFileId)!;
    await putObject(scan.storageKey, new TextEncoder().encode("not a scan"), "text/plain");
    expect((await runScanCheck(outsideFileId)).status).toBe("failed");
    expect((await lotsOfMaterial(materialId)).map((l) => l.lotCode)).toEqual(["L-001a"]);
    // Back in place and checked again, it is on the record again.
    await putObject(scan.storageKey, scan.bytes, "text/plain");
    expect((await runScanCheck(outsideFileId)).status).toBe("done");
    expect((await lotsOfMaterial(materialId)).map((l) => l.lotCode)).toEqual(["L-001a", "L-002"]);
  });

  it("GET /api/materials answers the organisation's materials with lots on record and the last lot", async () => {
    const answer = await callRoute(materialsApi, getRequest("/api/materials", await as(OWNER)));
    expect(answer.status).toBe(200);
    const [m] = (answer.body as { materials: Record<string, unknown>[] }).materials.filter((x) => x.productCode === "SI-REF");
    expect(m).toMatchObject({
      id: materialId,
      name: "Silicon reference powder",
      phase: { name: "silicon", crystalSystem: "cubic", centering: "F", cell: { a: 5.431 } },
      window: { a: { plusMinus: 0.002, unit: "absolute" } },
      lotsOnRecord: 2,
      lastLot: { lotCode: "L-002", withinWindow: false },
    });
    expect(typeof (m.lastLot as { measuredAt: string }).measuredAt).toBe("string");
    const lab = await callRoute(materialsApi, getRequest("/api/materials", await as("lab@graniteridge.example")));
    expect(lab.status).toBe(403);
    expect(lab.body).toEqual({ error: "Materials belong to client organisations; switch to one." });
    const other = await callRoute(materialsApi, getRequest("/api/materials", await as(OTHER_CLIENT)));
    expect((other.body as { materials: unknown[] }).materials).toEqual([]);
  });
});
