// Lots and trends on the real PostgreSQL (docs/design.md#lots-and-trends): a material of Halvorsen's with 20
// steady lots and a 21st far above them, inserted straight into material_lots. The trend screen's loader, the
// baseline's choice (audit-logged), the CSV, the API and the notice to the material's QC people. The rules are
// the Western Electric Co. Statistical Quality Control Handbook's (1956); a lot 10σ above the centre breaks rule 1
// ("one point beyond the 3σ limits"), whatever else it does.
import { and, eq, inArray } from "drizzle-orm";
import { beforeAll, describe, expect, it } from "vitest";
import { db, schema } from "~/db/client.server";
import { seedDemo } from "~/demo/seed.server";
import { afterLotRecorded } from "~/models/materials/trends.server";
import { loader as apiLoader } from "~/routes/api/material-trend";
import { action as trendAction, loader as trendLoader } from "~/routes/client/material-trend";
import { loader as csvLoader } from "~/routes/client/material-trend-csv";
import { callRoute, formRequest, getRequest, sessionCookies } from "./route-call";

const as = sessionCookies();
const one = async <T>(rows: Promise<T[]>) => (await rows)[0];
const DAY = 86_400_000;
// An invented layered oxide on hexagonal axes, a ≈ 2.8156 Å, c ≈ 14.0542 Å; steady lots wobble by < 0.0003 Å.
const WOBBLE = [
  0.0001, -0.0002, 0.0003, -0.0001, 0.0, 0.0002, -0.0003, 0.0001, -0.0002, 0.0002, -0.0001, 0.0, 0.0003, -0.0003, 0.0001, -0.0001, 0.0002, -0.0002, 0.0, 0.0001,
];

let materialId = "";
let quietMaterialId = "";
const lotIds: string[] = [];
let member: typeof schema.users.$inferSelect;
let owner: typeof schema.users.$inferSelect;

async function addMaterial(productCode: string, qcUserIds: string[]) {
  const halvorsen = await one(db.select().from(schema.organisations).where(eq(schema.organisations.slug, "halvorsen-cathode-works")));
  const [m] = await db
    .insert(schema.materials)
    .values({
      organisationId: halvorsen.id,
      productCode,
      name: "Layered oxide cathode, grade T",
      formula: "LiCoO2",
      crystalSystem: "hexagonal",
      centering: "R",
      cellA: 2.8156,
      cellB: 2.8156,
      cellC: 14.0542,
      cellAlpha: 90,
      cellBeta: 90,
      cellGamma: 120,
      acceptanceWindow: { a: { plusMinus: 0.002, unit: "absolute" }, c: { plusMinus: 0.1, unit: "percent" } },
      qcUserIds,
    })
    .returning();
  return m;
}

async function addLot(material: string, i: number, lotCode: string, a: number, c: number) {
  const [row] = await db
    .insert(schema.materialLots)
    .values({
      materialId: material,
      lotCode,
      measuredAt: new Date(Date.UTC(2026, 0, 5) + i * 7 * DAY),
      cell: { a, b: a, c, alpha: 90, beta: 90, gamma: 120 },
      esd: { a: 0.00008, c: 0.0004 },
      verdict: "consistent",
      withinWindow: Math.abs(a - 2.8156) <= 0.002,
    })
    .returning();
  return row.id;
}

beforeAll(async () => {
  await seedDemo();
  member = await one(db.select().from(schema.users).where(eq(schema.users.email, "member@halvorsen.example")));
  owner = await one(db.select().from(schema.users).where(eq(schema.users.email, "owner@halvorsen.example")));
  const m = await addMaterial("HCW-LCO-T", [member.id]);
  materialId = m.id;
  for (const [i, d] of WOBBLE.entries()) lotIds.push(await addLot(materialId, i, `T-${String(i + 1).padStart(3, "0")}`, 2.8156 + d, 14.0542 - d));
  // Lot 21: 0.005 Å above the centre (outside the window too).
  lotIds.push(await addLot(materialId, 20, "T-021", 2.8206, 14.0542));
  const quiet = await addMaterial("HCW-LCO-Q", []);
  quietMaterialId = quiet.id;
  for (const [i, d] of WOBBLE.entries()) await addLot(quietMaterialId, i, `Q-${i + 1}`, 2.8156 + d, 14.0542);
});

