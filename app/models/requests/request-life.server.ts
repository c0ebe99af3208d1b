// A published request's life (docs/design.md#the-requests-life): edits that make a new revision and tell the labs
// that quoted, the lab re-confirming its quote, withdrawal, "Order again", and expiry on the deadline.
import { and, asc, desc, eq, inArray, lt, sql } from "drizzle-orm";
import { db, schema } from "~/db/client.server";
import type { Tx } from "~/db/client.server";
import type { MarketRequest } from "~/db/schema";
import { describeChanges, type RequestSnapshot } from "~/domain/request-revisions";
import { audit } from "~/models/audit.server";
import { notify } from "~/models/notifications/outbox.server";
import { isUuid, samplesOf } from "~/models/requests/requests.server";

/** The request as the labs quoted on it, for describeChanges. */
export async function snapshotOf(requestId: string): Promise<RequestSnapshot | null> {
  const [r] = await db.select().from(schema.requests).where(eq(schema.requests.id, requestId));
  if (!r) return null;
  const samples = await samplesOf(requestId);
  return {
    title: r.title,
    technique: r.technique,
    rangeKind: r.rangeKind,
    rangeMin: r.rangeMin,
    rangeMax: r.rangeMax,
    preferredSource: r.preferredSource,
    temperaturePointsK: r.temperaturePointsK,
    atmosphere: r.atmosphere,
    quality: r.quality,
    deadline: r.deadline,
    budgetMinor: r.budgetMinor,
    currency: r.currency,
    visibility: r.visibility,
    samples: samples.map((s) => ({
      label: s.label,
      formula: s.formula,
      form: s.form,
      massMg: s.massMg,
      expectedPhase: s.expectedPhase,
      cell: [s.crystalSystem === null ? null : 0, s.cellA, s.cellB, s.cellC, s.cellAlpha, s.cellBeta, s.cellGamma],
      phases: s.phases.length,
      hazards: [...s.ghsPictograms, ...s.hStatements, ...s.specialHazards.map((h) => `${h.category}:${h.details}:${h.activityBq ?? ""}`)].sort(),
      afterMeasurement: s.afterMeasurement,
      handlingNotes: s.handlingNotes,
      sdsFileName: s.sdsFileName,
    })),
  };
}

/** Labs with a sent quote on the request (the ones to tell of a change or a close). */
async function quotingLabs(tx: Tx, requestId: string): Promise<string[]> {
  const rows = await tx
    .selectDistinct({ labId: schema.quotes.labId })
    .from(schema.quotes)
    .where(and(eq(schema.quotes.requestId, requestId), eq(schema.quotes.state, "sent")));
  return rows.map((r) => r.labId);
}

export type Revision = { revision: number; summary: string } | null;

/** What a lab acknowledges before quoting: each sample's hazards, handling notes and safety data sheet. */
const hazardsOf = (snap: RequestSnapshot) =>
  JSON.stringify(snap.samples.map((s) => [s.label, s.hazards, s.handlingNotes, s.sdsFileName]).sort((a, b) => String(a[0]).localeCompare(String(b[0]))));

/**
 * Runs one wizard step's save on a request. On a draft that is all; on an open request, when something a lab
 * quotes on changed, the request's revision goes up by one, the change is stored in words and every lab with
 * a sent quote is told (its quote then waits for its re-confirmation). Returns the new revision, if any.
 */
