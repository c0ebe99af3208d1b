// The public lab directory: approved labs filtered by what their instruments, stages, hazards and prices allow.
import { config } from "~/config.server";
import { createHash } from "node:crypto";
import { eq, sql, type SQL } from "drizzle-orm";
import { db, schema } from "~/db/client.server";
import { purgePublicCache } from "~/utils/public-cache.server";
import { ANODE_LINES, ANODES } from "~/diffraction/wavelengths";
import { PAGE_SIZE, type DirectoryFilters } from "~/domain/directory-query";
import { accuracyText, onTimeText, RECORD_MONTHS, type InstrumentAccuracy, type OnTimeRecord } from "~/domain/calibration-record";

/** Kα1 of the instrument's anode, or its custom wavelength (Å). */
const wavelengthSql = sql.raw(`(case i.anode ${ANODES.map((a) => `when '${a}' then ${ANODE_LINES[a].kAlpha1}`).join(" ")} else i.custom_wavelength end)`);
/** Bragg's law: the smallest d an instrument reaches is λ / (2 sin θmax). */
const minDSql = sql`(${wavelengthSql} / (2 * sin(radians(i.two_theta_max / 2))))`;

export interface DirectoryLab {
  slug: string;
  name: string;
  city: string | null;
  country: string | null;
  techniques: string[];
  sources: string[];
  minD: number | null;
  temperatureRangeK: [number, number] | null;
  priceFrom: number | null;
  currency: string | null;
  turnaroundDays: number | null;
  /** Each active instrument's measured accuracy over the last 12 months (docs/design.md#calibration-on-record). */
  accuracy: (Omit<InstrumentAccuracy, "instrumentId"> & { text: string })[];
  /** Orders delivered by their due date, of all delivered with one, in the last 12 months. */
  onTime: OnTimeRecord & { text: string };
}

/** A row of the directory query. */
export type DirectoryRow = {
  slug: string;
  name: string;
  city: string | null;
  country: string | null;
  techniques: string[] | null;
  sources: string[] | null;
  min_d: number | null;
  t_min: number | null;
  t_max: number | null;
  price_from: number | null;
  currency: string | null;
  turnaround_days: number | null;
  accuracy?: { instrument_name: string; standard: string | null; mean: number | null; scans: number }[] | null;
  on_time?: number | string | null;
  delivered?: number | string | null;
  total: string;
};

