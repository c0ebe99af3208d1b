// Quotes: drafted from the lab's price list, sent after the hazard acknowledgement, withdrawn, lapsed, accepted.
import { and, asc, desc, eq, inArray, lt, ne, sql } from "drizzle-orm";
import { db, schema } from "~/db/client.server";
import type { MarketRequest, PriceList, QuoteLineItem, Sample } from "~/db/schema";
import { notify } from "~/models/notifications/outbox.server";
import { audit } from "~/models/audit.server";
import { createOrderTx } from "~/models/orders/create.server";
import { declaresHazard } from "~/domain/hazards";
import { labelOf, sourceLabel } from "~/domain/matching";
import type { QuoteInput } from "~/domain/quote-forms";
import { AWAITING_RECONFIRMATION } from "~/domain/request-revisions";
import { acknowledgementOf, isUuid } from "~/models/requests/requests.server";
import type { PurchaseOrder } from "~/models/orders/purchase-orders.server";
import { PO_REQUIRED } from "~/domain/purchase-orders";
import { pageOf, type TableQuery } from "~/utils/table";

/** Line items a quote starts from: per sample by technique, extra temperature points, preparation, hazardous handling. */
export function draftLineItems(request: Pick<MarketRequest, "technique" | "temperaturePointsK">, samples: Sample[], prices: PriceList | null): QuoteLineItem[] {
  if (!prices) return [];
  const n = Math.max(samples.length, 1);
  const item = (description: string, quantity: number, unitMinor: number): QuoteLineItem => ({
    description,
    quantity,
    unitMinor,
    totalMinor: quantity * unitMinor,
  });
  const items: QuoteLineItem[] = [];
  const perSample = prices.perSampleMinor[request.technique];
  if (perSample !== undefined) {
    const technique = labelOf(request.technique);
    items.push(item(`${technique[0].toUpperCase()}${technique.slice(1)} measurement, per sample`, n, perSample));
  }
  const extraPoints = Math.max(request.temperaturePointsK.length - 1, 0);
  if (extraPoints > 0 && prices.perExtraTemperaturePointMinor > 0) {
    items.push(item(`Extra temperature points (${extraPoints} per sample)`, n * extraPoints, prices.perExtraTemperaturePointMinor));
  }
  if (prices.samplePreparationMinor > 0) items.push(item("Sample preparation, per sample", n, prices.samplePreparationMinor));
  // Once per request, as the matching estimate counts it.
  if (samples.some(declaresHazard) && prices.hazardousHandlingMinor > 0) items.push(item("Hazardous handling", 1, prices.hazardousHandlingMinor));
  return items;
}

export async function priceListOf(labId: string) {
  const [row] = await db.select().from(schema.priceLists).where(eq(schema.priceLists.labId, labId));
  return row ?? null;
}

export async function instrumentsOf(labId: string) {
  return db
    .select({
      id: schema.instruments.id,
      name: schema.instruments.name,
      anode: schema.instruments.anode,
      customWavelength: schema.instruments.customWavelength,
      technique: schema.instruments.technique,
    })
    .from(schema.instruments)
    .where(and(eq(schema.instruments.labId, labId), eq(schema.instruments.active, true)))
    .orderBy(asc(schema.instruments.createdAt));
}

/** The state of each of the lab's quotes on the given requests. */
export async function quoteStatesOfLab(labId: string, requestIds: string[]) {
  if (requestIds.length === 0) return [];
  return db
    .select({ requestId: schema.quotes.requestId, state: schema.quotes.state })
    .from(schema.quotes)
    .where(and(eq(schema.quotes.labId, labId), inArray(schema.quotes.requestId, requestIds)));
}

/** The instrument a quote named (its source, name, sample holder and profile), if it still exists. */
export async function quotedInstrumentOf(quoteId: string) {
  const [row] = await db
    .select({ instrument: schema.instruments })
    .from(schema.quotes)
    .innerJoin(schema.instruments, eq(schema.instruments.id, schema.quotes.instrumentId))
    .where(eq(schema.quotes.id, quoteId));
  return row?.instrument;
}

/** The lab's vetting state, or null when the organisation has no lab profile yet. */
export async function vettingStateOf(labId: string) {
  const [row] = await db.select({ state: schema.labs.vettingState }).from(schema.labs).where(eq(schema.labs.organisationId, labId));
  return row?.state ?? null;
}

