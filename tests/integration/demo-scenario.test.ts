// The demo's declarations beside the main phase (app/demo/seed-scenario.server.ts), seeded as `npm run demo`
// seeds them: a batch declared with a Li3PO4 residue, a sample declared as Form I with Form II as a candidate,
// and a lot measured against a ± 0.002 Å acceptance window. Each order is delivered with a simulated scan whose
// check runs in-process. The expected answers follow from the cells the scans were simulated from (the demo's
// own invented values, DEMO_TRUTHS), not from measurements.
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type { StoredCheckResult } from "~/domain/check-result";
import { type PaymentFake, startPaymentFake } from "../../services/payment-fake/index";

const MIXTURE = "Olivine with Li3PO4 residue in LFP batch HC-2681";
const WINDOW = "Acceptance test of LFP production lot HC-2693";
const FORMS = "Form I or Form II of API batch PSF-163";

let fake: PaymentFake;
let app: {
  db: typeof import("~/db/client.server");
  orm: typeof import("drizzle-orm");
  scenario: typeof import("~/demo/seed-scenario.server");
};

beforeAll(async () => {
  // A payment fake of this file's own; app modules read their configuration when first imported, so after it.
  fake = await startPaymentFake({ port: 0, webhookUrls: [] });
  process.env.STRIPE_API_PORT = String(fake.port);
  app = {
    db: await import("~/db/client.server"),
    orm: await import("drizzle-orm"),
    scenario: await import("~/demo/seed-scenario.server"),
  };
  await (await import("~/demo/seed.server")).seedDemo();
  await (await import("~/demo/seed-orders.server")).onboardDemoLabs();
  for (const spec of app.scenario.SCENARIO.filter((s) => [MIXTURE, WINDOW, FORMS].includes(s.title))) {
    expect(await app.scenario.seedScenarioRequest(spec)).toBe(true);
  }
}, 180_000);
afterAll(async () => {
  await fake?.close();
});

async function sampleOf(label: string) {
  const { db, schema } = app.db;
  const { eq } = app.orm;
  const [sample] = await db.select().from(schema.samples).where(eq(schema.samples.label, label));
  const phases = await db.select().from(schema.samplePhases).where(eq(schema.samplePhases.sampleId, sample.id));
  return { sample, phases };
}

async function checkOf(fileName: string) {
  const { db, schema } = app.db;
  const { eq } = app.orm;
  const [row] = await db
    .select({ check: schema.scanChecks, order: schema.orders })
    .from(schema.scanChecks)
    .innerJoin(schema.orderFiles, eq(schema.orderFiles.id, schema.scanChecks.fileId))
    .innerJoin(schema.orders, eq(schema.orders.id, schema.orderFiles.orderId))
    .where(eq(schema.orderFiles.name, fileName));
  return { ...row.check, orderId: row.order.id, orderState: row.order.state, result: row.check.result as StoredCheckResult };
}

