// Loads labs and requests from PostgreSQL into the matching rules of app/domain/matching.ts.
import { and, asc, eq, inArray, type SQL, sql } from "drizzle-orm";
import { db, schema } from "~/db/client.server";
import type { Anode } from "~/diffraction/wavelengths";
import { stagesOf } from "./capabilities.server";
import { pageOf, sortAndPage, type PageInfo, type TableQuery } from "~/utils/table";
import { type ClientStanding, pricesForClient } from "~/domain/price-tiers";
import {
  AMBIENT_K,
  evaluateInstrument,
  judgeQuote,
  matchLab,
  type LabMatch,
  type MatchInstrument,
  type MatchLab,
  type MatchRequest,
  type QuoteJudgement,
} from "~/domain/matching";

type InstrumentRow = typeof schema.instruments.$inferSelect;

/** Items by a key, in their order (Map.groupBy, which Node 20 lacks). */
function groupBy<T, K>(items: T[], key: (item: T) => K) {
  const out = new Map<K, T[]>();
  for (const item of items) {
    const k = key(item);
    const list = out.get(k);
    if (list) list.push(item);
    else out.set(k, [item]);
  }
  return out;
}

/** Instruments with their sample stages in the shape the matching rules read. */
async function withStages(instruments: InstrumentRow[]): Promise<(MatchInstrument & { labId: string })[]> {
  const stages = await stagesOf(instruments.map((i) => i.id));
  // Grouped once: a scan of every stage per instrument grows with the square of the directory.
  const stagesBy = groupBy(stages, (s) => s.instrumentId);
  return instruments.map((i) => ({
    id: i.id,
    labId: i.labId,
    name: i.name,
    technique: i.technique,
    anode: i.anode as Anode | null,
    customWavelength: i.customWavelength,
    twoThetaMin: i.twoThetaMin,
    twoThetaMax: i.twoThetaMax,
    energyDiscrimination: i.energyDiscrimination,
    sampleForms: i.sampleForms,
    stages: stagesBy.get(i.id) ?? [],
    calibrationState: i.calibrationState,
  }));
}

/** The client organisation's stated kind and whether an admin confirmed it (for price tiers); null if no such organisation. */
export async function clientStandingOf(organisationId: string): Promise<ClientStanding | null> {
  const [row] = await db
    .select({ clientKind: schema.organisations.clientKind, clientKindConfirmedAt: schema.organisations.clientKindConfirmedAt })
    .from(schema.organisations)
    .where(eq(schema.organisations.id, organisationId));
  return row ?? null;
}

/**
 * Approved labs (or the given ones, whatever their state) with instruments, stages, hazards and prices. Given a
 * client, each price list is the one that client pays: its confirmed kind's tier over the base list (docs/design.md#price-tiers).
 */
export async function loadMatchLabs(labIds?: string[], client?: ClientStanding | null): Promise<MatchLab[]> {
  const labs = await db
    .select({ id: schema.labs.organisationId, name: schema.organisations.name, slug: schema.organisations.slug })
    .from(schema.labs)
    .innerJoin(schema.organisations, eq(schema.organisations.id, schema.labs.organisationId))
    .where(labIds ? inArray(schema.labs.organisationId, labIds) : eq(schema.labs.vettingState, "approved"))
    .orderBy(asc(schema.organisations.name));
  if (labs.length === 0) return [];
  const ids = labs.map((l) => l.id);
  const [instrumentRows, acceptance, prices] = await Promise.all([
    db
      .select()
      .from(schema.instruments)
      .where(and(inArray(schema.instruments.labId, ids), eq(schema.instruments.active, true)))
      .orderBy(asc(schema.instruments.createdAt)),
    db.select().from(schema.hazardAcceptance).where(inArray(schema.hazardAcceptance.labId, ids)),
    db.select().from(schema.priceLists).where(inArray(schema.priceLists.labId, ids)),
  ]);
  const instruments = groupBy(await withStages(instrumentRows), (i) => i.labId);
  const acceptanceBy = new Map(acceptance.map((a) => [a.labId, a]));
  const pricesBy = new Map<string, (typeof prices)[number]>();
  for (const p of prices) if (!pricesBy.has(p.labId)) pricesBy.set(p.labId, p);
  return labs.map((lab) => {
    const acc = acceptanceBy.get(lab.id);
    const listed = pricesBy.get(lab.id) ?? null;
    const price = client === undefined ? listed : pricesForClient(listed, client).prices;
    return {
      ...lab,
      instruments: (instruments.get(lab.id) ?? []).map(stripLab),
      acceptance: { pictograms: acc?.pictograms ?? [], specialCategories: acc?.specialCategories ?? [] },
      priceList: price
        ? {
            currency: price.currency,
            perSampleMinor: price.perSampleMinor,
            perExtraTemperaturePointMinor: price.perExtraTemperaturePointMinor,
            hazardousHandlingMinor: price.hazardousHandlingMinor,
            samplePreparationMinor: price.samplePreparationMinor,
            perInstrumentHourMinor: price.perInstrumentHourMinor,
            turnaroundDays: price.turnaroundDays,
            tiers: price.tiers,
          }
        : null,
    };
  });
}

