// Standing agreements between a client and a lab for one material: proposed from an accepted quote, agreed or
// declined by the lab, lots ordered under them without a round of quotes, ended at their date, their cap or
// after notice (docs/design.md#standing-agreements). Every move is audit-logged and both sides are told.
import { and, asc, desc, eq, inArray, lte, notInArray, or, sql } from "drizzle-orm";
import { db, schema, type Tx } from "~/db/client.server";
import type { StandingAgreement } from "~/db/schema";
import { type AgreementState, capReached, dayEnd, dayStart, isoDay, lotRefusal, NOTICE_DAYS_MAX, REFUNDED_ORDER_STATES } from "~/domain/agreements";
import { formatMoney, MAX_AMOUNT_MINOR } from "~/domain/money";
import { PO_REQUIRED } from "~/domain/purchase-orders";
import { audit } from "~/models/audit.server";
import { takeAgreementNumber } from "~/models/invoices/numbering.server";
import { requestForLotsTx } from "~/models/materials/materials.server";
import { notify } from "~/models/notifications/outbox.server";
import { createOrderTx } from "~/models/orders/create.server";
import type { PurchaseOrder } from "~/models/orders/purchase-orders.server";
import { isUuid } from "~/models/requests/requests.server";

const DAY_MS = 86_400_000;
/** How long a lot's order waits for payment by bank transfer at least (its terms row's validity). */
const LOT_PAYMENT_DAYS = 14;

export type Side = "client" | "lab";
type Result<T = object> = ({ ok: true } & T) | { ok: false; error: string };

const refuse = (error: string) => ({ ok: false, error }) as const;

// ─────────────── Reading ───────────────

/** The client organisation's materials that an agreement may name (not archived), by product code. */
export async function agreementMaterialsOf(organisationId: string) {
  return db
    .select({ id: schema.materials.id, productCode: schema.materials.productCode, name: schema.materials.name })
    .from(schema.materials)
    .where(and(eq(schema.materials.organisationId, organisationId), sql`${schema.materials.archivedAt} is null`))
    .orderBy(asc(schema.materials.productCode));
}

/** Lots used and net money spent of each agreement: its orders' samples and amounts less tax, refunded orders left out. */
async function usageOf(ids: string[], tx: Tx | typeof db = db) {
  const usage = new Map<string, { lots: number; spentNetMinor: number; orders: number }>();
  if (ids.length === 0) return usage;
  const live = and(inArray(schema.orders.agreementId, ids), notInArray(schema.orders.state, [...REFUNDED_ORDER_STATES]));
  const money = await tx
    .select({
      id: schema.orders.agreementId,
      spent: sql<string>`coalesce(sum(${schema.orders.amountMinor} - ${schema.orders.taxMinor}), 0)`,
      orders: sql<number>`count(*)::int`,
    })
    .from(schema.orders)
    .where(live)
    .groupBy(schema.orders.agreementId);
  const lots = await tx
    .select({ id: schema.orders.agreementId, lots: sql<number>`count(${schema.samples.id})::int` })
    .from(schema.orders)
    .innerJoin(schema.samples, eq(schema.samples.requestId, schema.orders.requestId))
    .where(live)
    .groupBy(schema.orders.agreementId);
  for (const id of ids) usage.set(id, { lots: 0, spentNetMinor: 0, orders: 0 });
  for (const m of money) if (m.id) Object.assign(usage.get(m.id)!, { spentNetMinor: Number(m.spent), orders: m.orders });
  for (const l of lots) if (l.id) usage.get(l.id)!.lots = l.lots;
  return usage;
}

const listColumns = {
  id: schema.standingAgreements.id,
  number: schema.standingAgreements.number,
  state: schema.standingAgreements.state,
  clientOrganisationId: schema.standingAgreements.clientOrganisationId,
  labId: schema.standingAgreements.labId,
  materialName: schema.materials.name,
  materialCode: schema.materials.productCode,
  pricePerLotMinor: schema.standingAgreements.pricePerLotMinor,
  budgetCapMinor: schema.standingAgreements.budgetCapMinor,
  currency: schema.standingAgreements.currency,
  turnaroundDays: schema.standingAgreements.turnaroundDays,
  startsOn: schema.standingAgreements.startsOn,
  endsOn: schema.standingAgreements.endsOn,
  endingAt: schema.standingAgreements.endingAt,
  endedBecause: schema.standingAgreements.endedBecause,
};