const halvorsenId = async () => (await one(db.select().from(schema.organisations).where(eq(schema.organisations.slug, "halvorsen-cathode-works")))).id;
const noticesOf = (materialPath: string) =>
  db
    .select({ userId: schema.notifications.userId, title: schema.notifications.title, href: schema.notifications.href })
    .from(schema.notifications)
    .where(and(eq(schema.notifications.kind, "lot_rule_broken")))
    .then((rows) => rows.filter((r) => r.href.startsWith(materialPath)));

describe("the notice after a lot is recorded", () => {
  it("says nothing for a lot that breaks no rule, nor for a lot of the baseline, whose rules only the chart shows", async () => {
    expect(await afterLotRecorded(lotIds[19])).toEqual({});
    // A young record of five lots: all five are the baseline (fewer than 20), and the fifth, far off, breaks rule 1
    // against limits it helps to set (x̄ 2.8176, MR̄ 0.0026 Å, UCL 2.8245 Å): the chart shows it, no notice goes.
    const young = await addMaterial("HCW-LCO-Y", [member.id]);
    const ids: string[] = [];
    for (const [i, d] of [0, 0.0001, -0.0001, 0, 0.01].entries()) ids.push(await addLot(young.id, i, `Y-${i + 1}`, 2.8156 + d, 14.0542));
    const { trendOf } = await import("~/models/materials/trends.server");
    const trend = await trendOf(young);
    expect(trend.lots[4]).toMatchObject({ inBaseline: true, rulesBroken: { a: [1] } });
    expect(await afterLotRecorded(ids[4])).toEqual({});
    expect(await noticesOf(`/client/materials/${young.id}/`)).toEqual([]);
    expect(await noticesOf(`/client/materials/${materialId}/`)).toEqual([]);
  });

  it("tells the material's QC people, naming the material, the lot, the parameter and the rule in words; once", async () => {
    const broken = await afterLotRecorded(lotIds[20]);
    expect(broken.a).toContain(1);
    const notices = await noticesOf(`/client/materials/${materialId}/`);
    expect(notices.map((n) => n.userId)).toEqual([member.id]);
    expect(notices[0].title).toBe("Lot T-021 of HCW-LCO-T breaks a control rule");
    expect(notices[0].href).toBe(`/client/materials/${materialId}/trend?parameter=a#lot-21`);
    const [mail] = await db.select().from(schema.outboxMessages).where(eq(schema.outboxMessages.kind, "lot_rule_broken"));
    expect(mail.to).toBe("member@halvorsen.example");
    expect(mail.essential).toBe(false);
    expect(mail.text).toContain("HCW-LCO-T");
    expect(mail.text).toContain("T-021");
    expect(mail.text).toMatch(/a: rule 1, one point beyond the 3σ limits/);
    // A retried call adds nothing.
    await afterLotRecorded(lotIds[20]);
    expect(await noticesOf(`/client/materials/${materialId}/`)).toHaveLength(1);
  });

  it("goes to the owners and managers when the material names no QC people", async () => {
    const id = await addLot(quietMaterialId, 21, "Q-21", 2.8156, 14.0542 + 0.05);
    expect((await afterLotRecorded(id)).c).toContain(1);
    const notices = await noticesOf(`/client/materials/${quietMaterialId}/`);
    const deciding = await db
      .select({ userId: schema.memberships.userId })
      .from(schema.memberships)
      .where(and(eq(schema.memberships.organisationId, await halvorsenId()), inArray(schema.memberships.role, ["owner", "manager"])));
    expect(notices.map((n) => n.userId).sort()).toEqual(deciding.map((d) => d.userId).sort());
    expect(notices.map((n) => n.userId)).toContain(owner.id);
    expect(notices.map((n) => n.userId)).not.toContain(member.id);
    expect(notices[0].href).toContain("parameter=c");
  });

  it("does nothing for an unknown lot", async () => {
    expect(await afterLotRecorded("00000000-0000-4000-8000-000000000000")).toEqual({});
  });
});

