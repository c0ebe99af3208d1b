// Indicative exchange rates an admin sets and dates; quotes in other currencies are compared at the latest one
// (docs/design.md#currencies). Each rate set is audit-logged.
import { desc, inArray, or } from "drizzle-orm";
import { db, schema } from "~/db/client.server";
import type { RateRow } from "~/domain/exchange";
import { parseRate, rateText } from "~/domain/exchange";
import { CURRENCIES } from "~/domain/money";
import { audit } from "~/models/audit.server";

export interface RateInput {
  base: string;
  quote: string;
  rate: string;
  asOf: string;
  source: string;
}

const ISO_DAY = /^\d{4}-\d{2}-\d{2}$/;

/** Field problems of a rate as typed, one sentence each; empty when it can be kept. */
export function rateProblems(input: RateInput, today = new Date()): Partial<Record<keyof RateInput, string>> {
  const problems: Partial<Record<keyof RateInput, string>> = {};
  const known = (c: string) => (CURRENCIES as readonly string[]).includes(c);
  if (!known(input.base)) problems.base = "Choose the currency one unit of which the rate prices.";
  if (!known(input.quote)) problems.quote = "Choose the currency the rate is given in.";
  else if (input.quote === input.base) problems.quote = "Choose two different currencies.";
  if (parseRate(input.rate) === null) problems.rate = "Give the rate as a positive number with at most 8 decimals, e.g. 1.0850.";
  const day = new Date(`${input.asOf}T00:00:00Z`);
  if (!ISO_DAY.test(input.asOf) || Number.isNaN(day.getTime()) || day.toISOString().slice(0, 10) !== input.asOf) {
    problems.asOf = "Give the day the rate is for.";
  } else if (day.getTime() > today.getTime() + 86_400_000) problems.asOf = "A rate's day cannot be in the future.";
  else if (input.asOf < "2000-01-01") problems.asOf = "Give a day from 2000 on.";
  const source = input.source.trim();
  if (!source) problems.source = "Say where the rate comes from (a bank's reference rate, a newspaper, an agreement…).";
  else if (source.length > 200) problems.source = "Keep the source under 200 characters.";
  return problems;
}

/** Keeps a rate an admin set (checked first with rateProblems), audit-logged in the same transaction. */
export async function setExchangeRate(input: RateInput, userId: string | null) {
  const rate = rateText(parseRate(input.rate) as bigint);
  return db.transaction(async (tx) => {
    const [row] = await tx
      .insert(schema.exchangeRates)
      .values({ base: input.base, quote: input.quote, rate, asOf: input.asOf, source: input.source.trim(), setBy: userId })
      .returning();
    await audit(
      {
        actorUserId: userId,
        action: "exchange_rate_set",
        subjectType: "exchange_rate",
        subjectId: row.id,
        details: { base: input.base, quote: input.quote, rate, asOf: input.asOf, source: input.source.trim() },
      },
      tx,
    );
    return row;
  });
}

/** What a rate reads as, for the admin's list and for converting quotes. */
const RATE_COLUMNS = {
  base: schema.exchangeRates.base,
  quote: schema.exchangeRates.quote,
  rate: schema.exchangeRates.rate,
  asOf: schema.exchangeRates.asOf,
  source: schema.exchangeRates.source,
  setAt: schema.exchangeRates.setAt,
};

/** The rates set most recently, newest first, with who set them. */
export async function recentRates(limit = 50) {
  return db
    .select({ id: schema.exchangeRates.id, ...RATE_COLUMNS })
    .from(schema.exchangeRates)
    .orderBy(desc(schema.exchangeRates.setAt))
    .limit(limit);
}

/** Every rate between the given currencies (either direction), for picking the latest per pair. */
export async function ratesAmong(currencies: string[]): Promise<RateRow[]> {
  if (currencies.length < 2) return [];
  const rows = await db
    .select(RATE_COLUMNS)
    .from(schema.exchangeRates)
    .where(or(inArray(schema.exchangeRates.base, currencies), inArray(schema.exchangeRates.quote, currencies)));
  return rows.filter((r) => currencies.includes(r.base) && currencies.includes(r.quote));
}
