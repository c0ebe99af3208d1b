// Failed sign-ins are limited per e-mail and per address, counted in PostgreSQL so every app server agrees.
import { and, count, eq, gt, sql } from "drizzle-orm";
import { config } from "~/config.server";
import { db, schema } from "~/db/client.server";

const { maxFailures, windowMinutes } = config.signIn;

// Advisory-lock classes (the two-key form, a key space of its own): one e-mail's attempts, one address's.
const EMAIL_LOCK = 7301;
const ADDRESS_LOCK = 7302;

/**
 * Reserves one attempt before the password (or code) is checked: it counts as a failure from now on, until
 * `signInAttemptSucceeded` says otherwise. Null when the e-mail or the address has reached the limit. Counting
 * and reserving hold the e-mail's and then the address's lock, so attempts sent at once take their turns and
 * never more than the limit are checked; the locks end with the transaction, before the check starts.
 */
export async function reserveSignInAttempt(email: string, clientAddress: string): Promise<number | null> {
  const since = new Date(Date.now() - windowMinutes * 60_000);
  const t = schema.signInAttempts;
  return db.transaction(async (tx) => {
    // Always the e-mail first, then the address, so two attempts never wait for each other in a circle.
    await tx.execute(sql`select pg_advisory_xact_lock(${EMAIL_LOCK}, hashtext(${email}))`);
    await tx.execute(sql`select pg_advisory_xact_lock(${ADDRESS_LOCK}, hashtext(${clientAddress}))`);
    const failures = (column: typeof t.email | typeof t.clientAddress, value: string) =>
      tx
        .select({ n: count() })
        .from(t)
        .where(and(eq(column, value), eq(t.succeeded, false), gt(t.at, since)));
    const [[byEmail], [byAddress]] = await Promise.all([failures(t.email, email), failures(t.clientAddress, clientAddress)]);
    if (byEmail.n >= maxFailures || byAddress.n >= maxFailures) return null;
    const [row] = await tx.insert(t).values({ email, clientAddress, succeeded: false }).returning({ id: t.id });
    return row.id;
  });
}

/** The reserved attempt passed its check: it no longer counts against the limit. */
export async function signInAttemptSucceeded(attemptId: number) {
  await db.update(schema.signInAttempts).set({ succeeded: true }).where(eq(schema.signInAttempts.id, attemptId));
}

export const TOO_MANY_ATTEMPTS = `Too many failed sign-in attempts. Wait ${windowMinutes} minutes before trying again.`;