/** Marks every sent quote (of one lab, when given) whose validity has passed as lapsed; returns how many changed. */
export async function lapseExpiredQuotes(now = new Date(), labId?: string) {
  const lapsed = await db
    .update(schema.quotes)
    .set({ state: "lapsed", decidedAt: now })
    .where(and(labId ? eq(schema.quotes.labId, labId) : undefined, eq(schema.quotes.state, "sent"), lt(schema.quotes.validUntil, now)))
    .returning({ id: schema.quotes.id });
  return lapsed.length;
}

/** End of the chosen day in UTC: a quote "valid until 12 May" can still be accepted on 12 May. */
export const endOfDay = (isoDate: string) => new Date(`${isoDate}T23:59:59.999Z`);

export type SendQuoteResult = { ok: true; quoteId: string } | { ok: false; formError?: string; fieldErrors?: Record<string, string[]> };

/**
 * Sends a lab's quote on a request. Refused unless the lab is approved, a member has acknowledged the hazard
 * declaration, the request is open and the lab has no live quote on it. The total is the sum of the items.
 */
export async function sendQuote(request: MarketRequest, labId: string, userId: string, input: QuoteInput): Promise<SendQuoteResult> {
  if ((await vettingStateOf(labId)) !== "approved") return { ok: false, formError: "Only approved labs can send quotes." };
  // The money of an accepted quote is paid out to the lab's account, so it must exist first (docs/design.md#quotes).
  const [payout] = await db.select({ ready: schema.labs.payoutsEnabled }).from(schema.labs).where(eq(schema.labs.organisationId, labId));
  if (!payout?.ready) return { ok: false, formError: "Connect your lab's payout account (Payouts) before sending quotes." };
  if (!(await acknowledgementOf(request.id, labId))) {
    return { ok: false, formError: "Acknowledge the hazard declaration before sending a quote." };
  }
  if (request.state !== "open") return { ok: false, formError: "This request is no longer open for quotes." };
  const instrument = (await instrumentsOf(labId)).find((i) => i.id === input.instrumentId);
  if (!instrument) return { ok: false, fieldErrors: { instrumentId: ["Choose one of your lab's instruments."] } };
  const prices = await priceListOf(labId);
  const lineItems: QuoteLineItem[] = input.items.map((i) => ({
    description: i.description,
    quantity: i.quantity,
    unitMinor: i.unitPrice,
    totalMinor: i.quantity * i.unitPrice,
  }));
  const totalMinor = lineItems.reduce((sum, i) => sum + i.totalMinor, 0);
  if (totalMinor <= 0) return { ok: false, fieldErrors: { items: ["The quote's total must be above zero."] } };
  if (totalMinor > 2_000_000_000) return { ok: false, fieldErrors: { items: ["The total is too large."] } };
  await lapseExpiredQuotes();
  const [live] = await db
    .select({ id: schema.quotes.id })
    .from(schema.quotes)
    .where(and(eq(schema.quotes.requestId, request.id), eq(schema.quotes.labId, labId), eq(schema.quotes.state, "sent")));
  if (live) return { ok: false, formError: "Your lab already has a quote on this request; withdraw it to send a new one." };
  const quote = await db.transaction(async (tx) => {
    const [row] = await tx
      .insert(schema.quotes)
      .values({
        requestId: request.id,
        labId,
        instrumentId: instrument.id,
        lineItems,
        totalMinor,
        currency: prices?.currency ?? request.currency,
        validUntil: endOfDay(input.validUntil),
        turnaroundDays: input.turnaroundDays,
        notes: input.notes ?? "",
        requestRevision: request.revision,
        createdBy: userId,
      })
      .returning({ id: schema.quotes.id });
    await audit(
      {
        actorUserId: userId,
        organisationId: labId,
        action: "quote_sent",
        subjectType: "quote",
        subjectId: row.id,
        details: { requestId: request.id, totalMinor },
      },
      tx,
    );
    await notify(tx, { kind: "quote_received", quoteId: row.id });
    return row;
  });
  return { ok: true, quoteId: quote.id };
}

/** A lab's own quote, lapsed first if its validity has run out; null for another lab's or a malformed id. */
export async function labQuoteOf(quoteId: string | undefined, labId: string) {
  if (!isUuid(quoteId)) return null;
  await lapseExpiredQuotes();
  const [row] = await db
    .select()
    .from(schema.quotes)
    .where(and(eq(schema.quotes.id, quoteId), eq(schema.quotes.labId, labId)));
  return row ?? null;
}