describe("the demo's declarations beside the main phase", () => {
  it("stores each sample's further phase, candidate form and window as the samples step declared them", async () => {
    const mixture = await sampleOf("HC-2681-A");
    expect(mixture.phases).toHaveLength(1);
    expect(mixture.phases[0]).toMatchObject({
      role: "expected",
      name: "Li3PO4 (β)",
      crystalSystem: "orthorhombic",
      centering: "P",
      cellA: 6.12,
      cellB: 5.24,
      cellC: 4.86,
    });
    expect(mixture.sample.acceptanceWindow).toBeNull();

    const forms = await sampleOf("PSF-163-B");
    expect(forms.sample).toMatchObject({ expectedPhase: "PSF-163 Form I", crystalSystem: "monoclinic", cellBeta: 98.6 });
    expect(forms.phases).toHaveLength(1);
    expect(forms.phases[0]).toMatchObject({
      role: "candidate",
      name: "PSF-163 Form II",
      crystalSystem: "orthorhombic",
      cellA: 7.34,
      cellB: 12.66,
      cellC: 9.82,
    });

    const lot = await sampleOf("HC-2693-1");
    expect(lot.phases).toHaveLength(0);
    expect(lot.sample.acceptanceWindow).toEqual({
      a: { plusMinus: 0.002, unit: "absolute" },
      b: { plusMinus: 0.002, unit: "absolute" },
      c: { plusMinus: 0.002, unit: "absolute" },
    });
  });

  it("delivers each order with its scan checked", async () => {
    for (const file of ["HC-2681-A_Co_15-110.xy", "HC-2693-1_Co_15-110.xy", "PSF-163-B_Cu_5-60.xy"]) {
      const check = await checkOf(file);
      expect(check.status, file).toBe("done");
      expect(check.orderState, file).toBe("data_delivered");
    }
  });

  it("finds the declared Li3PO4 residue beside the olivine and refines both cells", async () => {
    const { hc2681Olivine: olivine, hc2681Li3po4: residue } = app.scenario.DEMO_TRUTHS;
    const check = await checkOf("HC-2681-A_Co_15-110.xy");
    // Declared and present, the residue explains its lines: the scan confirms the declaration.
    expect(check.verdict).toBe("consistent");
    const [main, li3po4] = check.result.phases!;
    expect(main.present).toBe(true);
    expect(li3po4).toMatchObject({ role: "expected", name: "Li3PO4 (β)", present: true });
    expect(li3po4.peaks).toBeGreaterThanOrEqual(5);
    // The simulation's cells, to well within the 0.01 Å a demo reader would notice.
    for (const key of ["a", "b", "c"] as const) {
      expect(Math.abs(main.cell![key] - olivine[key]), `olivine ${key}`).toBeLessThan(0.002);
      expect(Math.abs(li3po4.cell![key] - residue[key]), `Li3PO4 ${key}`).toBeLessThan(0.01);
    }
    // The residue's strongest line, (100) near 16.8° 2θ with Co Kα1 (d = 6.118 Å), is Li3PO4's.
    const line = check.result.peaks.find((p) => Math.abs(p.twoTheta - 16.84) < 0.1);
    expect(line).toMatchObject({ phase: 1, hkl: [1, 0, 0] });
    expect(check.result.withinWindow).toBeNull();
  });

  it("picks Form II, the form the PSF-163 scan shows, over the declared Form I", async () => {
    const truth = app.scenario.DEMO_TRUTHS.psf163Batch;
    const check = await checkOf("PSF-163-B_Cu_5-60.xy");
    const candidates = check.result.candidates!;
    expect(candidates.map((c) => c.name)).toEqual(["PSF-163 Form I", "PSF-163 Form II"]);
    expect(candidates.filter((c) => c.chosen).map((c) => c.name)).toEqual(["PSF-163 Form II"]);
    expect(candidates[0].verdict).toBe("inconsistent");
    expect(candidates[1].verdict).toBe("consistent");
    const main = check.result.phases![0];
    expect(main.name).toBe("PSF-163 Form II");
    for (const key of ["a", "b", "c"] as const) expect(Math.abs(main.cell![key] - truth[key]), key).toBeLessThan(0.01);
  });

  it("keeps the lot's verdict consistent but puts a outside its ± 0.002 Å window", async () => {
    const truth = app.scenario.DEMO_TRUTHS.hc2693Lot;
    const check = await checkOf("HC-2693-1_Co_15-110.xy");
    expect(check.verdict).toBe("consistent");
    expect(check.result.withinWindow).toBe(false);
    const byParameter = Object.fromEntries(check.result.window!.parameters.map((p) => [p.parameter, p]));
    // a is simulated 0.005 Å above the declared 10.330 Å: 0.003 Å beyond the upper limit 10.332 Å.
    expect(byParameter.a.inside).toBe(false);
    expect(Math.abs(byParameter.a.refined! - truth.a)).toBeLessThan(0.001);
    expect(byParameter.a.margin!).toBeCloseTo(-0.003, 3);
    // b and c are simulated as declared.
    expect(byParameter.b.inside).toBe(true);
    expect(byParameter.c.inside).toBe(true);
    // The status API and the order's file list give the two answers apart: the verdict and the window's.
    const { checkStatusJson } = await import("~/domain/lattice-check");
    expect(checkStatusJson(check)).toMatchObject({ verdict: "consistent", withinWindow: false });
    const { orderFileList } = await import("~/models/files/files.server");
    const [file] = (await orderFileList(check.orderId, { side: "client" })).filter((f) => f.name === "HC-2693-1_Co_15-110.xy");
    expect(file.check).toMatchObject({ verdict: "consistent", withinWindow: false });
  });
});