type MatchRequestRow = MatchRequest & { id: string; organisationId: string; visibility: string; state: string };

/** Requests with their samples in the shape the matching rules read, in the rows' order: one query for each table. */
async function toMatchRequests(requests: (typeof schema.requests.$inferSelect)[]): Promise<MatchRequestRow[]> {
  if (requests.length === 0) return [];
  const samples = await db
    .select()
    .from(schema.samples)
    .where(
      inArray(
        schema.samples.requestId,
        requests.map((r) => r.id),
      ),
    )
    .orderBy(asc(schema.samples.position));
  const byRequest = new Map<string, typeof samples>();
  for (const s of samples) {
    const list = byRequest.get(s.requestId);
    if (list) list.push(s);
    else byRequest.set(s.requestId, [s]);
  }
  return requests.map((request) => ({
    id: request.id,
    organisationId: request.organisationId,
    visibility: request.visibility,
    state: request.state,
    technique: request.technique,
    rangeKind: request.rangeKind,
    rangeMin: request.rangeMin,
    rangeMax: request.rangeMax,
    preferredSource: request.preferredSource,
    temperaturePointsK: request.temperaturePointsK,
    atmosphere: request.atmosphere,
    samples: (byRequest.get(request.id) ?? []).map((s) => ({
      label: s.label,
      elements: s.elements,
      form: s.form,
      ghsPictograms: s.ghsPictograms,
      specialHazards: s.specialHazards,
    })),
  }));
}

/** A request with its samples in the shape the matching rules read; null when it does not exist. */
export async function loadMatchRequest(requestId: string): Promise<MatchRequestRow | null> {
  const [request] = await db.select().from(schema.requests).where(eq(schema.requests.id, requestId));
  if (!request) return null;
  const [loaded] = await toMatchRequests([request]);
  return loaded;
}

/** Every approved lab against the request, fitting labs first, with reasons for each. */
export async function matchLabsForRequest(requestId: string): Promise<LabMatch[]> {
  const request = await loadMatchRequest(requestId);
  if (!request) return [];
  const labs = await loadMatchLabs(undefined, await clientStandingOf(request.organisationId));
  return labs.map((lab) => matchLab(request, lab)).sort((a, b) => Number(b.fits) - Number(a.fits) || a.labName.localeCompare(b.labName));
}

/**
 * Each quote on a request judged by the instrument it names (docs/design.md#matching): that instrument's
 * coverage, stages and fluorescence, not the lab's best instrument's. Keyed by quote id.
 */
export async function quoteJudgementsForRequest(requestId: string): Promise<Record<string, QuoteJudgement>> {
  const request = await loadMatchRequest(requestId);
  if (!request) return {};
  const quotes = await db
    .select({ id: schema.quotes.id, labId: schema.quotes.labId, instrumentId: schema.quotes.instrumentId })
    .from(schema.quotes)
    .where(eq(schema.quotes.requestId, requestId));
  if (quotes.length === 0) return {};
  const instrumentIds = [...new Set(quotes.flatMap((q) => (q.instrumentId ? [q.instrumentId] : [])))];
  const [labs, quoted] = await Promise.all([
    loadMatchLabs([...new Set(quotes.map((q) => q.labId))]),
    instrumentIds.length ? db.select().from(schema.instruments).where(inArray(schema.instruments.id, instrumentIds)).then(withStages) : [],
  ]);
  const out: Record<string, QuoteJudgement> = {};
  for (const q of quotes) {
    const lab = labs.find((l) => l.id === q.labId);
    if (!lab) continue;
    const instrument = quoted.find((i) => i.id === q.instrumentId && i.labId === q.labId);
    out[q.id] = judgeQuote(request, lab, instrument ? stripLab(instrument) : null);
  }
  return out;
}

