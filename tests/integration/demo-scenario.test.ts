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
