// Loads labs and requests from PostgreSQL into the matching rules of app/domain/matching.ts.
import { and, asc, eq, inArray } from "drizzle-orm";
import { db, schema } from "~/db/client.server";
import type { Anode } from "~/diffraction/wavelengths";
import { stagesOf } from "./capabilities.server";
import { type ClientStanding, pricesForClient } from "~/domain/price-tiers";
import { judgeQuote, matchLab, type LabMatch, type MatchInstrument, type MatchLab, type MatchRequest, type QuoteJudgement } from "~/domain/matching";

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
