// Reads and writes of a material's trend (docs/design.md#lots-and-trends): the material for its organisation,
// its lot scans from material_lots, the computed trend, the chosen baseline (audit-logged), and the notice when a
// newly recorded lot breaks a control rule (`afterLotRecorded`, called once a lot's row is written).
import { and, asc, eq } from "drizzle-orm";
import { db, schema } from "~/db/client.server";
import { isUuid } from "~/domain/ids";
import type { Material } from "~/db/schema";
import type { CellKey } from "~/diffraction/phases";
import { WESTERN_ELECTRIC_RULES } from "~/domain/spc";
import { type LotScan, materialTrend, type MaterialTrend, PARAMETER_NAMES, type TrendMaterial, trendPath } from "~/domain/trends";
import { audit } from "~/models/audit.server";
import { NoSuchRecord } from "~/models/errors";
import { notify } from "~/models/notifications/outbox.server";

const NO_MATERIAL = "There is no such material in your organisation.";

/** The organisation's material; NoSuchRecord (a 404) for another organisation's or a missing one. */
export async function materialOfOrganisation(materialId: string, organisationId: string): Promise<Material> {
  if (!isUuid(materialId)) throw new NoSuchRecord(NO_MATERIAL);
  const [row] = await db
    .select()
    .from(schema.materials)
    .where(and(eq(schema.materials.id, materialId), eq(schema.materials.organisationId, organisationId)));
  if (!row) throw new NoSuchRecord(NO_MATERIAL);
  return row;
}

/** Every checked scan on the material's record, oldest first. */
export async function lotScansOf(materialId: string): Promise<LotScan[]> {
  const rows = await db
    .select({
      id: schema.materialLots.id,
      lotCode: schema.materialLots.lotCode,
      measuredAt: schema.materialLots.measuredAt,
      cell: schema.materialLots.cell,
      esd: schema.materialLots.esd,
      verdict: schema.materialLots.verdict,
      withinWindow: schema.materialLots.withinWindow,
    })
    .from(schema.materialLots)
    .where(eq(schema.materialLots.materialId, materialId))
    .orderBy(asc(schema.materialLots.measuredAt), asc(schema.materialLots.id));
  return rows;
}

export function trendMaterialOf(m: Material): TrendMaterial {
  return {
    crystalSystem: m.crystalSystem,
    declared: { a: m.cellA, b: m.cellB, c: m.cellC, alpha: m.cellAlpha, beta: m.cellBeta, gamma: m.cellGamma },
    acceptanceWindow: m.acceptanceWindow ?? null,
    baselineFirstLot: m.baselineFirstLot,
    baselineLastLot: m.baselineLastLot,
  };
}

/** The material's trend as the screen, the CSV and the API show it. */
export async function trendOf(m: Material): Promise<MaterialTrend> {
  return materialTrend(trendMaterialOf(m), await lotScansOf(m.id));
}

/**
 * Saves the baseline (lots first…last by their order on the record; both null: the default, the first 20), and
 * writes the audit log. The caller has checked the numbers.
 */
export async function setBaseline(input: { material: Material; first: number | null; last: number | null; actorUserId: string; clientAddress?: string }) {
  const { material, first, last } = input;
  await db.transaction(async (tx) => {
    await tx
      .update(schema.materials)
      .set({ baselineFirstLot: first, baselineLastLot: last, updatedAt: new Date() })
      .where(eq(schema.materials.id, material.id));
    await audit(
      {
        actorUserId: input.actorUserId,
        organisationId: material.organisationId,
        action: "material.baseline_set",
        subjectType: "material",
        subjectId: material.id,
        details: {
          productCode: material.productCode,
          from: material.baselineFirstLot == null ? "default" : `lots ${material.baselineFirstLot}–${material.baselineLastLot}`,
          to: first == null ? "default" : `lots ${first}–${last}`,
        },
        clientAddress: input.clientAddress ?? null,
      },
      tx,
    );
  });
}

/**
 * After a lot's row is written (a check finished): when that lot comes after the baseline and breaks a Western
 * Electric rule on any parameter, tell the material's QC people (its owners and managers when none is named). Once
 * per lot: calling it again for the same lot sends nothing new. Returns the rules the lot breaks as a notice names
 * them (empty: none, or a baseline lot).
 */
export async function afterLotRecorded(lotId: string): Promise<Partial<Record<CellKey, number[]>>> {
  const [row] = await db.select().from(schema.materialLots).where(eq(schema.materialLots.id, lotId));
  if (!row) return {};
  const [material] = await db.select().from(schema.materials).where(eq(schema.materials.id, row.materialId));
  if (!material) return {};
  const trend = await trendOf(material);
  const lot = trend.lots.find((l) => l.scans.some((s) => s.id === lotId));
  if (!lot) return {};
  const broken = Object.entries(lot.rulesBroken) as [CellKey, (1 | 2 | 3 | 4)[]][];
  // A lot of the baseline helps set the limits it is judged by (trial limits): the chart shows its rules, but only
  // a lot after the baseline is news worth a notice.
  if (broken.length === 0 || lot.inBaseline) return lot.inBaseline ? {} : lot.rulesBroken;
  const first = broken[0][0];
  const path = `${trendPath(material.id, first)}#lot-${lot.order}`;
  await db.transaction(async (tx) => {
    // One notice per lot and path: a second call for the same lot (a retried job) adds nothing.
    const [already] = await tx
      .select({ id: schema.notifications.id })
      .from(schema.notifications)
      .where(and(eq(schema.notifications.kind, "lot_rule_broken"), eq(schema.notifications.href, path)))
      .limit(1);
    if (already) return;
    await notify(tx, {
      kind: "lot_rule_broken",
      materialId: material.id,
      lotCode: lot.lotCode,
      broken: broken.map(([key, rules]) => ({
        parameter: PARAMETER_NAMES[key].name,
        rules: rules.map((r) => `rule ${r}, ${WESTERN_ELECTRIC_RULES[r]}`),
      })),
      path,
    });
  });
  return lot.rulesBroken;
}