export async function saveStep<T>(request: MarketRequest, userId: string, save: () => Promise<T>): Promise<{ result: T; revision: Revision }> {
  if (request.state !== "open") return { result: await save(), revision: null };
  const before = await snapshotOf(request.id);
  const result = await save();
  const after = await snapshotOf(request.id);
  const summary = before && after ? describeChanges(before, after) : null;
  if (!summary) return { result, revision: null };
  const revision = await db.transaction(async (tx) => {
    const [row] = await tx
      .update(schema.requests)
      .set({ revision: sql`${schema.requests.revision} + 1`, updatedAt: new Date() })
      .where(and(eq(schema.requests.id, request.id), eq(schema.requests.state, "open")))
      .returning({ revision: schema.requests.revision });
    if (!row) return null;
    await tx.insert(schema.requestRevisions).values({ requestId: request.id, revision: row.revision, summary, changedBy: userId });
    // A changed hazard declaration must be read again: every lab's acknowledgement lapses with it.
    if (before && after && hazardsOf(before) !== hazardsOf(after)) {
      await tx.delete(schema.hazardAcknowledgements).where(eq(schema.hazardAcknowledgements.requestId, request.id));
    }
    await audit(
      {
        actorUserId: userId,
        organisationId: request.organisationId,
        action: "request_revised",
        subjectType: "request",
        subjectId: request.id,
        details: { revision: row.revision },
      },
      tx,
    );
    const labIds = await quotingLabs(tx, request.id);
    if (labIds.length) await notify(tx, { kind: "request_revised", requestId: request.id, summary, labIds });
    return { revision: row.revision, summary };
  });
  return { result, revision };
}

/** The changes made after publishing, newest first. */
export async function revisionsOf(requestId: string) {
  return db
    .select({ revision: schema.requestRevisions.revision, summary: schema.requestRevisions.summary, at: schema.requestRevisions.at })
    .from(schema.requestRevisions)
    .where(eq(schema.requestRevisions.requestId, requestId))
    .orderBy(desc(schema.requestRevisions.revision));
}

/**
 * The lab stands by its sent quote for the request as it now reads: the quote then answers the current
 * revision and can be accepted again.
 */
export async function reconfirmQuote(quoteId: string | undefined, labId: string, userId: string): Promise<{ error?: string }> {
  if (!isUuid(quoteId)) return { error: "Choose a quote to re-confirm." };
  return db.transaction(async (tx) => {
    const [row] = await tx
      .select({ quote: schema.quotes, request: schema.requests })
      .from(schema.quotes)
      .innerJoin(schema.requests, eq(schema.requests.id, schema.quotes.requestId))
      .where(and(eq(schema.quotes.id, quoteId), eq(schema.quotes.labId, labId)))
      .for("update");
    if (!row) return { error: "Choose a quote to re-confirm." };
    if (row.request.state !== "open") return { error: "This request is no longer open, so the quote cannot be re-confirmed." };
    if (row.quote.state !== "sent") return { error: `This quote is ${row.quote.state}; send a new one instead.` };
    if (row.quote.validUntil < new Date()) return { error: "This quote's validity has passed; send a new one instead." };
    if (row.quote.requestRevision >= row.request.revision) return { error: "This quote already answers the request as it reads now." };
    const [acknowledged] = await tx
      .select({ at: schema.hazardAcknowledgements.acknowledgedAt })
      .from(schema.hazardAcknowledgements)
      .where(and(eq(schema.hazardAcknowledgements.requestId, row.request.id), eq(schema.hazardAcknowledgements.labId, labId)));
    if (!acknowledged) return { error: "The hazard declaration has changed; acknowledge it again before re-confirming the quote." };
    await tx.update(schema.quotes).set({ requestRevision: row.request.revision }).where(eq(schema.quotes.id, quoteId));
    await audit(
      {
        actorUserId: userId,
        organisationId: labId,
        action: "quote_reconfirmed",
        subjectType: "quote",
        subjectId: quoteId,
        details: { requestId: row.request.id, revision: row.request.revision },
      },
      tx,
    );
    return {};
  });
}

/** Closes an open request (withdrawn or expired) inside a transaction: its sent quotes lapse, the labs are told. */
async function closeRequest(tx: Tx, request: Pick<MarketRequest, "id" | "organisationId">, how: "withdrawn" | "expired", userId: string | null, now: Date) {
  const [row] = await tx
    .update(schema.requests)
    .set({ state: how, closedAt: now, updatedAt: now })
    .where(and(eq(schema.requests.id, request.id), eq(schema.requests.state, "open")))
    .returning({ id: schema.requests.id });
  if (!row) return false;
  const labIds = await quotingLabs(tx, request.id);
  await tx
    .update(schema.quotes)
    .set({ state: "lapsed", decidedAt: now })
    .where(and(eq(schema.quotes.requestId, request.id), eq(schema.quotes.state, "sent")));
  await audit(
    {
      actorUserId: userId,
      organisationId: request.organisationId,
      action: how === "withdrawn" ? "request_withdrawn" : "request_expired",
      subjectType: "request",
      subjectId: request.id,
    },
    tx,
  );
  if (how === "expired" || labIds.length) await notify(tx, { kind: "request_closed", requestId: request.id, how, labIds });
  return true;
}

