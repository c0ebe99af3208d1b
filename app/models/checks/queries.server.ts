// Reading lattice checks: a check with its file, the sample its scan belongs to, and which samples still lack a check.
import { and, eq, getTableColumns, isNull, sql } from "drizzle-orm";
import { db, schema } from "~/db/client.server";
import type { ScanCheck } from "~/db/schema";
import { isUuid } from "~/domain/ids";

/** The sample the checked scan belongs to (label and declared phase), or null. */
export async function sampleOfFile(sampleId: string | null) {
  if (!sampleId) return null;
  const [sample] = await db.select().from(schema.samples).where(eq(schema.samples.id, sampleId));
  return sample ?? null;
}

/**
 * Labels of the order's samples that have no scan with a completed check (`done`) yet. The order may move
 * to `data_delivered` only when this is empty.
 */
export async function samplesWithoutCompletedCheck(orderId: string): Promise<string[]> {
  const [order] = await db.select({ requestId: schema.orders.requestId }).from(schema.orders).where(eq(schema.orders.id, orderId));
  if (!order) return [];
  const sampleRows = await db
    .select({ id: schema.samples.id, label: schema.samples.label })
    .from(schema.samples)
    .where(eq(schema.samples.requestId, order.requestId))
    .orderBy(schema.samples.position, schema.samples.label);
  const checked = await db
    .selectDistinct({ sampleId: schema.orderFiles.sampleId })
    .from(schema.orderFiles)
    .innerJoin(schema.scanChecks, eq(schema.scanChecks.fileId, schema.orderFiles.id))
    .where(
      and(
        eq(schema.orderFiles.orderId, orderId),
        eq(schema.orderFiles.state, "stored"),
        isNull(schema.orderFiles.deletedAt),
        eq(schema.scanChecks.status, "done"),
      ),
    );
  const done = new Set(checked.map((c) => c.sampleId));
  return sampleRows.filter((s) => !done.has(s.id)).map((s) => s.label);
}

/**
 * A check with the order it belongs to, for access checks (null when there is no such check). With `statusOnly`
 * its stored result (the fitted profile and peaks, hundreds of kB for a long scan) is left in the database and
 * `result` holds only `withinWindow`, all the status API answers with (docs/performance.md#end-to-end).
 */
export async function checkWithOrder(checkId: string, { statusOnly = false } = {}) {
  if (!isUuid(checkId)) return null;
  const check = statusOnly
    ? {
        ...getTableColumns(schema.scanChecks),
        result: sql<ScanCheck["result"]>`jsonb_build_object('withinWindow', ${schema.scanChecks.result} -> 'withinWindow')`,
      }
    : schema.scanChecks;
  const [row] = await db
    .select({ check, file: schema.orderFiles })
    .from(schema.scanChecks)
    .innerJoin(schema.orderFiles, eq(schema.orderFiles.id, schema.scanChecks.fileId))
    .where(eq(schema.scanChecks.id, checkId));
  return row ?? null;
}
