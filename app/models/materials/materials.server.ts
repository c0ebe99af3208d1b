// A client's materials, declared once and reused by every request and lot, and each material's lot record: one row
// per checked scan of a lot (docs/design.md#materials-and-lots).
import { and, asc, count, desc, eq, inArray, isNull, ne, sql } from "drizzle-orm";
import { db, schema, type Tx } from "~/db/client.server";
import type { LotCell, Material, MaterialLot, MaterialPhase } from "~/db/schema";
import { readStoredResult } from "~/domain/check-result";
import { parseFormula } from "~/domain/formula";
import { isUuid } from "~/domain/ids";
import { withinWindowOf } from "~/domain/lattice-check";
import type { MaterialInput } from "~/domain/material-forms";
import { acceptanceWindowOf, type PhaseRow } from "~/domain/request-forms";
import { audit } from "~/models/audit.server";
import { afterLotRecorded } from "~/models/materials/trends.server";
import { checkNewSds, hazardColumns } from "~/models/requests/requests.server";

type FieldErrors = Record<string, string[]>;

/** Storage keys of an organisation's material safety data sheets start here (see sdsPrefix for a request's). */
export function materialSdsPrefix(organisationId: string) {
  return `materials/${organisationId}/sds`;
}

/** The organisation's own material, or null for anything else (another organisation's, a malformed id). */
export async function materialOf(materialId: string | undefined, organisationId: string): Promise<Material | null> {
  if (!isUuid(materialId)) return null;
  const [row] = await db
    .select()
    .from(schema.materials)
    .where(and(eq(schema.materials.id, materialId), eq(schema.materials.organisationId, organisationId)));
  return row ?? null;
}

/** The organisation's members, whom a material may name as its QC people. */
export async function organisationMembers(organisationId: string) {
  return db
    .select({ id: schema.users.id, name: schema.users.name, email: schema.users.email })
    .from(schema.memberships)
    .innerJoin(schema.users, eq(schema.users.id, schema.memberships.userId))
    .where(eq(schema.memberships.organisationId, organisationId))
    .orderBy(asc(schema.users.name));
}

/** The last lot on each material's record and how many lots it holds. */
async function lotSummaries(materialIds: string[]) {
  if (materialIds.length === 0) return new Map<string, { lotsOnRecord: number; lastLot: LastLot | null }>();
  const ml = schema.materialLots;
  const counts = await db.select({ materialId: ml.materialId, n: count() }).from(ml).where(inArray(ml.materialId, materialIds)).groupBy(ml.materialId);
  const last = await db
    .selectDistinctOn([ml.materialId], {
      materialId: ml.materialId,
      lotCode: ml.lotCode,
      measuredAt: ml.measuredAt,
      verdict: ml.verdict,
      withinWindow: ml.withinWindow,
      orderNumber: schema.orders.number,
    })
    .from(ml)
    .leftJoin(schema.orders, eq(schema.orders.id, ml.orderId))
    .where(inArray(ml.materialId, materialIds))
    .orderBy(ml.materialId, desc(ml.measuredAt), desc(ml.createdAt));
  return new Map(
    materialIds.map((id) => {
      const l = last.find((r) => r.materialId === id);
      return [
        id,
        {
          lotsOnRecord: counts.find((c) => c.materialId === id)?.n ?? 0,
          lastLot: l ? { lotCode: l.lotCode, measuredAt: l.measuredAt, verdict: l.verdict, withinWindow: l.withinWindow, orderNumber: l.orderNumber } : null,
        },
      ];
    }),
  );
}

export interface LastLot {
  lotCode: string;
  measuredAt: Date;
  verdict: string | null;
  withinWindow: boolean | null;
  orderNumber: string | null;
}

