// Fixed-window rate limits kept in PostgreSQL, so every app server counts the same requests.
import { lt, sql } from "drizzle-orm";
import { db, schema } from "~/db/client.server";

export interface RateLimit {
  /** Requests allowed per window. */
  limit: number;
  windowSeconds: number;
}

export type RateLimitResult = { ok: true; remaining: number } | { ok: false; retryAfterSeconds: number };

/** Counts one request against `key` in the current window and says whether it is within the limit. */
export async function hitRateLimit(key: string, { limit, windowSeconds }: RateLimit, now = new Date()): Promise<RateLimitResult> {
  const windowMs = windowSeconds * 1000;
  const windowStart = new Date(Math.floor(now.getTime() / windowMs) * windowMs);
  const [row] = await db
    .insert(schema.rateLimitBuckets)
    .values({ key, windowStart, count: 1 })
    .onConflictDoUpdate({
      target: [schema.rateLimitBuckets.key, schema.rateLimitBuckets.windowStart],
      set: { count: sql`${schema.rateLimitBuckets.count} + 1` },
    })
    .returning({ count: schema.rateLimitBuckets.count });
  // Now and then, drop windows that ended long ago; the table stays small without a separate job.
  if (row.count === 1 && Math.random() < 0.01) {
    await db.delete(schema.rateLimitBuckets).where(lt(schema.rateLimitBuckets.windowStart, new Date(now.getTime() - 24 * 3600_000)));
  }
  if (row.count <= limit) return { ok: true, remaining: limit - row.count };
  return { ok: false, retryAfterSeconds: Math.max(1, Math.ceil((windowStart.getTime() + windowMs - now.getTime()) / 1000)) };
}

/** The JSON 429 answer for a refused request, with `Retry-After` in seconds. */
export function rateLimitedResponse(result: Extract<RateLimitResult, { ok: false }>) {
  return Response.json(
    { error: `Too many requests; try again in ${result.retryAfterSeconds} s.` },
    { status: 429, headers: { "Retry-After": String(result.retryAfterSeconds) } },
  );
}