export async function withdrawQuote(quoteId: string, labId: string, userId: string): Promise<{ error?: string }> {
  const changed = await db
    .update(schema.quotes)
    .set({ state: "withdrawn", decidedAt: new Date() })
    .where(and(eq(schema.quotes.id, quoteId), eq(schema.quotes.labId, labId), eq(schema.quotes.state, "sent")))
    .returning({ id: schema.quotes.id });
  if (changed.length === 0) return { error: "Only a quote that is still sent can be withdrawn." };
  await audit({ actorUserId: userId, organisationId: labId, action: "quote_withdrawn", subjectType: "quote", subjectId: quoteId });
  return {};
}

const quoteColumns = {
  id: schema.quotes.id,
  requestId: schema.quotes.requestId,
  labId: schema.quotes.labId,
  labName: schema.organisations.name,
  state: schema.quotes.state,
  lineItems: schema.quotes.lineItems,
  totalMinor: schema.quotes.totalMinor,
  currency: schema.quotes.currency,
  validUntil: schema.quotes.validUntil,
  turnaroundDays: schema.quotes.turnaroundDays,
  notes: schema.quotes.notes,
  requestRevision: schema.quotes.requestRevision,
  sentAt: schema.quotes.sentAt,
  instrumentName: schema.instruments.name,
  anode: schema.instruments.anode,
  customWavelength: schema.instruments.customWavelength,
  technique: schema.instruments.technique,
};

function withSource<T extends { anode: string | null; customWavelength: number | null; technique: string | null }>(q: T) {
  const { anode, customWavelength, technique, ...rest } = q;
  const source = technique ? sourceLabel({ anode: anode as never, customWavelength, technique }) : null;
  return { ...rest, source };
}

/** Every quote on a request (the client's view), lapsed ones marked first. */
export async function quotesForRequest(requestId: string) {
  await lapseExpiredQuotes();
  const rows = await db
    .select(quoteColumns)
    .from(schema.quotes)
    .innerJoin(schema.organisations, eq(schema.organisations.id, schema.quotes.labId))
    .leftJoin(schema.instruments, eq(schema.instruments.id, schema.quotes.instrumentId))
    .where(eq(schema.quotes.requestId, requestId))
    .orderBy(asc(schema.quotes.totalMinor));
  return rows.map(withSource);
}

/** Quotes with their lab, instrument and request's title, for a `where` to narrow. */
const quotesWithTitles = () =>
  db
    .select({ ...quoteColumns, requestTitle: schema.requests.title })
    .from(schema.quotes)
    .innerJoin(schema.organisations, eq(schema.organisations.id, schema.quotes.labId))
    .innerJoin(schema.requests, eq(schema.requests.id, schema.quotes.requestId))
    .leftJoin(schema.instruments, eq(schema.instruments.id, schema.quotes.instrumentId));

/** A lab's own quotes on one request, with the request's title, newest first. */
export async function labQuotesOnRequest(labId: string, requestId: string) {
  await lapseExpiredQuotes(new Date(), labId);
  const rows = await quotesWithTitles()
    .where(and(eq(schema.quotes.labId, labId), eq(schema.quotes.requestId, requestId)))
    .orderBy(desc(schema.quotes.sentAt));
  return rows.map(withSource);
}

export const LAB_QUOTES_PAGE_SIZE = 25;

/**
 * One page of a lab's quotes with their requests' titles, newest first (oldest first with `dir` asc), and how many
 * quotes the lab has in all: the page's rows only are read (limit/offset), a page past the end gives the last page.
 */
export async function quotesPageForLab(labId: string, q: Pick<TableQuery, "page" | "pageSize" | "dir">) {
  // The lab's own quotes only: the (lab, state) index finds them, where every lab's would be read otherwise.
  await lapseExpiredQuotes(new Date(), labId);
  const [{ total }] = await db.select({ total: sql<number>`count(*)::int` }).from(schema.quotes).where(eq(schema.quotes.labId, labId));
  const info = pageOf(total, q);
  const rows = await quotesWithTitles()
    .where(eq(schema.quotes.labId, labId))
    // The id breaks ties so that a quote never shows on two pages.
    .orderBy(q.dir === "asc" ? asc(schema.quotes.sentAt) : desc(schema.quotes.sentAt), asc(schema.quotes.id))
    .limit(info.pageSize)
    .offset(info.offset);
  return { quotes: rows.map(withSource), ...info };
}

