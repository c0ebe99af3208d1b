// Read-only links to one order's data room for a colleague outside the client organisation.
import { isUuid } from "~/domain/ids";
import { createHash, randomBytes } from "node:crypto";
import { and, count, desc, eq, gt, isNull } from "drizzle-orm";
import { db, schema } from "~/db/client.server";
import { SHARE_LINK_MAX_LIVE } from "~/domain/order-files";

const hashToken = (token: string) => createHash("sha256").update(token).digest("hex");

/** The order already has as many live links as one order may; the message says what to do. */
export class ShareLinkLimit extends Error {
  constructor(live: number) {
    super(
      `An order can have at most ${SHARE_LINK_MAX_LIVE} live share links at a time, and this one has ${live}. Revoke a link that is no longer needed, then create the new one.`,
    );
  }
}

/**
 * Creates a link; the token is returned once and only its SHA-256 is kept. Refused with ShareLinkLimit when the
 * order already has SHARE_LINK_MAX_LIVE links that are neither expired nor revoked: each is a key to the files
 * that someone has to keep track of, and the data room lists them all.
 */
export async function createShareLink(input: { orderId: string; organisationId: string; userId: string; label: string; expiresAt: Date }) {
  const token = randomBytes(24).toString("base64url");
  return db.transaction(async (tx) => {
    // Links of one order are counted and made one at a time: two parallel creations wait on the order's row
    // instead of both counting the same links. (NO KEY UPDATE leaves inserts that only reference the order alone.)
    await tx.select({ id: schema.orders.id }).from(schema.orders).where(eq(schema.orders.id, input.orderId)).for("no key update");
    const [{ live }] = await tx
      .select({ live: count() })
      .from(schema.shareLinks)
      .where(and(eq(schema.shareLinks.orderId, input.orderId), isNull(schema.shareLinks.revokedAt), gt(schema.shareLinks.expiresAt, new Date())));
    if (live >= SHARE_LINK_MAX_LIVE) throw new ShareLinkLimit(live);
    const [link] = await tx
      .insert(schema.shareLinks)
      .values({
        orderId: input.orderId,
        organisationId: input.organisationId,
        createdBy: input.userId,
        label: input.label,
        expiresAt: input.expiresAt,
        tokenHash: hashToken(token),
      })
      .returning();
    return { link, token };
  });
}

export async function listShareLinks(orderId: string) {
  const rows = await db
    .select({ link: schema.shareLinks, createdBy: schema.users.name })
    .from(schema.shareLinks)
    .leftJoin(schema.users, eq(schema.users.id, schema.shareLinks.createdBy))
    .where(eq(schema.shareLinks.orderId, orderId))
    .orderBy(desc(schema.shareLinks.createdAt));
  const now = Date.now();
  return rows.map(({ link, createdBy }) => ({
    id: link.id,
    label: link.label,
    createdBy,
    createdAt: link.createdAt.toISOString(),
    expiresAt: link.expiresAt.toISOString(),
    revokedAt: link.revokedAt?.toISOString() ?? null,
    status: link.revokedAt ? ("revoked" as const) : link.expiresAt.getTime() <= now ? ("expired" as const) : ("active" as const),
  }));
}

/** Revokes one of the order's links; false when there is no such active link. */
export async function revokeShareLink(orderId: string, linkId: string) {
  if (!isUuid(linkId)) return false;
  const rows = await db
    .update(schema.shareLinks)
    .set({ revokedAt: new Date() })
    .where(and(eq(schema.shareLinks.id, linkId), eq(schema.shareLinks.orderId, orderId), isNull(schema.shareLinks.revokedAt)))
    .returning({ id: schema.shareLinks.id });
  return rows.length > 0;
}

/** What heads a shared data room: the order's id, its request's title and the client organisation's name. */
export async function sharedOrderHeading(orderId: string) {
  const [row] = await db
    .select({ id: schema.orders.id, title: schema.requests.title, client: schema.organisations.name })
    .from(schema.orders)
    .innerJoin(schema.requests, eq(schema.requests.id, schema.orders.requestId))
    .innerJoin(schema.organisations, eq(schema.organisations.id, schema.orders.clientOrganisationId))
    .where(eq(schema.orders.id, orderId));
  return row;
}

export type ResolvedShareLink =
  | { status: "active"; link: typeof schema.shareLinks.$inferSelect }
  | { status: "expired" | "revoked"; link: typeof schema.shareLinks.$inferSelect }
  | null;

/** The link a token names, and whether it still opens the data room; null for an unknown token. */
export async function resolveShareLink(token: string): Promise<ResolvedShareLink> {
  if (!token || token.length > 100) return null;
  const [link] = await db
    .select()
    .from(schema.shareLinks)
    .where(eq(schema.shareLinks.tokenHash, hashToken(token)));
  if (!link) return null;
  if (link.revokedAt) return { status: "revoked", link };
  if (link.expiresAt.getTime() <= Date.now()) return { status: "expired", link };
  return { status: "active", link };
}