/** The organisation's materials by product code, each with its lots on record and its last lot; archived ones only when asked. */
export async function listMaterials(organisationId: string, { archived = false } = {}) {
  const rows = await db
    .select()
    .from(schema.materials)
    .where(and(eq(schema.materials.organisationId, organisationId), archived ? undefined : isNull(schema.materials.archivedAt)))
    .orderBy(asc(schema.materials.productCode));
  const summaries = await lotSummaries(rows.map((r) => r.id));
  return rows.map((m) => ({ ...m, ...(summaries.get(m.id) ?? { lotsOnRecord: 0, lastLot: null }) }));
}

const phaseOf = (p: PhaseRow, role: MaterialPhase["role"]): MaterialPhase => ({
  role,
  name: p.name || null,
  crystalSystem: p.crystalSystem,
  centering: p.centering,
  cell: { a: p.cellA, b: p.cellB, c: p.cellC, alpha: p.cellAlpha, beta: p.cellBeta, gamma: p.cellGamma },
});

function materialColumns(m: MaterialInput) {
  return {
    productCode: m.productCode,
    name: m.name,
    formula: m.formula,
    form: m.form,
    massMg: m.massMg,
    expectedPhase: m.expectedPhase,
    crystalSystem: m.crystalSystem,
    centering: m.centering,
    cellA: m.cellA,
    cellB: m.cellB,
    cellC: m.cellC,
    cellAlpha: m.cellAlpha,
    cellBeta: m.cellBeta,
    cellGamma: m.cellGamma,
    furtherPhases: [...m.phases.map((p) => phaseOf(p, "expected")), ...m.candidates.map((p) => phaseOf(p, "candidate"))],
    acceptanceWindow: acceptanceWindowOf(m.window),
    technique: m.technique,
    rangeMin: m.rangeMin,
    rangeMax: m.rangeMax,
    quality: m.quality,
    preferredSource: m.preferredSource,
    ...hazardColumns(m),
    qcUserIds: [...new Set(m.qcUserIds)],
  };
}

const codeTaken = (code: string) => [`The product code “${code}” is already used by another material of your organisation; choose another.`];

/**
 * Creates a material (no `existing`) or saves an existing one. Refused with field errors, nothing written: a product
 * code another material of the organisation has (letter case aside), QC people who are not members, a safety data
 * sheet not uploaded on this page or not a PDF.
 */
export async function saveMaterial(
  organisationId: string,
  userId: string,
  input: MaterialInput,
  existing?: Material,
): Promise<{ material: Material; fieldErrors?: undefined } | { fieldErrors: FieldErrors }> {
  const [same] = await db
    .select({ id: schema.materials.id })
    .from(schema.materials)
    .where(
      and(
        eq(schema.materials.organisationId, organisationId),
        sql`lower(${schema.materials.productCode}) = lower(${input.productCode})`,
        existing ? ne(schema.materials.id, existing.id) : undefined,
      ),
    );
  if (same) return { fieldErrors: { productCode: codeTaken(input.productCode) } };
  const members = new Set((await organisationMembers(organisationId)).map((m) => m.id));
  if (input.qcUserIds.some((id) => !members.has(id))) return { fieldErrors: { qcUserIds: ["Choose QC people from the organisation's members."] } };
  const values: Partial<typeof schema.materials.$inferInsert> = materialColumns(input);
  if (input.sdsStorageKey && input.sdsStorageKey !== existing?.sdsStorageKey) {
    const sds = await checkNewSds({ ...input, sdsStorageKey: input.sdsStorageKey }, materialSdsPrefix(organisationId));
    if ("error" in sds) return { fieldErrors: { sds: [sds.error] } };
    Object.assign(values, sds);
  }
  try {
    return await db.transaction(async (tx) => {
      const [material] = existing
        ? await tx
            .update(schema.materials)
            .set({ ...values, updatedAt: new Date() })
            .where(eq(schema.materials.id, existing.id))
            .returning()
        : await tx
            .insert(schema.materials)
            .values({ ...(values as typeof schema.materials.$inferInsert), organisationId, createdBy: userId })
            .returning();
      await audit(
        {
          actorUserId: userId,
          organisationId,
          action: existing ? "material_updated" : "material_created",
          subjectType: "material",
          subjectId: material.id,
          details: { productCode: material.productCode },
        },
        tx,
      );
      return { material };
    });
  } catch (err) {
    // Two saves racing for one code: the unique index decides, and the loser reads the same sentence.
    if ((err as { code?: string }).code === "23505") return { fieldErrors: { productCode: codeTaken(input.productCode) } };
    throw err;
  }
}