export type AcceptResult = { ok: true; orderId: string } | { ok: false; error: string };

/**
 * Accepts one quote. In one transaction, holding the request row locked: the quote becomes accepted, the
 * other sent quotes declined, the request awarded, and an order in awaiting_payment with its first timeline
 * row is created. A second accept on the same request waits for the lock, then finds it awarded; should
 * anything slip past, the orders' unique keys turn it into the same clear refusal. The purchase order (checked by
 * checkPurchaseOrder) goes onto the order; an organisation that requires one is refused without a number.
 */
export async function acceptQuote(
  requestId: string,
  quoteId: string,
  organisationId: string,
  userId: string,
  po: PurchaseOrder | null = null,
): Promise<AcceptResult> {
  if (!isUuid(quoteId)) return { ok: false, error: "Choose a quote to accept." };
  const now = new Date();
  try {
    return await db.transaction(async (tx) => {
      const [quote] = await tx
        .select()
        .from(schema.quotes)
        .where(and(eq(schema.quotes.id, quoteId), eq(schema.quotes.requestId, requestId)));
      if (!quote) return { ok: false, error: "That quote is not on this request." } as const;
      const [request] = await tx
        .select()
        .from(schema.requests)
        .where(and(eq(schema.requests.id, quote.requestId), eq(schema.requests.organisationId, organisationId)))
        .for("update");
      if (!request) return { ok: false, error: "That quote is not on this request." } as const;
      if (quote.state === "accepted") return { ok: false, error: "You have already accepted this quote; its order is under Orders." } as const;
      if (request.state === "awarded") return { ok: false, error: "This request has already been awarded; another quote was accepted." } as const;
      if (request.state !== "open") return { ok: false, error: "This request is not open, so no quote can be accepted." } as const;
      if (quote.state !== "sent") return { ok: false, error: `This quote is ${quote.state} and can no longer be accepted.` } as const;
      if (quote.validUntil < now) return { ok: false, error: "This quote's validity has passed; ask the lab for a new one." } as const;
      if (quote.requestRevision < request.revision) return { ok: false, error: AWAITING_RECONFIRMATION } as const;
      const [client] = await tx
        .select({ requiresPurchaseOrder: schema.organisations.requiresPurchaseOrder })
        .from(schema.organisations)
        .where(eq(schema.organisations.id, organisationId));
      if (client?.requiresPurchaseOrder && !po?.number) return { ok: false, error: PO_REQUIRED } as const;
      await tx.update(schema.quotes).set({ state: "accepted", decidedAt: now }).where(eq(schema.quotes.id, quote.id));
      await tx
        .update(schema.quotes)
        .set({ state: "declined", decidedAt: now })
        .where(and(eq(schema.quotes.requestId, request.id), ne(schema.quotes.id, quote.id), eq(schema.quotes.state, "sent")));
      await tx.update(schema.requests).set({ state: "awarded", updatedAt: now }).where(eq(schema.requests.id, request.id));
      // The quote's total is net; the tax is fixed now and added to what the client pays (docs/design.md#tax-on-invoices).
      const order = await createOrderTx(tx, {
        requestId: request.id,
        quoteId: quote.id,
        clientOrganisationId: organisationId,
        labId: quote.labId,
        netMinor: quote.totalMinor,
        currency: quote.currency,
        po,
        actorUserId: userId,
        note: "Quote accepted",
        at: now,
      });
      await audit(
        {
          actorUserId: userId,
          organisationId,
          action: "quote_accepted",
          subjectType: "quote",
          subjectId: quote.id,
          details: { orderId: order.id, ...(po?.number ? { purchaseOrderNumber: po.number } : {}) },
        },
        tx,
      );
      await notify(tx, { kind: "quote_decided", acceptedQuoteId: quote.id, orderId: order.id });
      return { ok: true, orderId: order.id } as const;
    });
  } catch (err) {
    if ((err as { cause?: { code?: string } }).cause?.code === "23505") {
      return { ok: false, error: "This request has already been awarded; another quote was accepted." };
    }
    throw err;
  }
}

/** The order of an awarded request, with its timeline. */
export async function orderForRequest(requestId: string) {
  const [order] = await db.select().from(schema.orders).where(eq(schema.orders.requestId, requestId));
  if (!order) return null;
  const events = await db.select().from(schema.orderEvents).where(eq(schema.orderEvents.orderId, order.id)).orderBy(asc(schema.orderEvents.at));
  return { ...order, events };
}