// Issue "Repeat work and quality trends", done-when 1: the demo's cathode grade with a standing agreement whose 23
// lots over eleven months are its orders, simulated by the engine with a slow drift until one lot breaks a rule
// and its QC person is told; every demo instrument with a year of calibration scans; the directory's measured
// accuracy. The lots and scans are the demo's own invented values (app/demo/seed-trends.server.ts,
// app/demo/seed-calibrations.server.ts); these checks are of the story, the rules are the Western Electric Co.
// Statistical Quality Control Handbook's (1956) as app/domain/spc.ts implements them.
describe("the demo's repeat work: lots under a standing agreement, and calibrations on record", () => {
  const DAY = 86_400_000;
  let trend: Awaited<ReturnType<typeof import("~/demo/seed-trends.server").seedDemoTrends>>;
  let calibrations = 0;

  beforeAll(async () => {
    // The qualification order's payer and the labs' payouts are the earlier seeds' (as scripts/seed-demo.ts runs them).
    await (await import("~/demo/seed-profiles.server")).seedDemoProfiles();
    trend = await (await import("~/demo/seed-trends.server")).seedDemoTrends();
    calibrations = await (await import("~/demo/seed-calibrations.server")).seedDemoCalibrations();
  }, 240_000);

  it("seeds once: a second run makes no lot and no calibration", async () => {
    expect(trend.lots).toBe(23);
    expect(calibrations).toBeGreaterThanOrEqual(4 * 11);
    expect((await (await import("~/demo/seed-trends.server")).seedDemoTrends()).lots).toBe(0);
    expect(await (await import("~/demo/seed-calibrations.server")).seedDemoCalibrations()).toBe(0);
  });

  it("puts 20 or more lots over months on the material's record, each a paid and delivered order of one agreement", async () => {
    const { db, schema } = app.db;
    const { eq, inArray } = app.orm;
    const { lotsOfMaterial } = await import("~/models/materials/materials.server");
    const lots = await lotsOfMaterial(trend.materialId!);
    expect(lots.length).toBeGreaterThanOrEqual(20);
    const span = lots[lots.length - 1].measuredAt.getTime() - lots[0].measuredAt.getTime();
    expect(span).toBeGreaterThanOrEqual(90 * DAY);
    expect(lots.every((l) => l.orderId && l.checkId && l.verdict === "consistent" && l.withinWindow === true)).toBe(true);
    const orders = await db
      .select()
      .from(schema.orders)
      .where(
        inArray(
          schema.orders.id,
          lots.map((l) => l.orderId!),
        ),
      );
    expect(orders).toHaveLength(lots.length);
    expect(new Set(orders.map((o) => o.agreementId))).toEqual(new Set([trend.agreementId]));
    expect(orders.every((o) => o.state === "paid_out" && o.deliveredAt !== null)).toBe(true);
    // The agreement came from an accepted quote of an ordinary order and was agreed by the lab.
    const [agreement] = await db.select().from(schema.standingAgreements).where(eq(schema.standingAgreements.id, trend.agreementId!));
    expect(agreement.state).toBe("active");
    expect(agreement.agreedAt).not.toBeNull();
    const [quote] = await db.select().from(schema.quotes).where(eq(schema.quotes.id, agreement.sourceQuoteId!));
    expect(quote.state).toBe("accepted");
    // The agreement page's usage: lots used, money spent (net) and what remains of the cap.
    const { agreementForParty } = await import("~/models/agreements/agreements.server");
    const page = (await agreementForParty(agreement.id, "client", agreement.clientOrganisationId))!;
    expect(page.usage.lots).toBe(lots.length);
    expect(page.usage.spentNetMinor).toBe(lots.length * agreement.pricePerLotMinor);
    expect(page.usage.remainingMinor).toBe(agreement.budgetCapMinor - lots.length * agreement.pricePerLotMinor);
  });

  it("flags exactly the drifted last lot and tells the material's QC person in the app and by e-mail", async () => {
    const { db, schema } = app.db;
    const { and, eq, like } = app.orm;
    const { materialOfOrganisation, trendOf } = await import("~/models/materials/trends.server");
    const [halvorsen] = await db.select().from(schema.organisations).where(eq(schema.organisations.slug, "halvorsen-cathode-works"));
    const computed = await trendOf(await materialOfOrganisation(trend.materialId!, halvorsen.id));
    const flagged = computed.lots.filter((l) => Object.keys(l.rulesBroken).length > 0);
    expect(flagged.map((l) => [l.lotCode, l.rulesBroken])).toEqual([["C20-2523", { a: [2] }]]);
    const notices = await db
      .select()
      .from(schema.notifications)
      .where(and(eq(schema.notifications.kind, "lot_rule_broken"), like(schema.notifications.href, `%${trend.materialId}%`)));
    const [member] = await db.select().from(schema.users).where(eq(schema.users.email, "member@halvorsen.example"));
    expect(notices.map((n) => n.userId)).toEqual([member.id]);
    const letters = await db.select().from(schema.outboxMessages).where(eq(schema.outboxMessages.kind, "lot_rule_broken"));
    expect(letters.map((l) => l.to)).toEqual(["member@halvorsen.example"]);
  });

  it("gives every demo instrument a year of passing calibrations, in order and in matching", async () => {
    const { db, schema } = app.db;
    const { countsForMatching } = await import("~/domain/calibration-record");
    const instruments = await db.select().from(schema.instruments);
    expect(instruments.length).toBeGreaterThanOrEqual(4);
    for (const instrument of instruments) {
      const { calibrationsOf } = await import("~/models/labs/calibration.server");
      const rows = await calibrationsOf(instrument.id);
      expect(rows.length, instrument.name).toBeGreaterThanOrEqual(11);
      const span = rows[rows.length - 1].measuredAt.getTime() - rows[0].measuredAt.getTime();
      expect(span, instrument.name).toBeGreaterThanOrEqual(330 * DAY);
      expect(rows.every((r) => r.passed)).toBe(true);
      // A few 1e-5 Å from the certificate: well inside the ±0.0005 Å tolerance (app/domain/vetting.ts).
      expect(rows.every((r) => Math.abs(r.deviationA!) < 0.0001)).toBe(true);
      expect(instrument.calibrationState, instrument.name).toBe("ok");
      expect(instrument.calibrationDueAt!.getTime()).toBeGreaterThan(Date.now());
      expect(countsForMatching(instrument.calibrationState)).toBe(true);
    }
  });

  it("shows each approved lab's instruments' measured accuracy and the on-time record in the directory's API", async () => {
    const { loader: labsApi } = await import("~/routes/api/labs");
    const { callRoute, getRequest } = await import("./route-call");
    const api = await callRoute(labsApi, getRequest("/api/labs"));
    const labs = (
      api.body as {
        labs: { name: string; instruments?: unknown[]; accuracy: { instrumentName: string; text: string }[]; onTime: { onTime: number; delivered: number } }[];
      }
    ).labs;
    const expected: Record<string, string[]> = {
      "Granite Ridge Characterisation": ["Reflection diffractometer A (Cu)", "Reflection diffractometer B (Co)"],
      "Lakeside Institute X-ray Core": ["Transmission diffractometer (Mo)"],
    };
    for (const [name, instruments] of Object.entries(expected)) {
      const lab = labs.find((l) => l.name === name)!;
      expect(lab.accuracy.map((a) => a.instrumentName).sort()).toEqual(instruments);
      for (const a of lab.accuracy) expect(a.text).toMatch(/^(Si|LaB6): ([+−]0\.0000\d|0\.00000) Å, 12 scans in 12 months$/);
    }
    // Granite Ridge delivered the qualification order and 23 lots, one of them late.
    const granite = labs.find((l) => l.name === "Granite Ridge Characterisation")!;
    expect(granite.onTime.delivered).toBeGreaterThanOrEqual(24);
    expect(granite.onTime.onTime).toBe(granite.onTime.delivered - 1);
  });
});
