// Failed sign-ins are limited per e-mail and per address, counted in PostgreSQL so every app server agrees.
import { and, count, eq, gt } from "drizzle-orm";
import { config } from "~/config.server";
import { db, schema } from "~/db/client.server";

const { maxFailures, windowMinutes } = config.signIn;

export async function tooManyFailures(email: string, clientAddress: string) {
  const since = new Date(Date.now() - windowMinutes * 60_000);
  const t = schema.signInAttempts;
  const [byEmail, byAddress] = await Promise.all([
    db
      .select({ n: count() })
      .from(t)
      .where(and(eq(t.email, email), eq(t.succeeded, false), gt(t.at, since))),
    db
      .select({ n: count() })
      .from(t)
      .where(and(eq(t.clientAddress, clientAddress), eq(t.succeeded, false), gt(t.at, since))),
  ]);
  return byEmail[0].n >= maxFailures || byAddress[0].n >= maxFailures;
}

export async function recordSignInAttempt(email: string, clientAddress: string, succeeded: boolean) {
  await db.insert(schema.signInAttempts).values({ email, clientAddress, succeeded });
}

export const TOO_MANY_ATTEMPTS = `Too many failed sign-in attempts. Wait ${windowMinutes} minutes before trying again.`;
