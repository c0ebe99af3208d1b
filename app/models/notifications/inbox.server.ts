// A person's in-app notifications and e-mail choices.
import { and, count, desc, eq, inArray, isNull, or } from "drizzle-orm";
import { db, schema } from "~/db/client.server";
import { isEssential, MILESTONE_KINDS, type MilestoneKind } from "~/domain/milestones";

export interface NotificationItem {
  id: string;
  kind: string;
  orderId: string | null;
  /** The organisation the notice belongs to; null for notices to the person alone (admin work, invitations). */
  organisationId: string | null;
  title: string;
  href: string;
  createdAt: string;
  read: boolean;
}

/** Which notices to read: those of one organisation (and the person's own), or all of them. */
export type InboxScope = { organisationId: string | null } | "all";

function scoped(userId: string, scope: InboxScope) {
  const mine = eq(schema.notifications.userId, userId);
  if (scope === "all") return mine;
  const own = isNull(schema.notifications.organisationId);
  return and(mine, scope.organisationId ? or(own, eq(schema.notifications.organisationId, scope.organisationId)) : own);
}

/** The newest notifications of one person in a scope, with how many of them are unread. */
export async function notificationsOf(userId: string, limit = 30, scope: InboxScope = "all"): Promise<{ unread: number; items: NotificationItem[] }> {
  const rows = await db
    .select()
    .from(schema.notifications)
    .where(scoped(userId, scope))
    .orderBy(desc(schema.notifications.createdAt), desc(schema.notifications.id))
    .limit(limit);
  const [{ unread }] = await db
    .select({ unread: count() })
    .from(schema.notifications)
    .where(and(scoped(userId, scope), isNull(schema.notifications.readAt)));
  return {
    unread,
    items: rows.map((r) => ({
      id: r.id,
      kind: r.kind,
      orderId: r.orderId,
      organisationId: r.organisationId,
      title: r.title,
      href: r.href,
      createdAt: r.createdAt.toISOString(),
      read: r.readAt !== null,
    })),
  };
}

/** Unread notices of each of the person's organisations other than `activeId` (those with none are left out). */
export async function unreadElsewhere(
  userId: string,
  activeId: string | null,
  organisations: { id: string; name: string }[],
): Promise<{ organisationId: string; name: string; unread: number }[]> {
  const others = organisations.filter((o) => o.id !== activeId);
  if (others.length === 0) return [];
  const rows = await db
    .select({ organisationId: schema.notifications.organisationId, unread: count() })
    .from(schema.notifications)
    .where(
      and(
        eq(schema.notifications.userId, userId),
        isNull(schema.notifications.readAt),
        inArray(
          schema.notifications.organisationId,
          others.map((o) => o.id),
        ),
      ),
    )
    .groupBy(schema.notifications.organisationId);
  const byOrg = new Map(rows.map((r) => [r.organisationId, r.unread]));
  return others.flatMap((o) => (byOrg.get(o.id) ? [{ organisationId: o.id, name: o.name, unread: byOrg.get(o.id)! }] : []));
}

/** Marks some (or all in a scope) of one person's notifications read; other people's ids are ignored. */
export async function markRead(userId: string, ids: string[] | "all", scope: InboxScope = "all"): Promise<number> {
  const mine = and(scoped(userId, scope), isNull(schema.notifications.readAt));
  const where = ids === "all" ? mine : and(mine, inArray(schema.notifications.id, ids));
  if (ids !== "all" && ids.length === 0) return 0;
  const changed = await db.update(schema.notifications).set({ readAt: new Date() }).where(where).returning({ id: schema.notifications.id });
  return changed.length;
}

/** The milestones offered to this person (`kinds`, by their roles) with whether each reaches them by e-mail (essential ones always). */
export async function preferencesOf(
  userId: string,
  kinds: MilestoneKind[] = MILESTONE_KINDS,
): Promise<{ kind: MilestoneKind; emailEnabled: boolean; essential: boolean }[]> {
  const rows = await db.select().from(schema.notificationPreferences).where(eq(schema.notificationPreferences.userId, userId));
  const off = new Set(rows.filter((r) => !r.emailEnabled).map((r) => r.kind));
  return kinds.map((kind) => ({ kind, essential: isEssential(kind), emailEnabled: isEssential(kind) || !off.has(kind) }));
}

/**
 * Saves the person's choices among the kinds offered to them (`offered`): those listed in `enabled` stay on,
 * every other optional one goes off; choices about kinds not offered are left as they were.
 */
export async function savePreferences(userId: string, enabled: Set<MilestoneKind>, offered: MilestoneKind[] = MILESTONE_KINDS) {
  const optional = offered.filter((k) => !isEssential(k));
  await db.transaction(async (tx) => {
    if (optional.length)
      await tx
        .delete(schema.notificationPreferences)
        .where(and(eq(schema.notificationPreferences.userId, userId), inArray(schema.notificationPreferences.kind, optional)));
    const off = optional.filter((k) => !enabled.has(k));
    if (off.length) await tx.insert(schema.notificationPreferences).values(off.map((kind) => ({ userId, kind, emailEnabled: false })));
  });
}

/** Turns the daily digest of optional notices on or off for the person. */
export async function setDailyDigest(userId: string, on: boolean) {
  await db.update(schema.users).set({ dailyDigest: on }).where(eq(schema.users.id, userId));
}
