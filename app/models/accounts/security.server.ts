// A person's own account security: changing the password, and the TOTP second factor (enrol, confirm, disable, check at sign-in).
import { and, eq, isNull, lt, or } from "drizzle-orm";
import { db, schema } from "~/db/client.server";
import type { User } from "~/db/schema";
import { audit } from "~/models/audit.server";
import { hashPassword, verifyPassword } from "~/models/accounts/password.server";
import { endAllSessionsOf } from "~/utils/session.server";
import { checkTotpCode, newTotpSecret, TOTP_MESSAGES, type TotpCheck } from "~/models/accounts/totp.server";
import { voidOpenResetTokens } from "~/models/accounts/password-reset.server";

/** Wrong second-factor codes one waiting session may try before it is ended (the per-e-mail sign-in limit also counts them). */
export const SECOND_FACTOR_TRIES = 5;

export type Outcome = { ok: true } | { ok: false; field: "currentPassword" | "password" | "code"; message: string };

/**
 * Changes the password after checking the current one; every session of the person ends (the caller starts
 * a fresh one for the device that asked) and open reset links stop working.
 */
export async function changePassword(input: {
  user: User;
  currentPassword: string;
  newPassword: string;
  clientAddress: string;
}): Promise<Outcome & { sessionsEnded?: number }> {
  if (!(await verifyPassword(input.user.passwordHash, input.currentPassword)))
    return { ok: false, field: "currentPassword", message: "The current password is not right." };
  if (input.currentPassword === input.newPassword) return { ok: false, field: "password", message: "Choose a password different from the current one." };
  const passwordHash = await hashPassword(input.newPassword);
  const sessionsEnded = await db.transaction(async (tx) => {
    const now = new Date();
    await tx.update(schema.users).set({ passwordHash, passwordChangedAt: now }).where(eq(schema.users.id, input.user.id));
    await voidOpenResetTokens(input.user.id, tx, now);
    const ended = await endAllSessionsOf(input.user.id, tx);
    await audit(
      {
        actorUserId: input.user.id,
        action: "password_changed",
        subjectType: "user",
        subjectId: input.user.id,
        details: { otherSessionsEnded: Math.max(0, ended - 1) },
        clientAddress: input.clientAddress,
      },
      tx,
    );
    return ended;
  });
  return { ok: true, sessionsEnded: Math.max(0, sessionsEnded - 1) };
}

/**
 * Checks a code and, when right, records its time step as the last one used — in one conditional UPDATE,
 * so two requests with the same code cannot both pass (RFC 6238 §5.2: a code is accepted once).
 */
export async function acceptTotpCode(user: Pick<User, "id" | "totpSecret" | "totpLastStep">, code: string, nowMs = Date.now()): Promise<TotpCheck> {
  if (!user.totpSecret) return { ok: false, reason: "wrong" };
  const check = checkTotpCode(user.totpSecret, code, user.totpLastStep, nowMs);
  if (!check.ok) return check;
  const u = schema.users;
  const updated = await db
    .update(u)
    .set({ totpLastStep: check.step })
    .where(and(eq(u.id, user.id), eq(u.totpSecret, user.totpSecret), or(isNull(u.totpLastStep), lt(u.totpLastStep, check.step))))
    .returning({ id: u.id });
  return updated.length ? check : { ok: false, reason: "replayed" };
}

/** Starts (or restarts) enrolment: a new secret waits, not yet in force, until a code from it is confirmed. */
export async function startTotpEnrolment(user: User) {
  if (user.totpEnabledAt) return { ok: false as const, message: "A second factor is already set up." };
  const secret = newTotpSecret();
  await db
    .update(schema.users)
    .set({ totpSecret: secret, totpLastStep: null })
    .where(and(eq(schema.users.id, user.id), isNull(schema.users.totpEnabledAt)));
  return { ok: true as const, secret };
}

/** Turns the waiting secret on once a code made from it is right. */
export async function confirmTotpEnrolment(input: { user: User; code: string; clientAddress: string }): Promise<Outcome> {
  const { user } = input;
  if (user.totpEnabledAt) return { ok: false, field: "code", message: "A second factor is already set up." };
  if (!user.totpSecret) return { ok: false, field: "code", message: "Start the set-up first: the secret to scan is made then." };
  const check = await acceptTotpCode(user, input.code);
  if (!check.ok) return { ok: false, field: "code", message: TOTP_MESSAGES[check.reason] };
  await db.update(schema.users).set({ totpEnabledAt: new Date() }).where(eq(schema.users.id, user.id));
  await audit({ actorUserId: user.id, action: "second_factor_enabled", subjectType: "user", subjectId: user.id, clientAddress: input.clientAddress });
  return { ok: true };
}

/** Turns the second factor off with the password and a current code; admins keep theirs. */
export async function disableTotp(input: { user: User; password: string; code: string; clientAddress: string }): Promise<Outcome> {
  const { user } = input;
  if (user.isAdmin) return { ok: false, field: "code", message: "Platform admins must keep a second factor." };
  if (!user.totpEnabledAt) return { ok: false, field: "code", message: "No second factor is set up." };
  if (!(await verifyPassword(user.passwordHash, input.password))) return { ok: false, field: "password", message: "The password is not right." };
  const check = await acceptTotpCode(user, input.code);
  if (!check.ok) return { ok: false, field: "code", message: TOTP_MESSAGES[check.reason] };
  await db.update(schema.users).set({ totpSecret: null, totpEnabledAt: null, totpLastStep: null }).where(eq(schema.users.id, user.id));
  await audit({ actorUserId: user.id, action: "second_factor_disabled", subjectType: "user", subjectId: user.id, clientAddress: input.clientAddress });
  return { ok: true };
}
