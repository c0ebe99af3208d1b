// A person's in-app notifications and e-mail choices.
import { and, count, desc, eq, inArray, isNull } from "drizzle-orm";
import { db, schema } from "~/db/client.server";
import { isEssential, MILESTONE_KINDS, type MilestoneKind } from "~/domain/milestones";

export interface NotificationItem {
  id: string;
  kind: string;
  orderId: string | null;
  title: string;
  href: string;
  createdAt: string;
  read: boolean;
}

/** The newest notifications of one person, with how many are unread. */
export async function notificationsOf(userId: string, limit = 30): Promise<{ unread: number; items: NotificationItem[] }> {
  const rows = await db
    .select()
    .from(schema.notifications)
    .where(eq(schema.notifications.userId, userId))
    .orderBy(desc(schema.notifications.createdAt), desc(schema.notifications.id))
    .limit(limit);
  const [{ unread }] = await db
    .select({ unread: count() })
    .from(schema.notifications)
    .where(and(eq(schema.notifications.userId, userId), isNull(schema.notifications.readAt)));
  return {
    unread,
    items: rows.map((r) => ({
      id: r.id,
      kind: r.kind,
      orderId: r.orderId,
      title: r.title,
      href: r.href,
      createdAt: r.createdAt.toISOString(),
      read: r.readAt !== null,
    })),
  };
}

/** Marks some (or all) of one person's notifications read; other people's ids are ignored. */
export async function markRead(userId: string, ids: string[] | "all"): Promise<number> {
  const mine = and(eq(schema.notifications.userId, userId), isNull(schema.notifications.readAt));
  const where = ids === "all" ? mine : and(mine, inArray(schema.notifications.id, ids));
  if (ids !== "all" && ids.length === 0) return 0;
  const changed = await db.update(schema.notifications).set({ readAt: new Date() }).where(where).returning({ id: schema.notifications.id });
  return changed.length;
}

/** Every milestone with whether this person receives it by e-mail (essential ones always). */
export async function preferencesOf(userId: string): Promise<{ kind: MilestoneKind; emailEnabled: boolean; essential: boolean }[]> {
  const rows = await db.select().from(schema.notificationPreferences).where(eq(schema.notificationPreferences.userId, userId));
  const off = new Set(rows.filter((r) => !r.emailEnabled).map((r) => r.kind));
  return MILESTONE_KINDS.map((kind) => ({ kind, essential: isEssential(kind), emailEnabled: isEssential(kind) || !off.has(kind) }));
}

/** Saves the person's choices: the kinds listed in `enabled` stay on, every other optional one goes off. */
export async function savePreferences(userId: string, enabled: Set<MilestoneKind>) {
  const optional = MILESTONE_KINDS.filter((k) => !isEssential(k));
  await db.transaction(async (tx) => {
    await tx.delete(schema.notificationPreferences).where(eq(schema.notificationPreferences.userId, userId));
    const off = optional.filter((k) => !enabled.has(k));
    if (off.length) await tx.insert(schema.notificationPreferences).values(off.map((kind) => ({ userId, kind, emailEnabled: false })));
  });
}