/** Archives a material (it leaves the list and takes no new requests; its record stays) or brings it back. */
export async function setArchived(material: Material, userId: string, archived: boolean) {
  await db
    .update(schema.materials)
    .set({ archivedAt: archived ? new Date() : null, updatedAt: new Date() })
    .where(eq(schema.materials.id, material.id));
  await audit({
    actorUserId: userId,
    organisationId: material.organisationId,
    action: archived ? "material_archived" : "material_restored",
    subjectType: "material",
    subjectId: material.id,
    details: { productCode: material.productCode },
  });
}

/** Who asks for a lot: the person and the client organisation whose material it is. */
export interface LotActor {
  userId: string;
  organisationId: string;
}

/** What requestFromMaterial answers: the draft and its samples in lot order, or one sentence. */
export type RequestFromMaterial = { ok: true; requestId: string; samples: { id: string; lotCode: string }[] } | { ok: false; error: string };

/**
 * A draft request for lots of a material: one sample per lot code (in the order given), each filled from the
 * material — formula, form, mass, main and further phases, candidate forms, window, hazards and safety data
 * sheet — and keeping the material and its lot code; the request takes the material's usual measurement. The
 * draft is then edited in the wizard as any other (its samples and hazards steps are filled, so it resumes at the
 * measurement step). Refused with one sentence for another organisation's material, an archived one, or no lot.
 */
export async function requestFromMaterial(materialId: string, lotCodes: string[], actor: LotActor): Promise<RequestFromMaterial> {
  const material = await materialOf(materialId, actor.organisationId);
  if (!material) return { ok: false, error: "There is no such material in your organisation." };
  if (material.archivedAt) return { ok: false, error: `${material.productCode} is archived; restore it to request a lot.` };
  const codes = [...new Set(lotCodes.map((c) => c.trim()).filter(Boolean))];
  if (codes.length === 0) return { ok: false, error: "Enter the lot code of each lot to measure." };
  if (codes.length > 20) return { ok: false, error: "At most 20 lots in one request." };
  if (codes.some((c) => c.length > 80)) return { ok: false, error: "A lot code has at most 80 characters." };
  return db.transaction(async (tx) => {
    const { request, samples } = await requestForLotsTx(tx, material, codes, actor.userId);
    await audit(
      {
        actorUserId: actor.userId,
        organisationId: actor.organisationId,
        action: "request_draft_created",
        subjectType: "request",
        subjectId: request.id,
        details: { materialId: material.id, productCode: material.productCode, lots: codes.length },
      },
      tx,
    );
    return { ok: true as const, requestId: request.id, samples: samples.map((s) => ({ id: s.id, lotCode: s.lotCode ?? "" })) };
  });
}

/** How a lot's request starts when it is not a draft: awarded at once under a standing agreement, never in the market. */
export interface AwardedLots {
  currency: string;
  at: Date;
}

/**
 * Inside the caller's transaction, the request for lots of a material and its samples: one sample per lot code (in
 * the order given, codes already checked), each filled from the material's declaration and keeping the material and
 * its lot code, with the material's further phases and candidate forms. A draft for the wizard (requestFromMaterial),
 * or, given `awarded`, a request awarded at once that no lab sees in the market (a lot ordered under a standing
 * agreement). Answers the request and its samples in lot order.
 */