/** The organisation's agreements on its side, newest first, each with its usage and the other party's name. */
export async function agreementsOf(side: Side, organisationId: string) {
  const mine = side === "client" ? schema.standingAgreements.clientOrganisationId : schema.standingAgreements.labId;
  const other = side === "client" ? schema.standingAgreements.labId : schema.standingAgreements.clientOrganisationId;
  const rows = await db
    .select({ ...listColumns, counterpart: schema.organisations.name })
    .from(schema.standingAgreements)
    .innerJoin(schema.materials, eq(schema.materials.id, schema.standingAgreements.materialId))
    .innerJoin(schema.organisations, eq(schema.organisations.id, other))
    .where(eq(mine, organisationId))
    .orderBy(desc(schema.standingAgreements.createdAt));
  const usage = await usageOf(rows.map((r) => r.id));
  return rows.map((r) => {
    const u = usage.get(r.id)!;
    return { ...r, ...u, remainingMinor: Math.max(r.budgetCapMinor - u.spentNetMinor, 0), lotsAffordable: Math.floor(r.budgetCapMinor / r.pricePerLotMinor) };
  });
}

/** One agreement as one of its parties sees it (null for anyone else, or an id that is none), with usage and orders. */
export async function agreementForParty(id: string | undefined, side: Side, organisationId: string) {
  if (!isUuid(id)) return null;
  const mine = side === "client" ? schema.standingAgreements.clientOrganisationId : schema.standingAgreements.labId;
  const [row] = await db
    .select({ agreement: schema.standingAgreements, material: schema.materials })
    .from(schema.standingAgreements)
    .innerJoin(schema.materials, eq(schema.materials.id, schema.standingAgreements.materialId))
    .where(and(eq(schema.standingAgreements.id, id), eq(mine, organisationId)));
  if (!row) return null;
  const a = row.agreement;
  const [client, lab] = await Promise.all([nameOf(a.clientOrganisationId), nameOf(a.labId)]);
  const [instrument] = a.instrumentId
    ? await db.select({ name: schema.instruments.name }).from(schema.instruments).where(eq(schema.instruments.id, a.instrumentId))
    : [];
  const orders = await db
    .select({
      id: schema.orders.id,
      number: schema.orders.number,
      state: schema.orders.state,
      amountMinor: schema.orders.amountMinor,
      taxMinor: schema.orders.taxMinor,
      createdAt: schema.orders.createdAt,
      lots: sql<
        string[]
      >`coalesce(array_agg(${schema.samples.lotCode} order by ${schema.samples.position}) filter (where ${schema.samples.id} is not null), '{}')`,
    })
    .from(schema.orders)
    .leftJoin(schema.samples, eq(schema.samples.requestId, schema.orders.requestId))
    .where(eq(schema.orders.agreementId, a.id))
    .groupBy(schema.orders.id)
    .orderBy(asc(schema.orders.createdAt));
  const usage = (await usageOf([a.id])).get(a.id)!;
  return {
    agreement: a,
    material: { id: row.material.id, productCode: row.material.productCode, name: row.material.name },
    clientName: client,
    labName: lab,
    instrumentName: instrument?.name ?? null,
    orders,
    usage: { ...usage, remainingMinor: Math.max(a.budgetCapMinor - usage.spentNetMinor, 0) },
  };
}

async function nameOf(organisationId: string, tx: Tx | typeof db = db) {
  const [row] = await tx.select({ name: schema.organisations.name }).from(schema.organisations).where(eq(schema.organisations.id, organisationId));
  return row?.name ?? "—";
}