function stripLab({ labId: _, ...instrument }: MatchInstrument & { labId: string }): MatchInstrument {
  return instrument;
}

/** The ids of approved labs that fit a request. */
export async function labsMatchingRequest(requestId: string): Promise<string[]> {
  return (await matchLabsForRequest(requestId)).filter((m) => m.fits).map((m) => m.labId);
}

/** The lab in the shape the matching rules read, when an admin has approved it; null for any other lab. */
async function approvedMatchLab(labId: string): Promise<MatchLab | null> {
  const [row] = await db.select({ state: schema.labs.vettingState }).from(schema.labs).where(eq(schema.labs.organisationId, labId));
  if (row?.state !== "approved") return null;
  const [lab] = await loadMatchLabs([labId]);
  return lab ?? null;
}

type LoadedRequest = NonNullable<Awaited<ReturnType<typeof loadMatchRequest>>>;

/** The lab with the prices this client pays (its confirmed kind's tier, docs/design.md#price-tiers). */
function labForClient(lab: MatchLab, client: ClientStanding | null): MatchLab {
  return lab.priceList ? { ...lab, priceList: pricesForClient(lab.priceList, client).prices } : lab;
}

/**
 * The one rule for which requests reach an approved lab, in its inbox and on its request page: an open request
 * it was invited to, or one open to every lab that its instruments and hazard acceptance fit (visibility `open`
 * is to every matching lab: docs/design.md#requests-and-samples). Null otherwise.
 */
function inboxEntry(request: LoadedRequest, lab: MatchLab, invited: boolean) {
  if (request.state !== "open") return null;
  if (request.visibility === "invited" && !invited) return null;
  const match = matchLab(request, lab);
  return match.fits || invited ? { requestId: request.id, invited, match } : null;
}

/**
 * A lab's inbox: open requests it fits (visibility `open`) and every open request it was invited to,
 * each with the lab's match. Empty until the lab is approved.
 */
export async function requestsMatchingLab(labId: string) {
  const lab = await approvedMatchLab(labId);
  if (!lab) return [];
  const invited = await db
    .select({ requestId: schema.requestInvitations.requestId })
    .from(schema.requestInvitations)
    .where(eq(schema.requestInvitations.labId, labId));
  const invitedIds = new Set(invited.map((i) => i.requestId));
  // Every open request with its samples and its client's standing, in three queries rather than a few per request.
  const open = await toMatchRequests(await db.select().from(schema.requests).where(eq(schema.requests.state, "open")).orderBy(asc(schema.requests.openedAt)));
  const clientIds = [...new Set(open.map((r) => r.organisationId))];
  const standingRows = clientIds.length
    ? await db
        .select({ id: schema.organisations.id, clientKind: schema.organisations.clientKind, clientKindConfirmedAt: schema.organisations.clientKindConfirmedAt })
        .from(schema.organisations)
        .where(inArray(schema.organisations.id, clientIds))
    : [];
  // The estimate the lab reads is what this client would be quoted: the lab's prices per client, worked out once per client.
  const labFor = new Map<string, MatchLab>();
  for (const { id, ...standing } of standingRows) labFor.set(id, labForClient(lab, standing));
  const out: { requestId: string; invited: boolean; match: LabMatch }[] = [];
  for (const request of open) {
    const entry = inboxEntry(request, labFor.get(request.organisationId) ?? labForClient(lab, null), invitedIds.has(request.id));
    if (entry) out.push(entry);
  }
  return out;
}

/** Whether the request is in the lab's inbox (requestsMatchingLab's rule, for one request). */
export async function inLabInbox(requestId: string, labId: string): Promise<boolean> {
  const lab = await approvedMatchLab(labId);
  const request = lab && (await loadMatchRequest(requestId));
  if (!lab || !request) return false;
  const [invitation] = await db
    .select({ labId: schema.requestInvitations.labId })
    .from(schema.requestInvitations)
    .where(and(eq(schema.requestInvitations.requestId, requestId), eq(schema.requestInvitations.labId, labId)));
  return inboxEntry(request, lab, Boolean(invitation)) !== null;
}

// ───────────── Matching at scale: classes of equal needs and capabilities ─────────────
//
// The rules of app/domain/matching.ts read only some fields of an instrument and of a request. Instruments whose
// fields are equal fit a request alike, and requests whose fields are equal fit a lab alike, so each class is
// judged once, by the rules themselves, on one of its members; SQL then counts and pages the members of the
// classes that fit. Technique and preferred source narrow the classes in SQL first (the rules refuse any other).
// The trade-off is in docs/performance.md#pages-matching.