export async function requestForLotsTx(tx: Tx, material: Material, codes: string[], userId: string, awarded?: AwardedLots) {
  const parsed = parseFormula(material.formula);
  const title = `${material.productCode} ${material.name}: ${codes.length === 1 ? "lot" : "lots"} ${codes.join(", ")}`;
  const [request] = await tx
    .insert(schema.requests)
    .values({
      organisationId: material.organisationId,
      createdBy: userId,
      title: title.length > 160 ? `${title.slice(0, 159)}…` : title,
      technique: material.technique,
      rangeKind: "two_theta",
      rangeMin: material.rangeMin,
      rangeMax: material.rangeMax,
      preferredSource: material.preferredSource,
      quality: material.quality,
      ...(awarded
        ? { state: "awarded" as const, draftStep: "review", currency: awarded.currency, visibility: "invited" as const, openedAt: awarded.at }
        : { draftStep: "measurement" }),
    })
    .returning();
  const samples = await tx
    .insert(schema.samples)
    .values(
      codes.map((lotCode, position) => ({
        requestId: request.id,
        position,
        label: `${material.productCode} lot ${lotCode}`.slice(0, 80),
        formula: material.formula,
        elements: "elements" in parsed ? parsed.elements : [],
        form: material.form,
        massMg: material.massMg,
        expectedPhase: material.expectedPhase,
        crystalSystem: material.crystalSystem,
        centering: material.centering,
        cellA: material.cellA,
        cellB: material.cellB,
        cellC: material.cellC,
        cellAlpha: material.cellAlpha,
        cellBeta: material.cellBeta,
        cellGamma: material.cellGamma,
        acceptanceWindow: material.acceptanceWindow,
        ghsPictograms: material.ghsPictograms,
        hStatements: material.hStatements,
        specialHazards: material.specialHazards,
        handlingNotes: material.handlingNotes,
        afterMeasurement: material.afterMeasurement,
        sdsFileName: material.sdsFileName,
        sdsStorageKey: material.sdsStorageKey,
        sdsSizeBytes: material.sdsSizeBytes,
        materialId: material.id,
        lotCode,
      })),
    )
    .returning({ id: schema.samples.id, lotCode: schema.samples.lotCode, position: schema.samples.position });
  const phaseRows = samples.flatMap((s) => {
    const position = { expected: 0, candidate: 0 };
    return material.furtherPhases.map((p) => ({
      sampleId: s.id,
      role: p.role,
      position: position[p.role]++,
      name: p.name,
      crystalSystem: p.crystalSystem,
      centering: p.centering,
      cellA: p.cell.a,
      cellB: p.cell.b,
      cellC: p.cell.c,
      cellAlpha: p.cell.alpha,
      cellBeta: p.cell.beta,
      cellGamma: p.cell.gamma,
    }));
  });
  if (phaseRows.length) await tx.insert(schema.samplePhases).values(phaseRows);
  samples.sort((a, b) => a.position - b.position);
  return { request, samples };
}

const finiteCell = (c: Partial<Record<keyof LotCell, number | null>> | null | undefined): Partial<LotCell> | null => {
  if (!c) return null;
  const out: Partial<LotCell> = {};
  for (const [k, v] of Object.entries(c)) if (typeof v === "number" && Number.isFinite(v)) out[k as keyof LotCell] = v;
  return Object.keys(out).length ? out : null;
};

/**
 * Puts a finished check of a lot's scan on its material's record: the main phase's refined cell with its esds, the
 * verdict and the window's answer, at the time the check finished. One row per check (a check run again replaces
 * its row; a check that ends failed or is reset takes its row off). Answers the row, or null when the check's
 * sample is no lot of a material or the check is not done. Called where checks finish (runScanCheck) and by seeds.
 */