export async function searchDirectory(f: DirectoryFilters): Promise<{ labs: DirectoryLab[]; total: number; page: number }> {
  const where: SQL[] = [sql`l.vetting_state = 'approved'`];
  const instrumentConditions: SQL[] = [sql`i.lab_id = l.organisation_id`, sql`i.active`];
  if (f.technique) instrumentConditions.push(sql`i.technique = ${f.technique}`);
  if (f.source) instrumentConditions.push(sql`i.anode = ${f.source}`);
  if (f.dMin !== undefined) instrumentConditions.push(sql`${minDSql} <= ${f.dMin}`);
  if (f.temperatureK !== undefined) {
    instrumentConditions.push(
      sql`exists (select 1 from sample_stages s where s.instrument_id = i.id and ${f.temperatureK} between s.min_temperature_k and s.max_temperature_k)`,
    );
  }
  // One instrument must satisfy every instrument filter at once.
  if (instrumentConditions.length > 2) where.push(sql`exists (select 1 from instruments i where ${sql.join(instrumentConditions, sql` and `)})`);
  const pictograms = f.hazard.filter((h) => h.startsWith("GHS"));
  const categories = f.hazard.filter((h) => !h.startsWith("GHS"));
  if (pictograms.length) where.push(sql`h.pictograms @> ${`{${pictograms.join(",")}}`}::text[]`);
  if (categories.length) where.push(sql`h.special_categories @> ${`{${categories.join(",")}}`}::text[]`);
  const priceExpr = f.technique ? sql`(p.per_sample_minor ->> ${f.technique})::int` : sql`(select min(value::int) from jsonb_each_text(p.per_sample_minor))`;
  if (f.maxPrice !== undefined) where.push(sql`${priceExpr} <= ${Math.round(f.maxPrice * 100)}`);
  if (f.turnaroundDays !== undefined) where.push(sql`p.turnaround_days <= ${f.turnaroundDays}`);
  if (f.q) {
    const like = `%${f.q.replace(/[\\%_]/g, (c) => `\\${c}`)}%`;
    where.push(sql`(o.name ilike ${like} or o.city ilike ${like} or o.country ilike ${like} or l.description ilike ${like})`);
  }
  const offset = (f.page - 1) * PAGE_SIZE;
  const result = await db.execute<DirectoryRow>(sql`
    with page as (
      select l.organisation_id as id, o.slug, o.name, o.city, o.country,
        ${priceExpr} as price_from, p.currency, p.turnaround_days,
        count(*) over () as total
      from labs l
      join organisations o on o.id = l.organisation_id
      left join price_lists p on p.lab_id = l.organisation_id
      left join hazard_acceptance h on h.lab_id = l.organisation_id
      where ${sql.join(where, sql` and `)}
      order by o.name
      limit ${PAGE_SIZE} offset ${offset}
    )
    -- The summaries are computed for the page's labs only, after the limit.
    select page.slug, page.name, page.city, page.country, page.price_from, page.currency, page.turnaround_days, page.total,
      (select array_agg(distinct i.technique::text order by i.technique::text) from instruments i where i.lab_id = page.id and i.active) as techniques,
      (select array_agg(distinct coalesce(i.anode::text, 'custom') order by coalesce(i.anode::text, 'custom')) from instruments i where i.lab_id = page.id and i.active) as sources,
      (select min(${minDSql}) from instruments i where i.lab_id = page.id and i.active) as min_d,
      (select min(s.min_temperature_k) from sample_stages s join instruments i on i.id = s.instrument_id where i.lab_id = page.id and i.active) as t_min,
      (select max(s.max_temperature_k) from sample_stages s join instruments i on i.id = s.instrument_id where i.lab_id = page.id and i.active) as t_max,
      (select json_agg(json_build_object('instrument_name', a.name, 'standard', a.standard, 'mean', a.mean, 'scans', a.scans) order by a.created_at, a.standard)
         from (select i.id, i.name, i.created_at, c.standard, avg(c.deviation_a) as mean, count(c.deviation_a) as scans
               from instruments i join instrument_calibrations c on c.instrument_id = i.id and c.measured_at >= now() - make_interval(months => ${RECORD_MONTHS})
               where i.lab_id = page.id and i.active group by i.id, i.name, i.created_at, c.standard) a) as accuracy,
      (select count(*) filter (where o.delivered_at <= o.due_at) from orders o
         where o.lab_id = page.id and o.delivered_at is not null and o.due_at is not null and o.delivered_at >= now() - make_interval(months => ${RECORD_MONTHS})) as on_time,
      (select count(*) from orders o
         where o.lab_id = page.id and o.delivered_at is not null and o.due_at is not null and o.delivered_at >= now() - make_interval(months => ${RECORD_MONTHS})) as delivered
    from page
    order by page.name
  `);
  const rows = result.rows;
  return {
    page: f.page,
    total: rows.length ? Number(rows[0].total) : offset === 0 ? 0 : await countDirectory(where),
    labs: rows.map(directoryLab),
  };
}

/** The lab at a profile address (its organisation's slug) with its vetting state and where it is; undefined when none. */
export async function labBySlug(slug: string) {
  const [row] = await db
    .select({
      id: schema.labs.organisationId,
      state: schema.labs.vettingState,
      description: schema.labs.description,
      city: schema.organisations.city,
      country: schema.organisations.country,
    })
    .from(schema.labs)
    .innerJoin(schema.organisations, eq(schema.organisations.id, schema.labs.organisationId))
    .where(eq(schema.organisations.slug, slug));
  return row;
}

