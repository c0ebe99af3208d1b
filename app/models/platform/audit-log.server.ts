// Reading the audit log: who did what, when and from where, a page at a time.
import { and, asc, count, desc, eq, sql } from "drizzle-orm";
import { db, schema } from "~/db/client.server";

export type AuditLogSort = "at" | "who" | "action";

/** How many entries the audit log holds. */
export async function auditLogCount() {
  const [{ total }] = await db.select({ total: count() }).from(schema.auditLog);
  return total;
}

/**
 * One page of entries with the person's e-mail, the organisation's name and, for an order's entries, the
 * order's currency (amounts in the details are in its minor units).
 */
export async function auditLogEntries(page: { sort: AuditLogSort; dir: "asc" | "desc"; limit: number; offset: number }) {
  const by = page.dir === "asc" ? asc : desc;
  // The id breaks ties in the order entries were written.
  const order = {
    at: [by(schema.auditLog.at), by(schema.auditLog.id)],
    who: [by(sql`coalesce(${schema.users.email}, '')`), desc(schema.auditLog.id)],
    action: [by(schema.auditLog.action), desc(schema.auditLog.id)],
  }[page.sort];
  return db
    .select({
      id: schema.auditLog.id,
      at: schema.auditLog.at,
      action: schema.auditLog.action,
      subjectType: schema.auditLog.subjectType,
      subjectId: schema.auditLog.subjectId,
      clientAddress: schema.auditLog.clientAddress,
      actor: schema.users.email,
      organisation: schema.organisations.name,
      details: schema.auditLog.details,
      currency: schema.orders.currency,
    })
    .from(schema.auditLog)
    .leftJoin(schema.users, eq(schema.users.id, schema.auditLog.actorUserId))
    .leftJoin(schema.organisations, eq(schema.organisations.id, schema.auditLog.organisationId))
    .leftJoin(schema.orders, and(eq(schema.auditLog.subjectType, "order"), eq(sql`${schema.orders.id}::text`, schema.auditLog.subjectId)))
    .orderBy(...order)
    .limit(page.limit)
    .offset(page.offset);
}
