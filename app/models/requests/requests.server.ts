// Measurement requests: drafts saved step by step, publishing, who may see a request, hazard acknowledgements.
import { isUuid } from "~/domain/ids";
import { isKeyUnder } from "~/domain/storage-keys";
import { and, asc, desc, eq, inArray, sql } from "drizzle-orm";
import { db, schema } from "~/db/client.server";
import type { Tx } from "~/db/client.server";
import type { MarketRequest, Sample, SamplePhase, SpecialHazard } from "~/db/schema";
import { DOCUMENT_RULE, presignDownload, verifyStoredObject, type UploadRule } from "~/models/files/storage.server";
import { notify } from "~/models/notifications/outbox.server";
import { audit } from "~/models/audit.server";
import { parseFormula } from "~/domain/formula";
import { anyLabFits, inLabInbox, labsMatchingRequest, loadMatchLabs, loadMatchRequest } from "~/models/labs/matching.server";
import { matchLab, whyNoLabFits } from "~/domain/matching";
import { declaresHazard } from "~/domain/hazards";
import {
  acceptanceWindowOf,
  WIZARD_STEPS,
  type MeasurementStep,
  type PhaseRow,
  type SamplesStep,
  type SampleHazardInput,
  type WizardStep,
} from "~/domain/request-forms";

export { isUuid };

type FieldErrors = Record<string, string[]>;

/** The organisation's own request, or null for anything else (another organisation's, a malformed id). */
export async function ownRequestOf(requestId: string | undefined, organisationId: string): Promise<MarketRequest | null> {
  if (!isUuid(requestId)) return null;
  const [row] = await db
    .select()
    .from(schema.requests)
    .where(and(eq(schema.requests.id, requestId), eq(schema.requests.organisationId, organisationId)));
  return row ?? null;
}

/** A request's title, or null when there is no such request; order screens head with it. */
export async function requestTitleOf(requestId: string): Promise<string | null> {
  const [row] = await db.select({ title: schema.requests.title }).from(schema.requests).where(eq(schema.requests.id, requestId));
  return row?.title ?? null;
}

/** A sample with its further declared phases: the expected phases, then the candidate forms, each in its order. */
export type SampleWithPhases = Sample & { phases: SamplePhase[] };

export async function samplesOf(requestId: string): Promise<SampleWithPhases[]> {
  return withPhases(await db.select().from(schema.samples).where(eq(schema.samples.requestId, requestId)).orderBy(asc(schema.samples.position)));
}

/** The further declared phases of the given samples: expected phases first, then candidates, each by position. */
export async function phasesOfSamples(sampleIds: string[]): Promise<SamplePhase[]> {
  if (sampleIds.length === 0) return [];
  return db
    .select()
    .from(schema.samplePhases)
    .where(inArray(schema.samplePhases.sampleId, sampleIds))
    .orderBy(desc(schema.samplePhases.role), asc(schema.samplePhases.position));
}

/** The samples, each with its further declared phases. */
export async function withPhases<S extends Pick<Sample, "id">>(samples: S[]): Promise<(S & { phases: SamplePhase[] })[]> {
  const phases = await phasesOfSamples(samples.map((s) => s.id));
  return samples.map((s) => ({ ...s, phases: phases.filter((p) => p.sampleId === s.id) }));
}

export async function invitedLabIds(requestId: string) {
  const rows = await db
    .select({ labId: schema.requestInvitations.labId })
    .from(schema.requestInvitations)
    .where(eq(schema.requestInvitations.requestId, requestId));
  return rows.map((r) => r.labId);
}

/** Rows per page of the client's requests list: a screenful or two, and half the rendering of 50. */
export const REQUESTS_PAGE_SIZE = 25;

/**
 * One page of the organisation's requests, grouped by state in the order of the request states (draft,
 * open, awarded, expired, withdrawn) and newest first within a state, with their sample and quote counts;
 * and how many requests are in each state. The (organisation, state, created_at) index serves the order.
 */
export async function listOrganisationRequests(organisationId: string, page = 1) {
  const byState = await requestCountsByState.execute({ organisationId });
  const total = byState.reduce((sum, s) => sum + s.n, 0);
  const pageCount = Math.max(1, Math.ceil(total / REQUESTS_PAGE_SIZE));
  const current = Math.min(Math.max(1, page), pageCount);
  const requests = await requestsPage.execute({ organisationId, limit: REQUESTS_PAGE_SIZE, offset: (current - 1) * REQUESTS_PAGE_SIZE });
  return {
    requests,
    page: current,
    pageCount,
    total,
    countByState: Object.fromEntries(byState.map((s) => [s.state, s.n])) as Partial<Record<MarketRequest["state"], number>>,
  };
}

