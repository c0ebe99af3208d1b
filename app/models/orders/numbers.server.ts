// Taking an order's number inside the transaction that creates the order (docs/design.md#order-numbers).
import { eq, sql } from "drizzle-orm";
import { schema, type Tx } from "~/db/client.server";
import { derivePrefix, formatOrderNumber, prefixCandidate } from "~/domain/order-number";

const isUniqueViolation = (err: unknown) => (err as { cause?: { code?: string } })?.cause?.code === "23505" || (err as { code?: string })?.code === "23505";

/**
 * The organisation's order prefix, given from its name's initials at its first order. The organisation row is
 * locked while the prefix is chosen; each try sits in a savepoint so that another organisation taking the same
 * letters at the same moment moves this one on to the next candidate instead of failing the order.
 */
export async function orderPrefixOf(tx: Tx, organisationId: string): Promise<string> {
  const [org] = await tx
    .select({ name: schema.organisations.name, prefix: schema.organisations.orderPrefix })
    .from(schema.organisations)
    .where(eq(schema.organisations.id, organisationId))
    .for("no key update");
  if (!org) throw new Error(`No organisation ${organisationId}`);
  if (org.prefix) return org.prefix;
  const base = derivePrefix(org.name);
  const taken = new Set(
    (
      await tx
        .select({ prefix: schema.organisations.orderPrefix })
        .from(schema.organisations)
        .where(sql`${schema.organisations.orderPrefix} ~ ${`^${base}[0-9]*$`}`)
    ).map((r) => r.prefix),
  );
  for (let attempt = 1; attempt < 1000; attempt++) {
    const candidate = prefixCandidate(base, attempt);
    if (taken.has(candidate)) continue;
    try {
      await tx.transaction(async (sp) => {
        await sp.update(schema.organisations).set({ orderPrefix: candidate }).where(eq(schema.organisations.id, organisationId));
      });
      return candidate;
    } catch (err) {
      if (!isUniqueViolation(err)) throw err;
    }
  }
  throw new Error(`No free order prefix for ${base}`);
}

/**
 * The next order number of the client organisation for the year of `at` (UTC). The counter row is taken by an
 * upsert that keeps it locked until the order's transaction ends: concurrent orders of one organisation wait
 * for each other, and a rolled-back order gives its number back, so the sequence has no gaps.
 */
export async function takeOrderNumber(tx: Tx, organisationId: string, at: Date = new Date()): Promise<string> {
  const prefix = await orderPrefixOf(tx, organisationId);
  const year = at.getUTCFullYear();
  const c = schema.orderNumberCounters;
  const [row] = await tx
    .insert(c)
    .values({ organisationId, year, lastSeq: 1 })
    .onConflictDoUpdate({ target: [c.organisationId, c.year], set: { lastSeq: sql`${c.lastSeq} + 1` } })
    .returning({ seq: c.lastSeq });
  return formatOrderNumber(prefix, year, row.seq);
}
