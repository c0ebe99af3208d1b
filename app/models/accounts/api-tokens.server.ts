// API tokens for uploads straight from a lab's instrument computers: shown once, kept as a SHA-256, revocable.
import { isUuid } from "~/domain/ids";
import { createHash, randomBytes } from "node:crypto";
import { and, desc, eq, isNull } from "drizzle-orm";
import { db, schema } from "~/db/client.server";
import type { RateLimit } from "~/utils/rate-limit.server";

/** Requests per token and minute on the upload API. */
export const API_TOKEN_RATE_LIMIT: RateLimit = { limit: 60, windowSeconds: 60 };

const TOKEN_PREFIX = "dfy_";
const hashToken = (token: string) => createHash("sha256").update(token).digest("hex");

export async function createApiToken(labId: string, name: string, userId: string) {
  const token = `${TOKEN_PREFIX}${randomBytes(30).toString("base64url")}`;
  const [row] = await db
    .insert(schema.apiTokens)
    .values({ labId, name, createdBy: userId, tokenHash: hashToken(token), prefix: token.slice(0, TOKEN_PREFIX.length + 6) })
    .returning();
  return { token, row };
}

export async function listApiTokens(labId: string) {
  const rows = await db
    .select({ token: schema.apiTokens, createdBy: schema.users.name })
    .from(schema.apiTokens)
    .leftJoin(schema.users, eq(schema.users.id, schema.apiTokens.createdBy))
    .where(eq(schema.apiTokens.labId, labId))
    .orderBy(desc(schema.apiTokens.createdAt));
  return rows.map(({ token, createdBy }) => ({
    id: token.id,
    name: token.name,
    prefix: token.prefix,
    createdBy,
    createdAt: token.createdAt.toISOString(),
    lastUsedAt: token.lastUsedAt?.toISOString() ?? null,
    revokedAt: token.revokedAt?.toISOString() ?? null,
  }));
}

export async function revokeApiToken(labId: string, tokenId: string) {
  if (!isUuid(tokenId)) return false;
  const rows = await db
    .update(schema.apiTokens)
    .set({ revokedAt: new Date() })
    .where(and(eq(schema.apiTokens.id, tokenId), eq(schema.apiTokens.labId, labId), isNull(schema.apiTokens.revokedAt)))
    .returning({ id: schema.apiTokens.id });
  return rows.length > 0;
}

/** The token a presented secret is, revoked or not; undefined when no token has that secret. */
export async function apiTokenBySecret(secret: string) {
  const [token] = await db
    .select()
    .from(schema.apiTokens)
    .where(eq(schema.apiTokens.tokenHash, hashToken(secret)));
  return token;
}

/** Notes that the token was just used, so the lab's list shows which instrument computers still upload. */
export async function markApiTokenUsed(tokenId: string) {
  await db.update(schema.apiTokens).set({ lastUsedAt: new Date() }).where(eq(schema.apiTokens.id, tokenId));
}