// The requests list is a client's most visited screen: both of its queries are named prepared statements.
const requestCountsByState = db
  .select({ state: schema.requests.state, n: sql<number>`count(*)::int` })
  .from(schema.requests)
  .where(eq(schema.requests.organisationId, sql.placeholder("organisationId")))
  .groupBy(schema.requests.state)
  .prepare("request_counts_by_state");

const requestsPage = db
  .select({
    id: schema.requests.id,
    title: schema.requests.title,
    state: schema.requests.state,
    draftStep: schema.requests.draftStep,
    deadline: schema.requests.deadline,
    createdAt: schema.requests.createdAt,
    // Qualified by hand: inside the subquery an unqualified "id" would be the sample's or quote's own.
    samples: sql<number>`(select count(*)::int from ${schema.samples} s where s.request_id = "requests"."id")`,
    quotes: sql<number>`(select count(*)::int from ${schema.quotes} q where q.request_id = "requests"."id" and q.state in ('sent', 'accepted'))`,
  })
  .from(schema.requests)
  .where(eq(schema.requests.organisationId, sql.placeholder("organisationId")))
  // "nulls last" as in the index (created_at is never null): with the index's exact order PostgreSQL reads
  // just the page's rows instead of sorting the organisation's.
  .orderBy(asc(schema.requests.state), sql`${schema.requests.createdAt} desc nulls last`)
  .limit(sql.placeholder("limit"))
  .offset(sql.placeholder("offset"))
  .prepare("requests_page");

/**
 * A sentence when the request can no longer be changed through the wizard, else null: a draft, and an open
 * request (no quote accepted yet; its edits make a new revision, request-life.server.ts), can be changed.
 */
export function notEditable(request: MarketRequest): string | null {
  if (request.state === "draft" || request.state === "open") return null;
  if (request.state === "awarded") return "A quote on this request has been accepted; it can no longer be changed. Use “Order again” for a new request.";
  return `This request is ${request.state}; it can no longer be changed. Use “Order again” for a new request.`;
}

const stepIndex = (step: string) => WIZARD_STEPS.findIndex((s) => s.slug === step);
/** The step a draft resumes at: the furthest one reached. */
const furthest = (current: string, next: WizardStep) => (stepIndex(next) > stepIndex(current) ? next : current);

function sampleColumns(s: SamplesStep["samples"][number], position: number) {
  const parsed = parseFormula(s.formula);
  return {
    position,
    label: s.label,
    formula: s.formula,
    elements: "elements" in parsed ? parsed.elements : [],
    form: s.form,
    massMg: s.massMg,
    expectedPhase: s.expectedPhase,
    crystalSystem: s.crystalSystem,
    centering: s.centering,
    cellA: s.cellA,
    cellB: s.cellB,
    cellC: s.cellC,
    cellAlpha: s.cellAlpha,
    cellBeta: s.cellBeta,
    cellGamma: s.cellGamma,
    acceptanceWindow: acceptanceWindowOf(s.window),
    // Only a lot of a material shows the field; other samples send none and keep none.
    ...(s.lotCode !== undefined ? { lotCode: s.lotCode || null } : {}),
  };
}

function phaseRow(sampleId: string, p: PhaseRow, role: SamplePhase["role"], position: number) {
  return {
    sampleId,
    role,
    position,
    name: p.name || null,
    crystalSystem: p.crystalSystem,
    centering: p.centering,
    cellA: p.cellA,
    cellB: p.cellB,
    cellC: p.cellC,
    cellAlpha: p.cellAlpha,
    cellBeta: p.cellBeta,
    cellGamma: p.cellGamma,
  };
}

/** Replaces a sample's further expected phases and candidate forms with the ones given, inside the caller's transaction. */
async function writePhases(tx: Tx, sampleId: string, s: SamplesStep["samples"][number]) {
  await tx.delete(schema.samplePhases).where(eq(schema.samplePhases.sampleId, sampleId));
  const rows = [...s.phases.map((p, i) => phaseRow(sampleId, p, "expected", i)), ...s.candidates.map((p, i) => phaseRow(sampleId, p, "candidate", i))];
  if (rows.length) await tx.insert(schema.samplePhases).values(rows);
}