/**
 * Runs a grouping query without PostgreSQL's JIT: its row estimates for these groupings are far too high, and
 * compiling the plan (70–80 ms) cost more than running it.
 */
async function query<T extends Record<string, unknown>>(statement: SQL): Promise<T[]> {
  return db.transaction(async (tx) => {
    await tx.execute(sql`set local jit = off`);
    return (await tx.execute<T>(statement)).rows as T[];
  });
}

const text = (values: string[]) => sql`array(select jsonb_array_elements_text(${JSON.stringify(values)}::jsonb))`;

/** Whether the rules read the instruments' stages for this request: evaluateInstrument's test for room temperature in air. */
function needsStages(req: MatchRequest) {
  const points = req.temperaturePointsK.length > 0 ? req.temperaturePointsK : [298];
  return !(req.atmosphere === "air" && points.every((t) => t >= AMBIENT_K[0] && t <= AMBIENT_K[1]));
}

/** An instrument's class: every field evaluateInstrument reads for its fit (its stages only when the request needs them). */
function instrumentClass(withStages: boolean): SQL {
  const stages = withStages
    ? sql`, (select array_agg(row(s.min_temperature_k, s.max_temperature_k, s.atmospheres)::text order by s.min_temperature_k, s.max_temperature_k, s.atmospheres::text)
             from sample_stages s where s.instrument_id = i.id)`
    : sql``;
  return sql`md5(row(i.technique, i.anode, i.custom_wavelength, i.two_theta_min, i.two_theta_max, i.sample_forms, i.calibration_state${stages})::text)`;
}

/** Active instruments of approved labs that the technique and preferred source leave in the running. */
function candidateInstruments(req: MatchRequest): SQL {
  return sql`i.active and i.technique = ${req.technique}${req.preferredSource === "any" ? sql`` : sql` and i.anode::text = ${req.preferredSource}`}`;
}

/** The approved labs (or those among `among`) whose hazard acceptance and at least one instrument fit the request, by name. */
async function fittingLabsOf(req: MatchRequest, among?: string[]): Promise<{ id: string; name: string }[]> {
  if (among && among.length === 0) return [];
  const staged = needsStages(req);
  const classes = await query<{ key: string; rep: string }>(sql`
    select ${instrumentClass(staged)} as key, min(i.id::text) as rep
    from instruments i join labs l on l.organisation_id = i.lab_id
    where l.vetting_state = 'approved' and ${candidateInstruments(req)}
    group by 1`);
  if (classes.length === 0) return [];
  const reps = await withStages(
    await db
      .select()
      .from(schema.instruments)
      .where(
        inArray(
          schema.instruments.id,
          classes.map((c) => c.rep),
        ),
      ),
  );
  const fits = new Set(reps.filter((i) => evaluateInstrument(req, stripLab(i)).fits).map((i) => i.id));
  const keys = classes.filter((c) => fits.has(c.rep)).map((c) => c.key);
  if (keys.length === 0) return [];
  const pictograms = [...new Set(req.samples.flatMap((s) => s.ghsPictograms))];
  const categories = [...new Set(req.samples.flatMap((s) => s.specialHazards.map((h) => h.category)))];
  const labs = await query<{ id: string; name: string }>(sql`
    select o.id, o.name from labs l
    join organisations o on o.id = l.organisation_id
    left join hazard_acceptance ha on ha.lab_id = l.organisation_id
    where l.vetting_state = 'approved' ${among ? sql`and l.organisation_id::text = any(${text(among)})` : sql``}
      and coalesce(ha.pictograms, '{}') @> ${text(pictograms)} and coalesce(ha.special_categories, '{}') @> ${text(categories)}
      and exists (select 1 from instruments i where i.lab_id = l.organisation_id and ${candidateInstruments(req)}
                  and ${instrumentClass(staged)} = any(${text(keys)}))
    order by o.name, o.id`);
  // matchLabsForRequest's order among fitting labs: by name as String#localeCompare compares.
  const collator = new Intl.Collator();
  return labs.sort((a, b) => collator.compare(a.name, b.name));
}

/** Whether any approved lab (or any of `among`) fits the request: matchLab's `fits` for at least one of them. */
export async function anyLabFits(requestId: string, among?: string[]): Promise<boolean> {
  const request = await loadMatchRequest(requestId);
  return request ? (await fittingLabsOf(request, among)).length > 0 : false;
}