/** The agreements an order's quote may become (none yet on it), for the client's order page. */
export async function agreementsFromQuote(quoteId: string) {
  return db
    .select({ id: schema.standingAgreements.id, number: schema.standingAgreements.number, state: schema.standingAgreements.state })
    .from(schema.standingAgreements)
    .where(eq(schema.standingAgreements.sourceQuoteId, quoteId));
}

// ─────────────── Proposing and deciding ───────────────

export interface ProposalInput {
  materialId: string;
  startsOn: string;
  endsOn: string;
  budgetCapMinor: number;
  noticeDays: number;
}

/**
 * The client proposes an agreement from one of its orders' accepted quotes: the quote's line items, net total
 * (the price per lot), instrument and turnaround, for one of its materials, a period, a budget cap and notice days.
 */
export async function proposeAgreement(
  orderId: string,
  clientOrganisationId: string,
  userId: string,
  input: ProposalInput,
  now = new Date(),
): Promise<Result<{ agreementId: string }>> {
  if (!isUuid(orderId)) return refuse("Choose one of your orders to make the agreement from.");
  const [found] = await db
    .select({ order: schema.orders, quote: schema.quotes })
    .from(schema.orders)
    .innerJoin(schema.quotes, eq(schema.quotes.id, schema.orders.quoteId))
    .where(and(eq(schema.orders.id, orderId), eq(schema.orders.clientOrganisationId, clientOrganisationId)));
  if (!found) return refuse("Choose one of your orders to make the agreement from.");
  const { order, quote } = found;
  if (quote.state !== "accepted") return refuse("Only an accepted quote can become a standing agreement.");
  if (order.agreementId) return refuse("This order is itself a lot of an agreement; propose from the order the agreement came from.");
  if (!isUuid(input.materialId)) return refuse("Choose the material the agreement is for.");
  const [material] = await db
    .select()
    .from(schema.materials)
    .where(and(eq(schema.materials.id, input.materialId), eq(schema.materials.organisationId, clientOrganisationId)));
  if (!material || material.archivedAt) return refuse("Choose one of your organisation's materials.");
  const problem = proposalProblem(input, quote.totalMinor, now);
  if (problem) return refuse(problem);
  const id = await db.transaction(async (tx) => {
    const [row] = await tx
      .insert(schema.standingAgreements)
      .values({
        number: await takeAgreementNumber(tx, clientOrganisationId, now),
        clientOrganisationId,
        labId: order.labId,
        materialId: material.id,
        sourceQuoteId: quote.id,
        instrumentId: quote.instrumentId,
        lineItems: quote.lineItems,
        pricePerLotMinor: quote.totalMinor,
        currency: quote.currency,
        turnaroundDays: quote.turnaroundDays,
        startsOn: input.startsOn,
        endsOn: input.endsOn,
        budgetCapMinor: input.budgetCapMinor,
        noticeDays: input.noticeDays,
        state: "proposed",
        createdBy: userId,
      })
      .returning({ id: schema.standingAgreements.id, number: schema.standingAgreements.number });
    await audit(
      {
        actorUserId: userId,
        organisationId: clientOrganisationId,
        action: "agreement_proposed",
        subjectType: "standing_agreement",
        subjectId: row.id,
        details: { number: row.number, orderId, materialId: material.id, budgetCapMinor: input.budgetCapMinor },
      },
      tx,
    );
    await notify(tx, { kind: "agreement_event", agreementId: row.id, event: "proposed", note: "" });
    return row.id;
  });
  return { ok: true, agreementId: id };
}