describe("the trend screen", () => {
  it("shows the organisation's material: the free parameters, limits from the first 20 lots and the flagged lot", async () => {
    const cookie = await as("owner@halvorsen.example");
    const answer = await callRoute(trendLoader, getRequest(`/client/materials/${materialId}/trend?parameter=a`, cookie), { id: materialId });
    expect(answer.status).toBe(200);
    const body = answer.body as Awaited<ReturnType<typeof trendLoader>>;
    expect(body.parameters).toEqual(["a", "c"]);
    expect(body.parameter).toBe("a");
    expect(body.chart!.chart).toBe("individuals");
    expect(body.chart!.limits!.baselinePoints).toBe(20);
    expect(body.chart!.window).toMatchObject({ declared: 2.8156 });
    expect(body.lots).toHaveLength(21);
    expect(body.lots[20].rulesBroken.a).toContain(1);
    expect(body.lots[20].withinWindow).toBe(false);
    expect(body.canChooseBaseline).toBe(true);
    // β is fixed in a hexagonal cell: the screen says so and shows a.
    const beta = (await callRoute(trendLoader, getRequest(`/client/materials/${materialId}/trend?parameter=beta`, cookie), { id: materialId }))
      .body as typeof body;
    expect(beta.parameter).toBe("a");
    expect(beta.askedUnknown).toBe(true);
  });

  it("is a 404 for another organisation, a lab and an id that is no material", async () => {
    for (const email of ["owner@pinecrest.example"]) {
      const answer = await callRoute(trendLoader, getRequest(`/client/materials/${materialId}/trend`, await as(email)), { id: materialId });
      expect(answer.status, email).toBe(404);
    }
    const lab = await callRoute(trendLoader, getRequest(`/client/materials/${materialId}/trend`, await as("lab@graniteridge.example")), { id: materialId });
    expect(lab.status).toBe(403);
    const junk = await callRoute(trendLoader, getRequest("/client/materials/not-an-id/trend", await as("owner@halvorsen.example")), { id: "not-an-id" });
    expect(junk.status).toBe(404);
  });

  it("saves a chosen baseline on the material, audit-logged; refuses a baseline of one lot or beyond the record in a sentence", async () => {
    const cookie = await as("member@halvorsen.example"); // the material's QC person
    const post = (fields: Record<string, string>) =>
      callRoute(trendAction, formRequest(`/client/materials/${materialId}/trend`, { parameter: "a", ...fields }, cookie), { id: materialId });
    const single = await post({ intent: "baseline", first: "4", last: "4" });
    expect(single.status).toBe(400);
    expect((single.body as { error: string }).error).toMatch(/at least two lots/);
    const beyond = await post({ intent: "baseline", first: "1", last: "40" });
    expect(beyond.status).toBe(400);
    expect((beyond.body as { error: string }).error).toMatch(/has 21 lots/);
    expect((await post({ intent: "baseline", first: "x", last: "5" })).status).toBe(400);
    const saved = await post({ intent: "baseline", first: "1", last: "10" });
    expect(saved.status).toBe(302);
    expect(saved.headers.get("location")).toBe(`/client/materials/${materialId}/trend?parameter=a`);
    const m = await one(db.select().from(schema.materials).where(eq(schema.materials.id, materialId)));
    expect([m.baselineFirstLot, m.baselineLastLot]).toEqual([1, 10]);
    const [entry] = await db
      .select()
      .from(schema.auditLog)
      .where(and(eq(schema.auditLog.action, "material.baseline_set"), eq(schema.auditLog.subjectId, materialId)));
    expect(entry.actorUserId).toBe(member.id);
    expect(entry.details).toMatchObject({ from: "default", to: "lots 1–10" });
    const shown = (await callRoute(trendLoader, getRequest(`/client/materials/${materialId}/trend`, cookie), { id: materialId })).body as Awaited<
      ReturnType<typeof trendLoader>
    >;
    expect(shown.baseline).toEqual({ first: 1, last: 10, chosen: true });
    expect(shown.chart!.limits!.baselinePoints).toBe(10);
    const reset = await post({ intent: "baseline-default" });
    expect(reset.status).toBe(302);
    expect((await one(db.select().from(schema.materials).where(eq(schema.materials.id, materialId)))).baselineFirstLot).toBeNull();
  });

  it("lets only owners, managers and the material's QC people choose the baseline", async () => {
    const cookie = await as("member@halvorsen.example");
    const answer = await callRoute(
      trendAction,
      formRequest(`/client/materials/${quietMaterialId}/trend`, { intent: "baseline", first: "1", last: "5" }, cookie),
      {
        id: quietMaterialId,
      },
    );
    expect(answer.status).toBe(403);
  });
});