/**
 * The labs that fit a request, counted, and one page of them in matchLabsForRequest's order (by name), each
 * with its whole match; only that page's labs are loaded.
 */
export async function fittingLabsPage(requestId: string, q: Pick<TableQuery, "page" | "pageSize">): Promise<{ matches: LabMatch[]; info: PageInfo }> {
  const request = await loadMatchRequest(requestId);
  if (!request) return { matches: [], info: pageOf(0, q) };
  const fitting = await fittingLabsOf(request);
  const info = pageOf(fitting.length, q);
  const ids = fitting.slice(info.offset, info.offset + info.pageSize).map((l) => l.id);
  const labs = ids.length ? await loadMatchLabs(ids, await clientStandingOf(request.organisationId)) : [];
  const byId = new Map(labs.map((l) => [l.id, l]));
  return { matches: ids.flatMap((id) => (byId.has(id) ? [matchLab(request, byId.get(id)!)] : [])), info };
}

export type InboxSort = "title" | "client" | "estimate" | "deadline" | "opened";

/** One row of a lab's inbox: the request, its client, and the lab's match in brief. */
export interface InboxItem {
  id: string;
  title: string;
  client: string;
  deadline: string | null;
  openedAt: Date | null;
  invited: boolean;
  fits: boolean;
  estimate: number | null;
  currency: string | null;
  warnings: number;
  quoted: boolean;
}

/**
 * One page of a lab's inbox (requestsMatchingLab's rule, and the same rows in the same order as sorting that
 * whole list would give). Requests are grouped by every field the rules and the estimate read (samples and the
 * client's price tier included); one request of each group is matched, and SQL counts and pages the groups that
 * fit. By opening date, deadline and estimate SQL sorts too; by title or client the page is chosen from the
 * matching requests' ids and those fields only.
 */
