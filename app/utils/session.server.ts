// Server-side sessions: a random token in an httpOnly cookie, its SHA-256 as the row id in PostgreSQL.
import { createHash, randomBytes } from "node:crypto";
import { and, eq, gt, sql } from "drizzle-orm";
import { createCookie } from "react-router";
import { config } from "~/config.server";
import { db, schema } from "~/db/client.server";

export const sessionCookie = createCookie("diffractory_session", {
  httpOnly: true,
  sameSite: "lax",
  path: "/",
  secure: config.isProduction,
  secrets: [config.sessionSecret],
  maxAge: config.sessionDays * 24 * 3600,
});

export const tokenHash = (token: string) => createHash("sha256").update(token).digest("hex");

// Checking the cookie's signature (WebCrypto: a key import and an HMAC each time) was the dearest part of
// reading a session. A given Cookie header always checks out the same way, so recent answers are kept, by
// header, in a small map that forgets its oldest entry when full; the session row is still read every time.
const checkedHeaders = new Map<string, string | null>();
const CHECKED_HEADERS_KEPT = 500;
const CHECKED_HEADER_MAX_LENGTH = 2048;

export async function readSessionToken(request: Request): Promise<string | null> {
  const header = request.headers.get("Cookie");
  if (!header) return null;
  const kept = checkedHeaders.get(header);
  if (kept !== undefined) return kept;
  const value = await sessionCookie.parse(header);
  const token = typeof value === "string" && value.length > 20 ? value : null;
  if (header.length <= CHECKED_HEADER_MAX_LENGTH) {
    if (checkedHeaders.size >= CHECKED_HEADERS_KEPT) checkedHeaders.delete(checkedHeaders.keys().next().value!);
    checkedHeaders.set(header, token);
  }
  return token;
}

/**
 * Loads the live session of a request with its user, or null. A session still waiting for its
 * second-factor code comes back too (`session.awaitingSecondFactor`); the permission checks refuse it.
 */
export async function getSession(request: Request) {
  const token = await readSessionToken(request);
  if (!token) return null;
  const rows = await sessionByToken.execute({ id: tokenHash(token), now: new Date() });
  return rows[0] ?? null;
}

// Every page reads it: a named prepared statement, built once here and planned once per connection.
const sessionByToken = db
  .select({ session: schema.sessions, user: schema.users })
  .from(schema.sessions)
  .innerJoin(schema.users, eq(schema.users.id, schema.sessions.userId))
  .where(and(eq(schema.sessions.id, sql.placeholder("id")), gt(schema.sessions.expiresAt, sql.placeholder("now"))))
  .limit(1)
  .prepare("session_by_token");

/**
 * Starts a new session (a fresh token, so a session id known before sign-in is worthless after it)
 * and returns the Set-Cookie header. Any session the request carried is ended. A session started after
 * the password of someone with a second factor is `awaitingSecondFactor` until the code is given.
 */
export async function startSession(request: Request, userId: string, activeOrganisationId: string | null, options: { awaitingSecondFactor?: boolean } = {}) {
  await endSession(request);
  const token = randomBytes(32).toString("base64url");
  await db.insert(schema.sessions).values({
    id: tokenHash(token),
    userId,
    activeOrganisationId,
    awaitingSecondFactor: options.awaitingSecondFactor ?? false,
    expiresAt: new Date(Date.now() + config.sessionDays * 24 * 3600 * 1000),
  });
  return sessionCookie.serialize(token);
}

/** Ends every session of a person (after a password change or reset); returns how many there were. */
export async function endAllSessionsOf(userId: string, tx: Pick<typeof db, "delete"> = db) {
  const gone = await tx.delete(schema.sessions).where(eq(schema.sessions.userId, userId)).returning({ id: schema.sessions.id });
  return gone.length;
}

/** Counts one wrong second-factor code against the request's waiting session; returns the count so far. */
export async function countSecondFactorFailure(request: Request) {
  const token = await readSessionToken(request);
  if (!token) return 0;
  const [row] = await db
    .update(schema.sessions)
    .set({ secondFactorFailures: sql`${schema.sessions.secondFactorFailures} + 1` })
    .where(and(eq(schema.sessions.id, tokenHash(token)), eq(schema.sessions.awaitingSecondFactor, true)))
    .returning({ failures: schema.sessions.secondFactorFailures });
  return row?.failures ?? 0;
}

export async function endSession(request: Request) {
  const token = await readSessionToken(request);
  if (token) await db.delete(schema.sessions).where(eq(schema.sessions.id, tokenHash(token)));
  return sessionCookie.serialize("", { maxAge: 0 });
}

export async function setActiveOrganisation(request: Request, organisationId: string) {
  const token = await readSessionToken(request);
  if (!token) return;
  await db
    .update(schema.sessions)
    .set({ activeOrganisationId: organisationId })
    .where(eq(schema.sessions.id, tokenHash(token)));
}