/** Starts a draft from the samples step. */
export async function createDraft(organisationId: string, userId: string, input: SamplesStep) {
  return db.transaction(async (tx) => {
    const [request] = await tx
      .insert(schema.requests)
      .values({ organisationId, createdBy: userId, title: input.title, technique: input.technique, draftStep: "hazards" })
      .returning();
    const samples = await tx
      .insert(schema.samples)
      .values(input.samples.map((s, i) => ({ requestId: request.id, ...sampleColumns(s, i) })))
      .returning({ id: schema.samples.id, position: schema.samples.position });
    for (const row of samples) await writePhases(tx, row.id, input.samples[row.position]);
    await audit({ actorUserId: userId, organisationId, action: "request_draft_created", subjectType: "request", subjectId: request.id }, tx);
    return request;
  });
}

/**
 * Saves the samples step of an existing draft: samples keep their id (and so their hazard declaration),
 * new ones are added, the ones left out are removed. Ids that are not this request's are refused.
 */
export async function saveSamples(request: MarketRequest, input: SamplesStep): Promise<{ fieldErrors?: FieldErrors }> {
  const existing = await samplesOf(request.id);
  const known = new Set(existing.map((s) => s.id));
  const foreign = input.samples.findIndex((s) => s.id && !known.has(s.id));
  if (foreign >= 0) return { fieldErrors: { [`samples[${foreign}]`]: ["This sample is not part of the request; reload the page."] } };
  // A lot of a material keeps a lot code: the material's record is kept by it.
  const lots = new Set(existing.filter((s) => s.materialId).map((s) => s.id));
  const blankLot = input.samples.findIndex((s) => s.id && lots.has(s.id) && !s.lotCode);
  if (blankLot >= 0) return { fieldErrors: { [`samples[${blankLot}].lotCode`]: ["Enter the lot code of this lot."] } };
  await db.transaction(async (tx) => {
    await tx
      .update(schema.requests)
      .set({ title: input.title, technique: input.technique, draftStep: furthest(request.draftStep, "hazards"), updatedAt: new Date() })
      .where(eq(schema.requests.id, request.id));
    const kept = input.samples.map((s) => s.id).filter((id): id is string => !!id);
    const removed = existing.filter((s) => !kept.includes(s.id)).map((s) => s.id);
    if (removed.length) await tx.delete(schema.samples).where(inArray(schema.samples.id, removed));
    for (const [i, s] of input.samples.entries()) {
      let sampleId = s.id;
      if (sampleId) await tx.update(schema.samples).set(sampleColumns(s, i)).where(eq(schema.samples.id, sampleId));
      else
        [{ id: sampleId }] = await tx
          .insert(schema.samples)
          .values({ requestId: request.id, ...sampleColumns(s, i) })
          .returning({ id: schema.samples.id });
      await writePhases(tx, sampleId, s);
    }
  });
  return {};
}

/** Safety data sheets are PDFs, within the document size limit. */
export const SDS_RULE: UploadRule = { label: "a PDF", maxBytes: DOCUMENT_RULE.maxBytes, types: ["application/pdf"] };

/** Storage keys of a request's safety data sheets start here, so a form cannot point at someone else's file. */
export function sdsPrefix(request: Pick<MarketRequest, "id" | "organisationId">) {
  return `requests/${request.organisationId}/${request.id}/sds`;
}

/** A hazard declaration as its columns (a sample's and a material's alike), the safety data sheet apart. */
export function hazardColumns(h: Omit<SampleHazardInput, "id">) {
  const specialHazards: SpecialHazard[] = Object.entries(h.special)
    .filter(([, e]) => e?.declared)
    .map(([category, e]) => ({ category, details: e!.details ?? "", activityBq: category === "radioactive" ? (e!.activityBq ?? null) : null }));
  return { ghsPictograms: h.ghs, hStatements: h.hStatements, specialHazards, handlingNotes: h.handlingNotes || null, afterMeasurement: h.afterMeasurement };
}

/**
 * A newly uploaded safety data sheet, checked before it counts: under the page's own prefix, stored, a PDF, and
 * the SHA-256 the browser computed. Answers the columns to keep, or one sentence. (Shared with materials.)
 */
export async function checkNewSds(
  h: { sdsStorageKey: string; sdsFileName?: string; sdsSha256?: string },
  prefix: string,
): Promise<{ sdsStorageKey: string; sdsFileName: string; sdsSizeBytes: number } | { error: string }> {
  // Segment by segment: a raw prefix match would take `<prefix>/../../<another organisation's sheet>`.
  if (!isKeyUnder(h.sdsStorageKey, prefix)) return { error: "Upload the safety data sheet on this page." };
  const check = await verifyStoredObject(h.sdsStorageKey, SDS_RULE, h.sdsSha256);
  if (!check.ok) return { error: check.error };
  return { sdsStorageKey: h.sdsStorageKey, sdsFileName: h.sdsFileName || "safety-data-sheet.pdf", sdsSizeBytes: check.size };
}

