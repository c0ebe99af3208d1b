// Demo lots and trend (docs/design.md#lots-and-trends): Halvorsen's olivine cathode grade with 23 lots over a year,
// each lot's scan simulated by the engine from an invented "true" cell and checked by the same lattice check the
// delivered scans get. The lots wander a little around the declared cell; from lot 21 on the plant's a axis creeps
// upwards, so a late lot breaks a Western Electric rule and the material's QC person is told. Idempotent: an
// existing material of that product code is left alone.
import { and, eq } from "drizzle-orm";
import { db, schema } from "~/db/client.server";
import type { Cell } from "~/diffraction";
import { formatScanAsXy, mulberry32, simulatePattern } from "~/diffraction/simulate";
import { LITHIUM_IRON_PHOSPHATE } from "~/diffraction/structures";
import { judgeWindow } from "~/diffraction/window";
import { checkScanForStorage, declaredOf } from "~/domain/lattice-check";
import type { AcceptanceWindow } from "~/diffraction/phases";
import { afterLotRecorded } from "~/models/materials/trends.server";
import { CO, LFP_DECLARED, LFP_SCAN } from "./seed-scans.server";

export const TREND_DEMO_PRODUCT_CODE = "HCW-LFP-C20";
const LOTS = 23;
const WINDOW: AcceptanceWindow = {
  a: { plusMinus: 0.006, unit: "absolute" },
  b: { plusMinus: 0.004, unit: "absolute" },
  c: { plusMinus: 0.004, unit: "absolute" },
};

/** The invented true cell of lot i (0-based): a small lot-to-lot scatter, and from lot 21 a creep of a upwards. */
function trueCell(i: number, uniform: () => number): Cell {
  const wobble = () => (uniform() - 0.5) * 0.0016;
  const creep = i >= 20 ? 0.00045 * (i - 19) : 0;
  return { a: 10.326 + wobble() + creep, b: 6.006 + wobble() / 2, c: 4.695 + wobble() / 2, alpha: 90, beta: 90, gamma: 90 };
}

export async function seedDemoTrends() {
  const [halvorsen] = await db.select().from(schema.organisations).where(eq(schema.organisations.slug, "halvorsen-cathode-works"));
  if (!halvorsen) return { lots: 0 };
  const [existing] = await db
    .select({ id: schema.materials.id })
    .from(schema.materials)
    .where(and(eq(schema.materials.organisationId, halvorsen.id), eq(schema.materials.productCode, TREND_DEMO_PRODUCT_CODE)));
  if (existing) return { lots: 0, materialId: existing.id };
  const [qc] = await db.select({ id: schema.users.id }).from(schema.users).where(eq(schema.users.email, "member@halvorsen.example"));
  const [owner] = await db.select({ id: schema.users.id }).from(schema.users).where(eq(schema.users.email, "owner@halvorsen.example"));
  const [material] = await db
    .insert(schema.materials)
    .values({
      organisationId: halvorsen.id,
      productCode: TREND_DEMO_PRODUCT_CODE,
      name: "Carbon-coated LFP cathode powder, grade C20",
      formula: "LiFePO4",
      expectedPhase: "LiFePO4, olivine (triphylite)",
      crystalSystem: "orthorhombic",
      centering: "P",
      cellA: LFP_DECLARED.a,
      cellB: LFP_DECLARED.b,
      cellC: LFP_DECLARED.c,
      cellAlpha: 90,
      cellBeta: 90,
      cellGamma: 90,
      acceptanceWindow: WINDOW,
      rangeMin: 15,
      rangeMax: 110,
      qcUserIds: qc ? [qc.id] : [],
      createdBy: owner?.id ?? null,
    })
    .returning();
  const declared = declaredOf({
    expectedPhase: material.expectedPhase,
    crystalSystem: material.crystalSystem,
    centering: material.centering,
    cellA: material.cellA,
    cellB: material.cellB,
    cellC: material.cellC,
    cellAlpha: material.cellAlpha,
    cellBeta: material.cellBeta,
    cellGamma: material.cellGamma,
    acceptanceWindow: WINDOW,
  });
  const uniform = mulberry32(2026_20);
  const start = Date.UTC(2025, 11, 1, 9);
  let last = "";
  for (let i = 0; i < LOTS; i++) {
    const lotCode = `C20-${String(2501 + i)}`;
    const fileName = `${lotCode}_Co_15-110.xy`;
    const scan = simulatePattern({ ...LFP_SCAN, structure: LITHIUM_IRON_PHOSPHATE, cell: trueCell(i, uniform), noise: { seed: 2026_2500 + i } });
    const checked = checkScanForStorage(formatScanAsXy(scan), {
      radiation: CO,
      declared,
      warnings: [],
      declaredFrom: { sampleLabel: lotCode, expectedPhase: material.expectedPhase, instrumentName: "Reflection diffractometer B (Co)" },
      fileName,
    });
    const result = checked.ok ? checked.result : null;
    const cell = result?.cell ?? null;
    const [row] = await db
      .insert(schema.materialLots)
      .values({
        materialId: material.id,
        lotCode,
        // About every two weeks, at the lab's morning.
        measuredAt: new Date(start + i * 15 * 86_400_000),
        cell,
        esd: result?.esd ?? null,
        verdict: result?.verdict ?? null,
        withinWindow: judgeWindow(WINDOW, LFP_DECLARED, cell, result?.esd ?? null).withinWindow,
      })
      .returning({ id: schema.materialLots.id });
    last = row.id;
    // Each lot as it is recorded: the notice goes out for the lot that breaks a rule.
    await afterLotRecorded(row.id);
  }
  return { lots: LOTS, materialId: material.id, lastLotId: last };
}