describe("the CSV and the API", () => {
  it("writes one row per lot scan with every parameter, esd, verdict, window answer and the rules broken", async () => {
    const answer = await callRoute(csvLoader, getRequest(`/client/materials/${materialId}/trend.csv`, await as("owner@halvorsen.example")), { id: materialId });
    expect(answer.status).toBe(200);
    expect(answer.headers.get("content-type")).toContain("text/csv");
    expect(answer.headers.get("content-disposition")).toContain("HCW-LCO-T-lots.csv");
    const lines = (answer.body as string).trim().split("\r\n");
    expect(lines[0]).toBe(
      "lot_no,lot_code,measured_at,a,a_esd,b,b_esd,c,c_esd,alpha,alpha_esd,beta,beta_esd,gamma,gamma_esd,verdict,within_window,in_baseline,rules_broken",
    );
    expect(lines).toHaveLength(22);
    expect(lines[21]).toMatch(/^21,T-021,2026-05-25T00:00:00\.000Z,2\.8206,0\.00008,/);
    expect(lines[21]).toMatch(/,consistent,outside,no,a: rule 1 \(one point beyond the 3σ limits\)/);
    const other = await callRoute(csvLoader, getRequest(`/client/materials/${materialId}/trend.csv`, await as("owner@pinecrest.example")), { id: materialId });
    expect(other.status).toBe(404);
  });

  it("answers GET /api/materials/:id/trend with the material, limits per parameter and lots with the rules they break", async () => {
    const answer = await callRoute(apiLoader, getRequest(`/api/materials/${materialId}/trend`, await as("owner@halvorsen.example")), { id: materialId });
    expect(answer.status).toBe(200);
    const body = answer.body as {
      material: { productCode: string; name: string };
      parameters: string[];
      limits: Record<string, { chart: string; center: number; ucl: number; lcl: number; baselineLots: number }>;
      lots: {
        lotCode: string;
        measuredAt: string;
        cell: Record<string, number>;
        verdict: string;
        withinWindow: boolean;
        rulesBroken: Record<string, number[]>;
      }[];
    };
    expect(body.material).toMatchObject({ productCode: "HCW-LCO-T", name: "Layered oxide cathode, grade T" });
    expect(body.parameters).toEqual(["a", "c"]);
    expect(body.limits.a.chart).toBe("individuals");
    expect(body.limits.a.baselineLots).toBe(20);
    expect(body.limits.a.lcl).toBeLessThan(body.limits.a.center);
    expect(body.lots).toHaveLength(21);
    expect(body.lots[20]).toMatchObject({ lotCode: "T-021", verdict: "consistent", withinWindow: false });
    expect(body.lots[20].cell.a).toBeCloseTo(2.8206, 6);
    expect(body.lots[20].rulesBroken.a).toContain(1);
    expect(JSON.stringify(body)).not.toContain(materialId);
    for (const email of ["owner@pinecrest.example", "lab@graniteridge.example"]) {
      const refused = await callRoute(apiLoader, getRequest(`/api/materials/${materialId}/trend`, await as(email)), { id: materialId });
      expect(refused.status, email).toBe(404);
    }
    expect((await callRoute(apiLoader, getRequest(`/api/materials/${materialId}/trend`), { id: materialId })).status).toBe(401);
  });
});

describe("the demo's lots", () => {
  it("seeds 23 engine-checked lots whose slow drift makes exactly one lot break a rule, tells the QC person, and seeds once", async () => {
    const { seedDemoTrends } = await import("~/demo/seed-trends.server");
    const first = await seedDemoTrends();
    expect(first.lots).toBe(23);
    expect((await seedDemoTrends()).lots).toBe(0);
    const cookie = await as("owner@halvorsen.example");
    const body = (await callRoute(trendLoader, getRequest(`/client/materials/${first.materialId}/trend`, cookie), { id: first.materialId! })).body as Awaited<
      ReturnType<typeof trendLoader>
    >;
    expect(body.parameters).toEqual(["a", "b", "c"]);
    expect(body.lots.every((l) => l.verdict === "consistent")).toBe(true);
    const flagged = body.lots.filter((l) => Object.keys(l.rulesBroken).length > 0);
    expect(flagged.map((l) => [l.order, l.rulesBroken])).toEqual([[23, { a: [2] }]]);
    const notices = await noticesOf(`/client/materials/${first.materialId}/`);
    expect(notices.map((n) => n.userId)).toEqual([member.id]);
  }, 120_000);
});
