// The outbox as the admins read it: every e-mail the platform wrote, its delivery state and last error.
import { count, desc, eq } from "drizzle-orm";
import { db, schema } from "~/db/client.server";

/** Outbox rows for the admins' screen: parked first, then the newest. */
export async function outboxForAdmins(status: "parked" | "queued" | "sent" | "all", limit = 200) {
  const base = db
    .select({
      id: schema.outboxMessages.id,
      kind: schema.outboxMessages.kind,
      to: schema.outboxMessages.to,
      subject: schema.outboxMessages.subject,
      status: schema.outboxMessages.status,
      attempts: schema.outboxMessages.attempts,
      lastError: schema.outboxMessages.lastError,
      orderId: schema.outboxMessages.orderId,
      createdAt: schema.outboxMessages.createdAt,
      sentAt: schema.outboxMessages.sentAt,
    })
    .from(schema.outboxMessages);
  const rows = await (status === "all" ? base : base.where(eq(schema.outboxMessages.status, status)))
    .orderBy(desc(schema.outboxMessages.createdAt))
    .limit(limit);
  const counts = await db.select({ status: schema.outboxMessages.status, n: count() }).from(schema.outboxMessages).groupBy(schema.outboxMessages.status);
  return { rows, counts: Object.fromEntries(counts.map((c) => [c.status, c.n])) as Partial<Record<"queued" | "sent" | "parked", number>> };
}
