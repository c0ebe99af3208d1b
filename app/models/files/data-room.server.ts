// The client's data room: one page of the organisation's orders that have files to show, newest change first, and
// the page's files read in one query (not one query per order).
import { and, asc, desc, eq, exists, inArray, isNull, sql } from "drizzle-orm";
import { db, schema } from "~/db/client.server";
import { pageOf, type TableQuery } from "~/utils/table";
import { checkSummaryColumns } from "./files.server";

export const DATA_ROOM_PAGE_SIZE = 25;

/** A file the client sees in the data room: stored, not deleted, not archived (as orderFileList's client side). */
const clientVisible = and(eq(schema.orderFiles.state, "stored"), isNull(schema.orderFiles.deletedAt), isNull(schema.orderFiles.archivedAt));

/**
 * One page of the client organisation's orders with at least one visible file, newest change first (oldest first
 * with `dir` asc), each with its visible files (by name, newest version first) and their checks; and how many such
 * orders there are. A page past the end gives the last page.
 */
export async function dataRoomPage(organisationId: string, q: Pick<TableQuery, "page" | "pageSize" | "dir">) {
  const hasFiles = exists(
    db
      .select({ one: sql`1` })
      .from(schema.orderFiles)
      .where(and(eq(schema.orderFiles.orderId, schema.orders.id), clientVisible)),
  );
  const own = and(eq(schema.orders.clientOrganisationId, organisationId), hasFiles);
  const [{ total }] = await db.select({ total: sql<number>`count(*)::int` }).from(schema.orders).where(own);
  const info = pageOf(total, q);
  const orders = await db
    .select({
      id: schema.orders.id,
      state: schema.orders.state,
      title: schema.requests.title,
      lab: schema.organisations.name,
      updatedAt: schema.orders.updatedAt,
    })
    .from(schema.orders)
    .innerJoin(schema.requests, eq(schema.requests.id, schema.orders.requestId))
    .innerJoin(schema.organisations, eq(schema.organisations.id, schema.orders.labId))
    .where(own)
    // The id breaks ties so that an order never shows on two pages.
    .orderBy(q.dir === "asc" ? asc(schema.orders.updatedAt) : desc(schema.orders.updatedAt), asc(schema.orders.id))
    .limit(info.pageSize)
    .offset(info.offset);
  const files = orders.length
    ? await db
        .select({
          orderId: schema.orderFiles.orderId,
          id: schema.orderFiles.id,
          name: schema.orderFiles.name,
          version: schema.orderFiles.version,
          kind: schema.orderFiles.kind,
          size: schema.orderFiles.sizeBytes,
          check: checkSummaryColumns,
        })
        .from(schema.orderFiles)
        .leftJoin(schema.scanChecks, eq(schema.scanChecks.fileId, schema.orderFiles.id))
        .where(
          and(
            inArray(
              schema.orderFiles.orderId,
              orders.map((o) => o.id),
            ),
            clientVisible,
          ),
        )
        .orderBy(asc(schema.orderFiles.name), desc(schema.orderFiles.version))
    : [];
  const shaped = files.map(({ orderId, check, ...file }) => ({
    orderId,
    file: { ...file, check: check?.id ? { ...check, finishedAt: check.finishedAt?.toISOString() ?? null } : null },
  }));
  const byOrder = new Map<string, (typeof shaped)[number]["file"][]>();
  for (const { orderId, file } of shaped) {
    const list = byOrder.get(orderId);
    if (list) list.push(file);
    else byOrder.set(orderId, [file]);
  }
  return { orders: orders.map((o) => ({ ...o, files: byOrder.get(o.id) ?? [] })), ...info };
}