/**
 * Saves every sample's hazard declaration. A newly uploaded safety data sheet is checked in storage first
 * (exists, is a PDF or image, matches the browser's SHA-256); a failed check is a field error and nothing is saved.
 */
export async function saveHazards(request: MarketRequest, input: SampleHazardInput[]): Promise<{ fieldErrors?: FieldErrors }> {
  const existing = await samplesOf(request.id);
  const errors: FieldErrors = {};
  const updates: { id: string; values: Partial<Sample> }[] = [];
  for (const [i, h] of input.entries()) {
    const sample = existing.find((s) => s.id === h.id);
    if (!sample) {
      errors[`samples[${i}].id`] = ["This sample is not part of the request; reload the page."];
      continue;
    }
    const values: Partial<Sample> = hazardColumns(h);
    if (h.sdsStorageKey && h.sdsStorageKey !== sample.sdsStorageKey) {
      const sds = await checkNewSds({ ...h, sdsStorageKey: h.sdsStorageKey }, sdsPrefix(request));
      if ("error" in sds) {
        errors[`samples[${i}].sds`] = [sds.error];
        continue;
      }
      Object.assign(values, sds);
    }
    updates.push({ id: sample.id, values });
  }
  if (Object.keys(errors).length) return { fieldErrors: errors };
  await db.transaction(async (tx) => {
    for (const u of updates) await tx.update(schema.samples).set(u.values).where(eq(schema.samples.id, u.id));
    await tx
      .update(schema.requests)
      .set({ draftStep: furthest(request.draftStep, "measurement"), updatedAt: new Date() })
      .where(eq(schema.requests.id, request.id));
  });
  return {};
}

export async function saveMeasurement(request: MarketRequest, m: MeasurementStep) {
  await db
    .update(schema.requests)
    .set({
      rangeKind: m.rangeKind,
      rangeMin: m.rangeMin,
      rangeMax: m.rangeMax,
      preferredSource: m.preferredSource,
      temperaturePointsK: m.temperaturePoints,
      atmosphere: m.atmosphere,
      quality: m.quality,
      deadline: m.deadline,
      budgetMinor: m.budget,
      currency: m.currency,
      draftStep: furthest(request.draftStep, "labs"),
      updatedAt: new Date(),
    })
    .where(eq(schema.requests.id, request.id));
}

/** Saves who may quote; invited labs must be approved labs. */
export async function saveVisibility(request: MarketRequest, visibility: "open" | "invited", labIds: string[]): Promise<{ fieldErrors?: FieldErrors }> {
  const chosen = visibility === "invited" ? [...new Set(labIds)] : [];
  if (chosen.length) {
    const approved = await db
      .select({ id: schema.labs.organisationId })
      .from(schema.labs)
      .where(and(inArray(schema.labs.organisationId, chosen), eq(schema.labs.vettingState, "approved")));
    if (approved.length !== chosen.length) return { fieldErrors: { invitedLabIds: ["Only approved labs can be invited."] } };
  }
  await db.transaction(async (tx) => {
    await tx
      .update(schema.requests)
      .set({ visibility, draftStep: furthest(request.draftStep, "review"), updatedAt: new Date() })
      .where(eq(schema.requests.id, request.id));
    await tx.delete(schema.requestInvitations).where(eq(schema.requestInvitations.requestId, request.id));
    if (chosen.length) await tx.insert(schema.requestInvitations).values(chosen.map((labId) => ({ requestId: request.id, labId })));
  });
  return {};
}

/** What still stops a draft from being published, as sentences (empty when it is ready). */
export function publishProblems(request: MarketRequest, samples: Sample[]): string[] {
  const problems: string[] = [];
  if (samples.length === 0) problems.push("Add at least one sample.");
  for (const s of samples) {
    if (declaresHazard(s) && !s.sdsStorageKey) {
      problems.push(`Sample ${s.label} declares hazards: upload its safety data sheet on the hazards step before publishing.`);
    }
  }
  if (request.rangeMin === null || request.rangeMax === null || !request.deadline) problems.push("Complete the measurement step (range and deadline).");
  return problems;
}