/** What is wrong with a proposal's terms, in one sentence, or null. */
export function proposalProblem(input: ProposalInput, pricePerLotMinor: number, now: Date): string | null {
  const valid = (d: string) => /^\d{4}-\d{2}-\d{2}$/.test(d) && !Number.isNaN(dayStart(d).getTime()) && isoDay(dayStart(d)) === d;
  if (!valid(input.startsOn)) return "Give the first day of the agreement as a date.";
  if (!valid(input.endsOn)) return "Give the last day of the agreement as a date.";
  if (input.endsOn < input.startsOn) return "The agreement must end on or after the day it starts.";
  if (dayEnd(input.endsOn) < now) return "The agreement's last day has already passed; choose a later one.";
  if (dayStart(input.endsOn).getTime() - dayStart(input.startsOn).getTime() > 5 * 366 * DAY_MS) return "An agreement runs for at most five years.";
  if (!Number.isInteger(input.budgetCapMinor) || input.budgetCapMinor <= 0) return "Give the budget cap as an amount above zero.";
  if (input.budgetCapMinor > MAX_AMOUNT_MINOR) return "The budget cap is too large.";
  if (input.budgetCapMinor < pricePerLotMinor) return "The budget cap must cover at least one lot at the agreed price.";
  if (!Number.isInteger(input.noticeDays) || input.noticeDays < 0 || input.noticeDays > NOTICE_DAYS_MAX) {
    return `Give the notice as a whole number of days from 0 to ${NOTICE_DAYS_MAX}.`;
  }
  return null;
}

async function lockedAgreement(tx: Tx, id: string, side: Side, organisationId: string) {
  if (!isUuid(id)) return undefined;
  const mine = side === "client" ? schema.standingAgreements.clientOrganisationId : schema.standingAgreements.labId;
  const [row] = await tx
    .select()
    .from(schema.standingAgreements)
    .where(and(eq(schema.standingAgreements.id, id), eq(mine, organisationId)))
    .for("update");
  return row;
}

/** The lab agrees to a proposed agreement (it becomes active) or declines it (it ends, with the lab's reason). */
export async function decideAgreement(id: string, labId: string, userId: string, agree: boolean, reason = "", now = new Date()): Promise<Result> {
  return db.transaction(async (tx) => {
    const a = await lockedAgreement(tx, id, "lab", labId);
    if (!a) return refuse("No such agreement for your lab.");
    if (a.state !== "proposed")
      return refuse(`This agreement is ${a.state === "ending" ? "under notice" : a.state}; only a proposed one can be ${agree ? "agreed" : "declined"}.`);
    if (agree && dayEnd(a.endsOn) < now) return refuse("The proposed period has already ended; ask the client for a new proposal.");
    const set = agree
      ? { state: "active" as const, agreedBy: userId, agreedAt: now, updatedAt: now }
      : { state: "ended" as const, endedAt: now, endedBecause: reason ? `Declined by the lab: ${reason}` : "Declined by the lab", updatedAt: now };
    await tx.update(schema.standingAgreements).set(set).where(eq(schema.standingAgreements.id, a.id));
    await audit(
      {
        actorUserId: userId,
        organisationId: labId,
        action: agree ? "agreement_agreed" : "agreement_declined",
        subjectType: "standing_agreement",
        subjectId: a.id,
        details: { number: a.number, ...(reason ? { reason } : {}) },
      },
      tx,
    );
    await notify(tx, { kind: "agreement_event", agreementId: a.id, event: agree ? "agreed" : "declined", note: reason });
    return { ok: true } as const;
  });
}

/**
 * Either side gives notice with a reason: an active agreement ends `noticeDays` after now (or on its end date if
 * that comes first); until then it is "ending" and lots may still be ordered. A proposal the client withdraws,
 * or notice of 0 days, ends it at once.
 */