/** The client withdraws an open request: it closes, its sent quotes lapse and the labs that quoted are told. */
export async function withdrawRequest(request: MarketRequest, userId: string): Promise<{ error?: string }> {
  if (request.state !== "open") return { error: "Only an open request can be withdrawn." };
  const done = await db.transaction((tx) => closeRequest(tx, request, "withdrawn", userId, new Date()));
  return done ? {} : { error: "Only an open request can be withdrawn." };
}

/** Today's calendar date in UTC, as deadlines are stored. */
const isoDay = (d: Date) => d.toISOString().slice(0, 10);

/**
 * The expiry job: every open request whose deadline day has passed (deadline before today, UTC) becomes
 * expired, its sent quotes lapse, the client and the quoting labs are told. `only` limits it to the given
 * requests (a test's or the demo's own). Returns how many expired.
 */
export async function expireOverdueRequests(now = new Date(), only?: string[]): Promise<number> {
  const due = await db
    .select({ id: schema.requests.id, organisationId: schema.requests.organisationId })
    .from(schema.requests)
    .where(
      and(
        eq(schema.requests.state, "open"),
        lt(schema.requests.deadline, isoDay(now)),
        ...(only ? [inArray(schema.requests.id, only.length ? only : ["00000000-0000-0000-0000-000000000000"])] : []),
      ),
    )
    .orderBy(asc(schema.requests.deadline));
  let expired = 0;
  for (const r of due) if (await db.transaction((tx) => closeRequest(tx, r, "expired", null, now))) expired++;
  return expired;
}

/**
 * "Order again": a new draft with the request's samples (their declared phases, windows and hazard
 * declarations, safety data sheets included), measurement needs and who may quote; the deadline is left for
 * the client to set again. Only a request that was published can be repeated.
 */
export async function repeatRequest(request: MarketRequest, userId: string): Promise<{ id: string } | { error: string }> {
  if (request.state === "draft") return { error: "Publish this request first; a draft can simply be edited." };
  const samples = await samplesOf(request.id);
  return db.transaction(async (tx) => {
    const [copy] = await tx
      .insert(schema.requests)
      .values({
        organisationId: request.organisationId,
        createdBy: userId,
        title: request.title,
        technique: request.technique,
        draftStep: "measurement",
        rangeKind: request.rangeKind,
        rangeMin: request.rangeMin,
        rangeMax: request.rangeMax,
        preferredSource: request.preferredSource,
        temperaturePointsK: request.temperaturePointsK,
        atmosphere: request.atmosphere,
        quality: request.quality,
        budgetMinor: request.budgetMinor,
        currency: request.currency,
        visibility: request.visibility,
        repeatOf: request.id,
      })
      .returning({ id: schema.requests.id });
    for (const { id: _id, requestId: _r, createdAt: _c, phases, ...columns } of samples) {
      const [sample] = await tx
        .insert(schema.samples)
        .values({ ...columns, requestId: copy.id })
        .returning({ id: schema.samples.id });
      if (phases.length) await tx.insert(schema.samplePhases).values(phases.map(({ id: _p, sampleId: _s, ...phase }) => ({ ...phase, sampleId: sample.id })));
    }
    const invited = await tx
      .select({ labId: schema.requestInvitations.labId })
      .from(schema.requestInvitations)
      .where(eq(schema.requestInvitations.requestId, request.id));
    if (invited.length) await tx.insert(schema.requestInvitations).values(invited.map((i) => ({ requestId: copy.id, labId: i.labId })));
    await audit(
      {
        actorUserId: userId,
        organisationId: request.organisationId,
        action: "request_repeated",
        subjectType: "request",
        subjectId: copy.id,
        details: { repeatOf: request.id },
      },
      tx,
    );
    return copy;
  });
}
