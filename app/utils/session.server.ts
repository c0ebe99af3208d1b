// Server-side sessions: a random token in an httpOnly cookie, its SHA-256 as the row id in PostgreSQL.
import { createHash, randomBytes } from "node:crypto";
import { and, eq, gt } from "drizzle-orm";
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

const tokenHash = (token: string) => createHash("sha256").update(token).digest("hex");

export async function readSessionToken(request: Request): Promise<string | null> {
  const value = await sessionCookie.parse(request.headers.get("Cookie"));
  return typeof value === "string" && value.length > 20 ? value : null;
}

/** Loads the live session of a request with its user, or null. */
export async function getSession(request: Request) {
  const token = await readSessionToken(request);
  if (!token) return null;
  const rows = await db
    .select({ session: schema.sessions, user: schema.users })
    .from(schema.sessions)
    .innerJoin(schema.users, eq(schema.users.id, schema.sessions.userId))
    .where(and(eq(schema.sessions.id, tokenHash(token)), gt(schema.sessions.expiresAt, new Date())))
    .limit(1);
  return rows[0] ?? null;
}

/**
 * Starts a new session (a fresh token, so a session id known before sign-in is worthless after it)
 * and returns the Set-Cookie header. Any session the request carried is ended.
 */
export async function startSession(request: Request, userId: string, activeOrganisationId: string | null) {
  await endSession(request);
  const token = randomBytes(32).toString("base64url");
  await db.insert(schema.sessions).values({
    id: tokenHash(token),
    userId,
    activeOrganisationId,
    expiresAt: new Date(Date.now() + config.sessionDays * 24 * 3600 * 1000),
  });
  return sessionCookie.serialize(token);
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
