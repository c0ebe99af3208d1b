// Password reset by e-mail: a single-use link valid for an hour; using it sets the password, ends every session
// of the person and voids their other reset links. The link carries a random token, the table keeps its SHA-256.
import { createHash, randomBytes } from "node:crypto";
import { and, eq, gt, isNull, sql } from "drizzle-orm";
import { db, schema } from "~/db/client.server";
import type { PasswordResetToken } from "~/db/schema";
import { notify } from "~/models/notifications/outbox.server";
import { audit } from "~/models/audit.server";
import { normaliseEmail } from "~/utils/auth.server";
import { hashPassword } from "~/models/accounts/password.server";
import { hitRateLimit } from "~/utils/rate-limit.server";
import { endAllSessionsOf } from "~/utils/session.server";

const hashToken = (token: string) => createHash("sha256").update(token).digest("hex");

export const RESET_MINUTES = 60;
/** Requests per address and per e-mail in an hour; counted whether or not the account exists. */
export const RESET_REQUESTS_PER_HOUR = { address: 10, email: 3 };

/** The one answer to a reset request, whether or not there is such an account. */
export const RESET_REQUESTED = "If an account uses this e-mail address, we have sent it a link to choose a new password. The link works once, for one hour.";
export const RESET_TOO_MANY = "Too many reset requests from here or for this address. Wait an hour before asking again.";

export type ResetRequestResult = { ok: true } | { ok: false; retryAfterSeconds: number };

/**
 * Asks for a reset link. The answer does not say whether the account exists; the rate limits count the
 * request either way. For an existing account the token row and its e-mail are written in one transaction.
 */
export async function requestPasswordReset(input: { email: string; clientAddress: string }): Promise<ResetRequestResult> {
  const email = normaliseEmail(input.email);
  const hour = { windowSeconds: 3600 };
  const byAddress = await hitRateLimit(`password-reset:address:${input.clientAddress}`, { limit: RESET_REQUESTS_PER_HOUR.address, ...hour });
  if (!byAddress.ok) return { ok: false, retryAfterSeconds: byAddress.retryAfterSeconds };
  const byEmail = await hitRateLimit(`password-reset:email:${email}`, { limit: RESET_REQUESTS_PER_HOUR.email, ...hour });
  if (!byEmail.ok) return { ok: false, retryAfterSeconds: byEmail.retryAfterSeconds };

  const [user] = await db.select().from(schema.users).where(sql`lower(${schema.users.email}) = ${email}`).limit(1);
  if (!user) return { ok: true };
  const token = randomBytes(32).toString("base64url");
  const now = new Date();
  await db.transaction(async (tx) => {
    const [row] = await tx
      .insert(schema.passwordResetTokens)
      .values({ userId: user.id, tokenHash: hashToken(token), createdAt: now, expiresAt: new Date(now.getTime() + RESET_MINUTES * 60_000) })
      .returning();
    await audit({ actorUserId: user.id, action: "password_reset_requested", subjectType: "user", subjectId: user.id, clientAddress: input.clientAddress }, tx);
    await notify(tx, { kind: "password_reset", tokenId: row.id, token });
  });
  return { ok: true };
}

export type ResetTokenStatus = "valid" | "expired" | "used" | "unknown";

const statusOf = (t: PasswordResetToken | undefined, now = Date.now()): ResetTokenStatus =>
  !t ? "unknown" : t.usedAt ? "used" : t.expiresAt.getTime() <= now ? "expired" : "valid";

export const RESET_PROBLEMS: Record<Exclude<ResetTokenStatus, "valid">, string> = {
  unknown: "This reset link is not valid. Check that the whole link from the e-mail was opened, or ask for a new one.",
  expired: "This reset link has expired: links work for one hour. Ask for a new one.",
  used: "This reset link has already been used. Ask for a new one if you need to change your password again.",
};

async function findToken(token: string) {
  if (!token || token.length > 100) return undefined;
  const [row] = await db
    .select()
    .from(schema.passwordResetTokens)
    .where(eq(schema.passwordResetTokens.tokenHash, hashToken(token)));
  return row;
}

/** Whether a link can still be used, and for which address. */
export async function resolveResetToken(token: string) {
  const row = await findToken(token);
  const status = statusOf(row);
  if (status !== "valid" || !row) return { status } as const;
  const [user] = await db.select({ email: schema.users.email }).from(schema.users).where(eq(schema.users.id, row.userId));
  return { status, email: user?.email ?? "" } as const;
}

export type ResetResult = { ok: true; userId: string; sessionsEnded: number } | { ok: false; status: Exclude<ResetTokenStatus, "valid"> };

/**
 * Sets the new password through a link. The token row is locked, so two submissions of the same link
 * cannot both succeed; everything (password, token, other tokens, sessions) changes in one transaction.
 */
export async function resetPassword(input: { token: string; password: string; clientAddress: string }): Promise<ResetResult> {
  const found = await findToken(input.token);
  if (statusOf(found) !== "valid" || !found) return { ok: false, status: statusOf(found) as Exclude<ResetTokenStatus, "valid"> };
  const passwordHash = await hashPassword(input.password);
  return db.transaction(async (tx) => {
    const [row] = await tx.select().from(schema.passwordResetTokens).where(eq(schema.passwordResetTokens.id, found.id)).for("update");
    const status = statusOf(row);
    if (status !== "valid") return { ok: false, status };
    const now = new Date();
    await tx.update(schema.users).set({ passwordHash, passwordChangedAt: now }).where(eq(schema.users.id, row.userId));
    await tx.update(schema.passwordResetTokens).set({ usedAt: now }).where(eq(schema.passwordResetTokens.id, row.id));
    await voidOpenResetTokens(row.userId, tx, now);
    const sessionsEnded = await endAllSessionsOf(row.userId, tx);
    await audit(
      {
        actorUserId: row.userId,
        action: "password_reset",
        subjectType: "user",
        subjectId: row.userId,
        details: { sessionsEnded },
        clientAddress: input.clientAddress,
      },
      tx,
    );
    return { ok: true, userId: row.userId, sessionsEnded };
  });
}

/** Marks a person's unused, unexpired reset links used (after any password change). */
export async function voidOpenResetTokens(userId: string, tx: Pick<typeof db, "update"> = db, now = new Date()) {
  const t = schema.passwordResetTokens;
  await tx
    .update(t)
    .set({ usedAt: now })
    .where(and(eq(t.userId, userId), isNull(t.usedAt), gt(t.expiresAt, now)));
}