export async function giveNotice(id: string, side: Side, organisationId: string, userId: string, reason: string, now = new Date()): Promise<Result> {
  const why = reason.trim().replace(/\s+/g, " ");
  if (why.length < 3) return refuse("Say in a few words why the agreement ends.");
  if (why.length > 500) return refuse("Keep the reason under 500 characters.");
  return db.transaction(async (tx) => {
    const a = await lockedAgreement(tx, id, side, organisationId);
    if (!a) return refuse(side === "client" ? "No such agreement in your organisation." : "No such agreement for your lab.");
    if (a.state === "ended") return refuse("This agreement has already ended.");
    if (a.state === "ending") return refuse("Notice has already been given on this agreement.");
    if (a.state === "proposed" && side === "lab") return refuse("Decline the proposal instead of giving notice.");
    const endingAt = new Date(Math.min(now.getTime() + a.noticeDays * DAY_MS, dayEnd(a.endsOn).getTime()));
    const atOnce = a.state === "proposed" || endingAt <= now;
    const because = a.state === "proposed" ? `Withdrawn by the client: ${why}` : `Notice by the ${side}: ${why}`;
    await tx
      .update(schema.standingAgreements)
      .set({
        state: atOnce ? "ended" : "ending",
        noticeGivenAt: now,
        noticeGivenBy: userId,
        noticeReason: why,
        endingAt: atOnce ? now : endingAt,
        ...(atOnce ? { endedAt: now, endedBecause: because } : {}),
        updatedAt: now,
      })
      .where(eq(schema.standingAgreements.id, a.id));
    await audit(
      {
        actorUserId: userId,
        organisationId,
        action: atOnce ? "agreement_ended" : "agreement_notice_given",
        subjectType: "standing_agreement",
        subjectId: a.id,
        details: { number: a.number, side, reason: why, endingAt: (atOnce ? now : endingAt).toISOString() },
      },
      tx,
    );
    await notify(tx, { kind: "agreement_event", agreementId: a.id, event: atOnce ? "ended" : "notice", note: atOnce ? because : why });
    return { ok: true } as const;
  });
}

async function endAgreementTx(tx: Tx, a: StandingAgreement, because: string, now: Date, actorUserId: string | null) {
  await tx
    .update(schema.standingAgreements)
    .set({ state: "ended", endedAt: now, endedBecause: because, updatedAt: now })
    .where(eq(schema.standingAgreements.id, a.id));
  await audit(
    {
      actorUserId,
      organisationId: a.clientOrganisationId,
      action: "agreement_ended",
      subjectType: "standing_agreement",
      subjectId: a.id,
      details: { number: a.number, because },
    },
    tx,
  );
  await notify(tx, { kind: "agreement_event", agreementId: a.id, event: "ended", note: because });
}

/**
 * The scheduler's sweep: agreements past their last day end ("its end date"), those whose notice ran out end
 * ("notice"), and proposals the lab never answered lapse with their period. Returns how many ended.
 */
export async function endDueAgreements(now = new Date()) {
  const today = isoDay(now);
  const due = await db
    .select({ id: schema.standingAgreements.id })
    .from(schema.standingAgreements)
    .where(
      and(
        inArray(schema.standingAgreements.state, ["proposed", "active", "ending"]),
        or(sql`${schema.standingAgreements.endsOn} < ${today}`, lte(schema.standingAgreements.endingAt, now)),
      ),
    );
  let ended = 0;
  for (const { id } of due) {
    const done = await db.transaction(async (tx) => {
      const [a] = await tx.select().from(schema.standingAgreements).where(eq(schema.standingAgreements.id, id)).for("update");
      if (!a || a.state === "ended") return false;
      const byNotice = a.state === "ending" && a.endingAt && a.endingAt <= now && a.endingAt < dayEnd(a.endsOn);
      const because =
        a.state === "proposed"
          ? `Lapsed: the lab did not answer before its last day, ${a.endsOn}`
          : byNotice
            ? `Ended after notice: ${a.noticeReason ?? ""}`.replace(/: $/, "")
            : `Reached its end date, ${a.endsOn}`;
      if (!byNotice && a.endsOn >= today) return false;
      await endAgreementTx(tx, a, because, now, null);
      return true;
    });
    if (done) ended++;
  }
  return ended;
}

// ─────────────── Ordering a lot ───────────────

/**
 * The client orders lots under an active agreement (or one under notice): in one transaction, holding the
 * agreement row locked, the request and its samples are made from the material (requestForLotsTx, as for any
 * lot), the agreement's terms are kept as the order's accepted terms, and the order is created awaiting payment
 * at the agreed price per lot plus tax — no quote is sent, compared or accepted. Refused, changing nothing, when the agreement is not running,
 * outside its period, or when the lots would pass the budget cap. The lot that leaves no room for another ends
 * the agreement ("its budget cap is reached").
 */