/** Moves a complete draft to open; returns the problems instead when it is not complete. */
export async function publishRequest(request: MarketRequest, userId: string): Promise<{ problems: string[] }> {
  const problems = publishProblems(request, await samplesOf(request.id));
  if (problems.length) return { problems };
  const noMatch = await noLabCanMeasure(request);
  if (noMatch) return { problems: [noMatch] };
  const labIds = await labsToTell(request);
  const published = await db.transaction(async (tx) => {
    const rows = await tx
      .update(schema.requests)
      .set({ state: "open", openedAt: new Date(), draftStep: "review", updatedAt: new Date() })
      .where(and(eq(schema.requests.id, request.id), eq(schema.requests.state, "draft")))
      .returning({ id: schema.requests.id });
    if (rows.length === 0) return false;
    await audit(
      { actorUserId: userId, organisationId: request.organisationId, action: "request_published", subjectType: "request", subjectId: request.id },
      tx,
    );
    await notify(tx, { kind: "request_open", requestId: request.id, labIds });
    return true;
  });
  if (!published) return { problems: ["This request has already been published."] };
  return { problems: [] };
}

/**
 * A clear stop before publishing a request no lab can measure, naming the need that rules every lab out
 * (docs/design.md#the-requests-life); null when at least one lab asked (every approved lab, or the invited ones) fits.
 */
export async function noLabCanMeasure(request: MarketRequest): Promise<string | null> {
  const published = request.state !== "draft";
  const wanted = await loadMatchRequest(request.id);
  if (!wanted) return null;
  const invited = request.visibility === "invited" ? await invitedLabIds(request.id) : null;
  // Whether one fits is answered in SQL over classes of equal instruments; every lab is loaded only to say why none does.
  if (await anyLabFits(request.id, invited ?? undefined)) return null;
  const labs = (await loadMatchLabs()).filter((l) => !invited || invited.includes(l.id));
  if (labs.some((l) => matchLab(wanted, l).fits)) return null;
  const who = invited ? "None of the invited labs" : "No approved lab";
  const change = `Change the measurement needs${invited ? " or invite other labs" : ""}`;
  return `${who} can measure this${published ? " as it now reads" : ""}: ${whyNoLabFits(wanted, labs)}. ${change} ${published ? "so that labs can quote" : "before publishing"}.`;
}

/** Who hears of a newly open request: the invited labs of an invited-only request, else every matching lab. */
async function labsToTell(request: MarketRequest): Promise<string[]> {
  if (request.visibility !== "invited") return labsMatchingRequest(request.id);
  const invited = await db
    .select({ labId: schema.requestInvitations.labId })
    .from(schema.requestInvitations)
    .where(eq(schema.requestInvitations.requestId, request.id));
  return invited.map((i) => i.labId);
}

// ───────────── The lab's side ─────────────

/**
 * A request as a lab may read it: one in its inbox (an approved lab, and the request open and fitting the lab
 * or invited: matching.server.ts's rule), or one the lab has quoted on, whatever happened since. Anything else
 * is null, so a lab cannot tell another's invitation, or a request it may not read, from a missing one.
 */
export async function requestVisibleToLab(requestId: string | undefined, labId: string): Promise<MarketRequest | null> {
  if (!isUuid(requestId)) return null;
  const [row] = await db
    .select({
      request: schema.requests,
      // Qualified by hand, as in requestsPage: inside the subquery an unqualified "id" would be the quote's own.
      quoted: sql<boolean>`exists (select 1 from ${schema.quotes} q where q.request_id = "requests"."id" and q.lab_id = ${labId})`,
    })
    .from(schema.requests)
    .where(eq(schema.requests.id, requestId));
  if (!row) return null;
  return row.quoted || (await inLabInbox(row.request.id, labId)) ? row.request : null;
}

export async function acknowledgementOf(requestId: string, labId: string) {
  const [row] = await db
    .select({ userId: schema.hazardAcknowledgements.userId, name: schema.users.name, at: schema.hazardAcknowledgements.acknowledgedAt })
    .from(schema.hazardAcknowledgements)
    .innerJoin(schema.users, eq(schema.users.id, schema.hazardAcknowledgements.userId))
    .where(and(eq(schema.hazardAcknowledgements.requestId, requestId), eq(schema.hazardAcknowledgements.labId, labId)));
  return row ?? null;
}

/** Records that a lab member has read the hazard declaration; the first acknowledgement per lab stands. */
export async function acknowledgeHazards(requestId: string, labId: string, userId: string) {
  await db.insert(schema.hazardAcknowledgements).values({ requestId, labId, userId }).onConflictDoNothing();
  await audit({ actorUserId: userId, organisationId: labId, action: "hazards_acknowledged", subjectType: "request", subjectId: requestId });
  return acknowledgementOf(requestId, labId);
}

/** Short-lived download links of the samples' safety data sheets, by sample id. */
export async function sdsLinks(samples: Sample[]) {
  const links: Record<string, string> = {};
  for (const s of samples) if (s.sdsStorageKey) links[s.id] = await presignDownload(s.sdsStorageKey, s.sdsFileName ?? undefined);
  return links;
}