/** A directory row as the API answers it (the load benchmark's bare handler maps its rows with this too). */
export function directoryLab(r: DirectoryRow): DirectoryLab {
  return {
    slug: r.slug,
    name: r.name,
    city: r.city,
    country: r.country,
    techniques: r.techniques ?? [],
    sources: r.sources ?? [],
    minD: r.min_d === null ? null : Math.round(Number(r.min_d) * 10_000) / 10_000,
    temperatureRangeK: r.t_min === null || r.t_max === null ? null : [Number(r.t_min), Number(r.t_max)],
    priceFrom: r.price_from === null ? null : Number(r.price_from),
    currency: r.currency,
    turnaroundDays: r.turnaround_days,
    accuracy: (r.accuracy ?? []).map((a) => {
      const figure = {
        instrumentName: a.instrument_name,
        standard: a.standard,
        meanDeviationA: a.mean === null ? null : Number(a.mean),
        scans: Number(a.scans),
      };
      return { ...figure, text: accuracyText(figure) };
    }),
    onTime: onTimeFigure({ onTime: Number(r.on_time ?? 0), delivered: Number(r.delivered ?? 0) }),
  };
}

const onTimeFigure = (r: OnTimeRecord) => ({ ...r, text: onTimeText(r) });

/** Total matches when the requested page lies past the end. */
async function countDirectory(where: SQL[]) {
  const r = await db.execute<{ n: string }>(sql`
    select count(*) as n from labs l
    join organisations o on o.id = l.organisation_id
    left join price_lists p on p.lab_id = l.organisation_id
    left join hazard_acceptance h on h.lab_id = l.organisation_id
    where ${sql.join(where, sql` and `)}`);
  return Number(r.rows[0].n);
}

// ───────────── A short-lived cache of directory answers ─────────────
// Every visitor's filter change asks /api/labs; under load most asks repeat a few filters. Answers are kept
// for DIRECTORY_CACHE_MS (5 s; 0 turns the cache off) per filter set, at most MAX_ENTRIES of them. A change to
// a lab's capabilities, prices, hazards or vetting on this server clears the cache at once
// (invalidateDirectory); another app server's change shows here within the TTL, well inside the 30 s the
// API already lets browsers and proxies keep an answer.

export interface CachedDirectory {
  result: Awaited<ReturnType<typeof searchDirectory>>;
  /** The JSON body of the API answer, and its entity tag (RFC 9110 §8.8.3). */
  body: string;
  etag: string;
}

const CACHE_TTL_MS = config.cacheMs.directory;
const MAX_ENTRIES = 500;
const cache = new Map<string, { at: number; value: Promise<CachedDirectory> }>();

/** Forgets every cached directory answer; called after any change that the directory shows. */
export function invalidateDirectory() {
  cache.clear();
  purgePublicCache("/api/labs");
}

/** The directory answer for the filters, from the cache when it is fresh; concurrent misses share one query. */
export function cachedDirectory(f: DirectoryFilters): Promise<CachedDirectory> {
  const key = JSON.stringify(f);
  const now = Date.now();
  const hit = cache.get(key);
  if (hit && now - hit.at < CACHE_TTL_MS) return hit.value;
  const value = searchDirectory(f).then((result) => {
    const body = JSON.stringify(result);
    return { result, body, etag: `"${createHash("sha1").update(body).digest("base64url")}"` };
  });
  if (CACHE_TTL_MS > 0) {
    cache.delete(key);
    cache.set(key, { at: now, value });
    if (cache.size > MAX_ENTRIES) cache.delete(cache.keys().next().value!);
    // A failed query is not remembered.
    value.catch(() => cache.get(key)?.value === value && cache.delete(key));
  }
  return value;
}