export async function orderLots(
  agreementId: string,
  clientOrganisationId: string,
  userId: string,
  lotCodes: string[],
  po: PurchaseOrder | null = null,
  now = new Date(),
): Promise<Result<{ orderId: string; orderNumber: string }>> {
  if (lotCodes.length === 0) return refuse("Enter the lot code of the lot you send.");
  return db.transaction(async (tx) => {
    const a = await lockedAgreement(tx, agreementId, "client", clientOrganisationId);
    if (!a) return refuse("No such agreement in your organisation.");
    const spent = (await usageOf([a.id], tx)).get(a.id)!.spentNetMinor;
    const refusal = lotRefusal(a, spent, lotCodes.length, now, (m) => formatMoney(m, a.currency));
    if (refusal) return refuse(refusal);
    const [client] = await tx
      .select({ requiresPurchaseOrder: schema.organisations.requiresPurchaseOrder })
      .from(schema.organisations)
      .where(eq(schema.organisations.id, clientOrganisationId));
    if (client?.requiresPurchaseOrder && !po?.number)
      return refuse(PO_REQUIRED.replace("accept this quote. Nothing was accepted.", "order this lot. Nothing was ordered."));
    const [material] = await tx.select().from(schema.materials).where(eq(schema.materials.id, a.materialId));
    const repeated = await tx
      .select({ code: schema.samples.lotCode })
      .from(schema.samples)
      .innerJoin(schema.orders, eq(schema.orders.requestId, schema.samples.requestId))
      .where(and(eq(schema.orders.agreementId, a.id), inArray(schema.samples.lotCode, lotCodes), notInArray(schema.orders.state, [...REFUNDED_ORDER_STATES])));
    if (repeated.length) return refuse(`Lot ${repeated[0].code} has already been ordered under this agreement. Nothing was ordered.`);

    const n = lotCodes.length;
    const { request } = await requestForLotsTx(tx, material, lotCodes, userId, { currency: a.currency, at: now });
    const lineItems = a.lineItems.map((i) => ({ ...i, quantity: i.quantity * n, totalMinor: i.totalMinor * n }));
    const netMinor = a.pricePerLotMinor * n;
    // The order's terms (line items, instrument, turnaround) are the agreement's, kept in a terms row of the quotes
    // table because every order refers to one; it is never sent or offered (docs/design.md#standing-agreements).
    const [terms] = await tx
      .insert(schema.quotes)
      .values({
        requestId: request.id,
        labId: a.labId,
        instrumentId: a.instrumentId,
        state: "accepted",
        lineItems,
        totalMinor: netMinor,
        currency: a.currency,
        validUntil: new Date(now.getTime() + LOT_PAYMENT_DAYS * DAY_MS),
        turnaroundDays: a.turnaroundDays,
        notes: `Terms of standing agreement ${a.number}; no quote round.`,
        requestRevision: request.revision,
        createdBy: a.agreedBy,
        sentAt: now,
        decidedAt: now,
      })
      .returning({ id: schema.quotes.id });
    const order = await createOrderTx(tx, {
      requestId: request.id,
      quoteId: terms.id,
      clientOrganisationId,
      labId: a.labId,
      netMinor,
      currency: a.currency,
      po,
      actorUserId: userId,
      note: `Lot ${lotCodes.join(", ")} ordered under ${a.number}`,
      agreementId: a.id,
      at: now,
    });
    await audit(
      {
        actorUserId: userId,
        organisationId: clientOrganisationId,
        action: "agreement_lot_ordered",
        subjectType: "standing_agreement",
        subjectId: a.id,
        details: {
          number: a.number,
          orderId: order.id,
          orderNumber: order.number,
          lotCodes,
          netMinor,
          ...(po?.number ? { purchaseOrderNumber: po.number } : {}),
        },
      },
      tx,
    );
    await notify(tx, {
      kind: "agreement_event",
      agreementId: a.id,
      event: "lot_ordered",
      note: `${order.number}: lot ${lotCodes.join(", ")}`,
      orderId: order.id,
    });
    if (capReached(a, spent + netMinor)) await endAgreementTx(tx, a, "Its budget cap is reached", now, userId);
    return { ok: true, orderId: order.id, orderNumber: order.number } as const;
  });
}

export type { AgreementState };