export async function labInboxPage(labId: string, q: TableQuery<InboxSort>): Promise<{ items: InboxItem[]; info: PageInfo }> {
  const lab = await approvedMatchLab(labId);
  if (!lab) return { items: [], info: pageOf(0, q) };
  const techniques = [...new Set(lab.instruments.map((i) => i.technique))];
  const anodes = [...new Set(lab.instruments.flatMap((i) => (i.anode ? [i.anode] : [])))];
  // Requests this lab may see (open to every lab, or invited), narrowed by technique and source: the rules refuse others.
  const inbox = sql`
    with candidates as (
      select r.id, r.title, r.deadline, r.opened_at, r.organisation_id, r.technique, r.range_kind, r.range_min, r.range_max, r.preferred_source,
        r.temperature_points_k, r.atmosphere, ri.request_id is not null as invited
      from requests r left join request_invitations ri on ri.request_id = r.id and ri.lab_id = ${labId}
      where r.state = 'open' and (ri.request_id is not null
        or (r.visibility = 'open' and r.technique::text = any(${text(techniques)}) and (r.preferred_source = 'any' or r.preferred_source = any(${text(anodes)}))))
    ), needs as (
      select s.request_id, array_agg(row(s.elements, s.form, s.ghs_pictograms, s.special_hazards)::text order by s.position) as samples
      from samples s join candidates on candidates.id = s.request_id group by s.request_id
    ), c as (
      select r.id, r.title, r.deadline, r.opened_at, o.name as client, r.invited,
        md5(row(r.technique, r.range_kind, r.range_min, r.range_max, r.preferred_source, r.temperature_points_k, r.atmosphere, needs.samples,
          o.client_kind, o.client_kind_confirmed_at is not null)::text) as key
      from candidates r join organisations o on o.id = r.organisation_id left join needs on needs.request_id = r.id
    )`;
  const groups = await query<{ key: string; rep: string }>(sql`${inbox} select key, min(id::text) as rep from c group by key`);
  const reps = await toMatchRequests(
    groups.length
      ? await db
          .select()
          .from(schema.requests)
          .where(
            inArray(
              schema.requests.id,
              groups.map((g) => g.rep),
            ),
          )
      : [],
  );
  const standings = reps.length
    ? await db
        .select({ id: schema.organisations.id, clientKind: schema.organisations.clientKind, clientKindConfirmedAt: schema.organisations.clientKindConfirmedAt })
        .from(schema.organisations)
        .where(inArray(schema.organisations.id, [...new Set(reps.map((r) => r.organisationId))]))
    : [];
  const standingOf = new Map(standings.map(({ id, ...s }) => [id, s]));
  const matchOf = new Map<string, LabMatch>();
  const byRep = new Map(reps.map((r) => [r.id, r]));
  for (const g of groups) {
    const rep = byRep.get(g.rep);
    if (rep) matchOf.set(g.key, matchLab(rep, labForClient(lab, standingOf.get(rep.organisationId) ?? null)));
  }
  const fitting = [...matchOf].filter(([, m]) => m.fits).map(([key]) => key);
  const shown = sql`(c.key = any(${text(fitting)}) or c.invited)`;
  let info: PageInfo;
  let page: { id: string; key: string; invited: boolean; total?: number }[];
  if (q.sort === "opened" || q.sort === "deadline" || q.sort === "estimate") {
    const dir = q.dir === "asc" ? sql`asc` : sql`desc`;
    // An estimate is the same for every request of a group: its sort value (currency, then zero-padded amount) by group.
    const estimates = Object.fromEntries([...matchOf].map(([key, m]) => [key, estimateSortValue(m)]));
    const order =
      q.sort === "opened"
        ? sql`c.opened_at ${dir} nulls last`
        : q.sort === "deadline"
          ? sql`c.deadline ${dir} nulls last`
          : sql`(${JSON.stringify(estimates)}::jsonb ->> c.key) ${dir} nulls last`;
    const pageAt = async (offset: number) =>
      query<{ id: string; key: string; invited: boolean; total: number }>(
        sql`${inbox} select c.id, c.key, c.invited, count(*) over ()::int as total from c where ${shown}
            order by ${order}, c.opened_at asc, c.id limit ${q.pageSize} offset ${offset}`,
      );
    page = await pageAt((q.page - 1) * q.pageSize);
    // A page past the end shows the last page: the count comes with the rows, so only then is it asked for alone.
    const total =
      page[0]?.total ?? (q.page > 1 ? (await query<{ total: number }>(sql`${inbox} select count(*)::int as total from c where ${shown}`))[0].total : 0);
    info = pageOf(total, q);
    if (page.length === 0 && total > 0) page = await pageAt(info.offset);
  } else {
    // Titles and names sort as the other lists do (sortAndPage's collation, numbers by value), so the page is chosen in JavaScript from slim rows.
    const all = await query<{ id: string; key: string; invited: boolean; title: string; client: string }>(
      sql`${inbox} select c.id, c.key, c.invited, c.title, c.client from c where ${shown} order by c.opened_at asc, c.id`,
    );
    const {
      rows,
      sort: _s,
      dir: _d,
      ...rest
    } = sortAndPage(all, q, {
      title: (i) => i.title,
      client: (i) => i.client,
      estimate: () => null,
      deadline: () => null,
      opened: () => null,
    });
    info = rest;
    page = rows;
  }
  const ids = page.map((p) => p.id);
  const [rows, quotes] = ids.length
    ? await Promise.all([
        requestsWithClients(ids),
        db
          .select({ requestId: schema.quotes.requestId })
          .from(schema.quotes)
          .where(and(eq(schema.quotes.labId, labId), eq(schema.quotes.state, "sent"), inArray(schema.quotes.requestId, ids))),
      ])
    : [[], []];
  const byId = new Map(rows.map((r) => [r.id, r]));
  const quoted = new Set(quotes.map((q) => q.requestId));
  const items = page.flatMap((p) => {
    const row = byId.get(p.id);
    const match = matchOf.get(p.key);
    if (!row || !match) return [];
    return [
      {
        ...row,
        invited: p.invited,
        fits: match.fits,
        estimate: match.estimatedPriceMinor,
        currency: match.currency,
        warnings: match.warnings.length,
        quoted: quoted.has(p.id),
      },
    ];
  });
  return { items, info };
}

/** The estimate column's sort value: by currency, then amount; none last. */
function estimateSortValue(match: LabMatch | undefined) {
  if (!match || match.estimatedPriceMinor === null) return null;
  return `${match.currency}${String(match.estimatedPriceMinor).padStart(12, "0")}`;
}

/** The given requests with their deadline, opening date and client organisation's name, in no set order. */
export async function requestsWithClients(requestIds: string[]) {
  if (requestIds.length === 0) return [];
  return db
    .select({
      id: schema.requests.id,
      title: schema.requests.title,
      deadline: schema.requests.deadline,
      openedAt: schema.requests.openedAt,
      client: schema.organisations.name,
    })
    .from(schema.requests)
    .innerJoin(schema.organisations, eq(schema.organisations.id, schema.requests.organisationId))
    .where(inArray(schema.requests.id, requestIds));
}