export async function recordLot(checkId: string): Promise<MaterialLot | null> {
  if (!isUuid(checkId)) return null;
  const [found] = await db
    .select({ check: schema.scanChecks, orderId: schema.orderFiles.orderId, sample: schema.samples })
    .from(schema.scanChecks)
    .innerJoin(schema.orderFiles, eq(schema.orderFiles.id, schema.scanChecks.fileId))
    .leftJoin(schema.samples, eq(schema.samples.id, schema.orderFiles.sampleId))
    .where(eq(schema.scanChecks.id, checkId));
  const sample = found?.sample;
  if (!found || !sample?.materialId || found.check.status !== "done" || !found.check.result) {
    await db.delete(schema.materialLots).where(eq(schema.materialLots.checkId, checkId));
    return null;
  }
  const result = readStoredResult(found.check.result);
  const row = {
    materialId: sample.materialId,
    sampleId: sample.id,
    orderId: found.orderId,
    checkId,
    lotCode: sample.lotCode || sample.label,
    measuredAt: found.check.finishedAt ?? new Date(),
    cell: finiteCell(result.cell) as LotCell | null,
    esd: finiteCell(result.esd),
    verdict: found.check.verdict,
    withinWindow: withinWindowOf(found.check),
  };
  const [lot] = await db.insert(schema.materialLots).values(row).onConflictDoUpdate({ target: schema.materialLots.checkId, set: row }).returning();
  // The lot's place on the trend: a notice to the QC people when it breaks a control rule (once per lot).
  await afterLotRecorded(lot.id);
  return lot;
}

/** A lot row as the record and the trend read it, with the order's number people read. */
export type LotOnRecord = MaterialLot & { orderNumber: string | null };

/** Every lot on a material's record, oldest first (by the time its check finished). */
export async function lotsOfMaterial(materialId: string): Promise<LotOnRecord[]> {
  if (!isUuid(materialId)) return [];
  const rows = await db
    .select({ lot: schema.materialLots, orderNumber: schema.orders.number })
    .from(schema.materialLots)
    .leftJoin(schema.orders, eq(schema.orders.id, schema.materialLots.orderId))
    .where(eq(schema.materialLots.materialId, materialId))
    .orderBy(asc(schema.materialLots.measuredAt), asc(schema.materialLots.createdAt));
  return rows.map((r) => ({ ...r.lot, orderNumber: r.orderNumber }));
}

/** Names of the materials of the given samples, by sample id: what the wizard shows as "Lot of …". */
export async function materialNamesOfSamples(samples: { id: string; materialId: string | null }[]) {
  const ids = [...new Set(samples.map((s) => s.materialId).filter((id): id is string => !!id))];
  if (ids.length === 0) return {};
  const rows = await db
    .select({ id: schema.materials.id, productCode: schema.materials.productCode, name: schema.materials.name })
    .from(schema.materials)
    .where(inArray(schema.materials.id, ids));
  const byId = new Map(rows.map((r) => [r.id, `${r.name} (${r.productCode})`]));
  return Object.fromEntries(samples.filter((s) => s.materialId && byId.has(s.materialId)).map((s) => [s.id, byId.get(s.materialId!)!]));
}

/** GET /api/materials: the organisation's active materials, in the units programs take (Å, degrees, ISO times). */
export async function materialsJson(organisationId: string) {
  const rows = await listMaterials(organisationId);
  return rows.map((m) => ({
    id: m.id,
    productCode: m.productCode,
    name: m.name,
    formula: m.formula,
    phase: {
      name: m.expectedPhase,
      crystalSystem: m.crystalSystem,
      centering: m.centering,
      cell: { a: m.cellA, b: m.cellB, c: m.cellC, alpha: m.cellAlpha, beta: m.cellBeta, gamma: m.cellGamma },
    },
    furtherPhases: m.furtherPhases,
    window: m.acceptanceWindow,
    lotsOnRecord: m.lotsOnRecord,
    lastLot: m.lastLot ? { ...m.lastLot, measuredAt: m.lastLot.measuredAt.toISOString() } : null,
  }));
}
