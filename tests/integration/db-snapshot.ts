// "Changes nothing", measured: every table's row count and a hash of its rows, compared before and after.
import type { RouteAnswer } from "./route-call";

// Rows that any request may touch by design: the session's last-seen time and a token's last use (their
// counts are compared, not their contents), and the per-token rate-limit counters, which count refused calls too.
const COUNT_ONLY = new Set(["sessions", "api_tokens"]);
const IGNORED = new Set(["rate_limit_buckets"]);

type Query = { query<R>(sql: string): Promise<{ rows: R[] }> };

async function client(): Promise<Query> {
  return (await import("~/db/client.server")).db.$client as unknown as Query;
}

export async function snapshot(): Promise<Record<string, string>> {
  const pg = await client();
  const { rows: tables } = await pg.query<{ name: string }>(
    "select table_name as name from information_schema.tables where table_schema = 'public' and table_type = 'BASE TABLE' order by 1",
  );
  const out: Record<string, string> = {};
  for (const { name } of tables) {
    if (IGNORED.has(name)) continue;
    const { rows } = await pg.query<{ n: number; h: string }>(
      `select count(*)::int as n, md5(coalesce(string_agg(t::text, '|' order by t::text), '')) as h from "${name}" t`,
    );
    out[name] = COUNT_ONLY.has(name) ? `${rows[0].n} rows` : `${rows[0].n} rows ${rows[0].h}`;
  }
  return out;
}

export function changedTables(before: Record<string, string>, after: Record<string, string>) {
  return Object.keys({ ...before, ...after }).filter((t) => before[t] !== after[t]);
}

/** What the person sees: the answer's text, or every message in a JSON/data answer. */
export function shown(answer: Pick<RouteAnswer, "body">): string {
  if (typeof answer.body === "string") return answer.body;
  const messages: string[] = [];
  const walk = (v: unknown, key = "") => {
    if (key === "initialValue") return; // conform echoes the submitted fields back; those are not messages
    if (typeof v === "string") messages.push(v);
    else if (Array.isArray(v)) v.forEach((x) => walk(x));
    else if (v && typeof v === "object") for (const [k, x] of Object.entries(v)) walk(x, k);
  };
  walk(answer.body);
  return messages.join(" | ");
}
