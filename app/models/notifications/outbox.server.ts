// The transactional outbox: a milestone's e-mails and in-app notifications, written inside the state change's transaction.
import { and, asc, eq, inArray, isNull, sql } from "drizzle-orm";
import { schema } from "~/db/client.server";
import type { Order } from "~/db/schema";
import type { VettingState } from "~/domain/vetting";
import type { OrderState } from "~/domain/order-states";
import type { Tx } from "~/db/client.server";
import {
  agreementLetter,
  type AgreementEvent,
  calibrationLapsedLetter,
  invitationLetter,
  labApplicationLetter,
  passwordResetLetter,
  labDecisionLetter,
  lotRuleBrokenLetter,
  messageLetter,
  orderLetter,
  quoteDecisionLetter,
  quoteReceivedLetter,
  requestOpenLetter,
  requestClosedLetter,
  requestRevisedLetter,
  type Audience,
  type OrderContext,
} from "~/models/notifications/compose.server";
import { renderLetter, type Letter } from "~/models/notifications/letters.server";
import { isEssential, type MilestoneKind } from "~/domain/milestones";

/** The channel the mail worker listens on; NOTIFY is delivered only when the writing transaction commits. */
export const OUTBOX_CHANNEL = "diffractory_outbox";

/** Something that happened and notifies people. */
export type Milestone =
  | { kind: "order_moved"; order: Order; from: OrderState; note: string }
  | { kind: "review_window_ending"; order: Order }
  /** A bank transfer not (fully) arrived a few days before its pay-by date; the note holds the bank details. */
  | { kind: "transfer_reminder"; order: Order; note: string }
  /** The lab's statement in a dispute: the client and the admins hear it (the note is the statement). */
  | { kind: "dispute_answered"; order: Order; note: string }
  /** A file one side added to a dispute: the other side and the admins hear of it (the note names the file). */
  | { kind: "dispute_evidence_added"; order: Order; side: "client" | "lab"; note: string }
  | { kind: "request_open"; requestId: string; labIds: string[] }
  | { kind: "quote_received"; quoteId: string }
  /** A message in a request's or an order's thread: the other side hears of it. */
  | { kind: "message_posted"; messageId: string }
  | { kind: "request_revised"; requestId: string; summary: string; labIds: string[] }
  | { kind: "request_closed"; requestId: string; how: "withdrawn" | "expired"; labIds: string[] }
  | { kind: "quote_decided"; acceptedQuoteId: string; orderId: string }
  /** A standing agreement's move (docs/design.md#standing-agreements): both sides hear of it; a lot ordered, the lab. */
  | { kind: "agreement_event"; agreementId: string; event: AgreementEvent; note: string; orderId?: string }
  | { kind: "lab_application_received"; labId: string }
  | { kind: "lab_decided"; labId: string; to: VettingState; note: string }
  /** An instrument's calibration became overdue or out of control (docs/design.md#calibration-on-record): the admins and the lab hear of it. */
  | { kind: "calibration_lapsed"; instrumentId: string; state: "overdue" | "out_of_control"; note: string }
  /** The token travels only in the e-mail's link; the table keeps its hash. */
  | { kind: "organisation_invitation"; invitationId: string; token: string }
  /** Likewise: the reset link's token is only in the e-mail. */
  | { kind: "password_reset"; tokenId: string; token: string }
  /** A newly recorded lot of a material breaks a control rule: the material's QC people hear of it (docs/design.md#lots-and-trends). */
  | { kind: "lot_rule_broken"; materialId: string; lotCode: string; broken: { parameter: string; rules: string[] }[]; path: string };

/** Which milestone each order state reports, and to whom (the order's two organisations, and admins). */
export const ORDER_MILESTONES: Partial<Record<OrderState, { kind: MilestoneKind; to: Audience[] }>> = {
  funds_held: { kind: "funds_held", to: ["client", "lab"] },
  samples_in_transit: { kind: "samples_shipped", to: ["lab"] },
  samples_received: { kind: "samples_received", to: ["client"] },
  refused_on_arrival: { kind: "refused_on_arrival", to: ["client"] },
  measuring: { kind: "measuring_started", to: ["client"] },
  data_delivered: { kind: "data_delivered", to: ["client"] },
  accepted: { kind: "delivery_accepted", to: ["client", "lab"] },
  paid_out: { kind: "payout_sent", to: ["lab"] },
  cancelled: { kind: "order_cancelled", to: ["client", "lab"] },
  disputed: { kind: "dispute_opened", to: ["client", "lab", "admin"] },
  resolved: { kind: "dispute_resolved", to: ["client", "lab"] },
};

interface Person {
  /** Null for an address without an account yet (an invitation): e-mail only, no in-app notification. */
  userId: string | null;
  email: string;
  name: string;
}

interface Outgoing {
  kind: MilestoneKind;
  person: Person;
  letter: Letter;
  orderId: string | null;
  /** The organisation the notice is written to (its bell); null for admins and invitations. */
  organisationId: string | null;
}

/** The roles that hear of every milestone of their organisation. */
const DECIDING_ROLES = ["owner", "manager"] as const;

/**
 * Who of one organisation hears of a milestone: the person who acts for it on the matter (the request's
 * author, the quote's author) if still a member, and its owners and managers. An organisation with neither
 * (no owner or manager on record) falls back to every member, so no milestone goes unheard.
 */
async function recipientsOf(tx: Tx, organisationId: string, actingUserIds: (string | null)[] = []): Promise<Person[]> {
  const acting = actingUserIds.filter((id): id is string => !!id);
  const members = await tx
    .select({ userId: schema.users.id, email: schema.users.email, name: schema.users.name, role: schema.memberships.role })
    .from(schema.memberships)
    .innerJoin(schema.users, eq(schema.users.id, schema.memberships.userId))
    .where(eq(schema.memberships.organisationId, organisationId))
    .orderBy(asc(schema.users.email));
  const chosen = members.filter((m) => (DECIDING_ROLES as readonly string[]).includes(m.role) || acting.includes(m.userId));
  return (chosen.length ? chosen : members).map(({ userId, email, name }) => ({ userId, email, name }));
}

async function requestAuthor(tx: Tx, requestId: string): Promise<string | null> {
  const [row] = await tx.select({ by: schema.requests.createdBy }).from(schema.requests).where(eq(schema.requests.id, requestId));
  return row?.by ?? null;
}

async function quoteAuthor(tx: Tx, quoteId: string): Promise<string | null> {
  const [row] = await tx.select({ by: schema.quotes.createdBy }).from(schema.quotes).where(eq(schema.quotes.id, quoteId));
  return row?.by ?? null;
}

async function admins(tx: Tx): Promise<Person[]> {
  return tx
    .select({ userId: schema.users.id, email: schema.users.email, name: schema.users.name })
    .from(schema.users)
    .where(eq(schema.users.isAdmin, true))
    .orderBy(asc(schema.users.email));
}

async function orgName(tx: Tx, id: string) {
  const [row] = await tx
    .select({ name: schema.organisations.name, city: schema.organisations.city, country: schema.organisations.country })
    .from(schema.organisations)
    .where(eq(schema.organisations.id, id));
  return row ?? { name: "—", city: null, country: null };
}

async function orderContext(tx: Tx, order: Order, note: string, withVerdicts: boolean): Promise<OrderContext> {
  const [request] = await tx.select({ title: schema.requests.title }).from(schema.requests).where(eq(schema.requests.id, order.requestId));
  const context: OrderContext = {
    order,
    requestTitle: request?.title ?? "—",
    clientName: (await orgName(tx, order.clientOrganisationId)).name,
    labName: (await orgName(tx, order.labId)).name,
    note,
  };
  if (withVerdicts) {
    context.verdicts = await tx
      .select({
        sample: sql<string>`coalesce(${schema.samples.label}, '—')`,
        file: schema.orderFiles.name,
        verdict: sql<string>`coalesce(${schema.scanChecks.verdict}, ${schema.scanChecks.status}::text)`,
      })
      .from(schema.orderFiles)
      .innerJoin(schema.scanChecks, eq(schema.scanChecks.fileId, schema.orderFiles.id))
      .leftJoin(schema.samples, eq(schema.samples.id, schema.orderFiles.sampleId))
      .where(and(eq(schema.orderFiles.orderId, order.id), eq(schema.orderFiles.state, "stored"), isNull(schema.orderFiles.deletedAt)))
      .orderBy(asc(schema.samples.position), asc(schema.orderFiles.name), asc(schema.orderFiles.version));
  }
  return context;
}

async function orderOutgoing(tx: Tx, order: Order, kind: MilestoneKind, audiences: Audience[], note: string): Promise<Outgoing[]> {
  const context = await orderContext(tx, order, note, kind === "data_delivered");
  const out: Outgoing[] = [];
  for (const side of audiences) {
    const organisationId = side === "admin" ? null : side === "client" ? order.clientOrganisationId : order.labId;
    const people =
      side === "admin"
        ? await admins(tx)
        : side === "client"
          ? await recipientsOf(tx, order.clientOrganisationId, [await requestAuthor(tx, order.requestId)])
          : await recipientsOf(tx, order.labId, [await quoteAuthor(tx, order.quoteId)]);
    const letter = orderLetter(kind, context, side);
    for (const person of people) out.push({ kind, person, letter, orderId: order.id, organisationId });
  }
  return out;
}

/**
 * A new message goes to the other side of its thread: that organisation's owners and managers, plus whoever of
 * it acts on the matter (the request's author or the quote's author, and anyone of it who wrote in the thread).
 * The author never hears of their own message.
 */
async function messageOutgoing(tx: Tx, messageId: string): Promise<Outgoing[]> {
  const [msg] = await tx.select().from(schema.messages).where(eq(schema.messages.id, messageId));
  const [r] = msg ? await tx.select().from(schema.requests).where(eq(schema.requests.id, msg.requestId)) : [];
  if (!msg || !r) return [];
  const [order] = msg.orderId ? await tx.select().from(schema.orders).where(eq(schema.orders.id, msg.orderId)) : [];
  const fromLab = msg.authorOrganisationId === msg.labId;
  const toOrganisationId = fromLab ? r.organisationId : msg.labId;
  const sameThread = order
    ? eq(schema.messages.orderId, order.id)
    : and(eq(schema.messages.requestId, r.id), eq(schema.messages.labId, msg.labId), isNull(schema.messages.orderId));
  const writers = await tx
    .selectDistinct({ userId: schema.messages.authorUserId })
    .from(schema.messages)
    .where(and(sameThread, eq(schema.messages.authorOrganisationId, toOrganisationId)));
  const acting = [...writers.map((w) => w.userId), fromLab ? r.createdBy : order ? await quoteAuthor(tx, order.quoteId) : null];
  const [author] = msg.authorUserId ? await tx.select({ name: schema.users.name }).from(schema.users).where(eq(schema.users.id, msg.authorUserId)) : [];
  const lab = await tx.select({ slug: schema.organisations.slug }).from(schema.organisations).where(eq(schema.organisations.id, msg.labId));
  const path = order
    ? `/${fromLab ? "client" : "lab"}/orders/${order.id}#messages`
    : fromLab
      ? `/client/requests/${r.id}?lab=${encodeURIComponent(lab[0]?.slug ?? msg.labId)}#messages`
      : `/lab/requests/${r.id}#messages`;
  const letter = messageLetter({
    fromName: (await orgName(tx, msg.authorOrganisationId ?? (fromLab ? msg.labId : r.organisationId))).name,
    authorName: author?.name ?? "Someone",
    requestTitle: r.title,
    orderNumber: order?.number ?? null,
    body: msg.body,
    attachmentName: msg.attachmentName,
    path,
  });
  return (await recipientsOf(tx, toOrganisationId, acting))
    .filter((p) => p.userId !== msg.authorUserId)
    .map((person) => ({ kind: "message_posted" as const, person, letter, orderId: order?.id ?? null, organisationId: toOrganisationId }));
}

async function outgoingFor(tx: Tx, m: Milestone): Promise<Outgoing[]> {
  switch (m.kind) {
    case "order_moved": {
      const rule = ORDER_MILESTONES[m.order.state];
      return rule ? orderOutgoing(tx, m.order, rule.kind, rule.to, m.note) : [];
    }
    case "review_window_ending":
      return orderOutgoing(tx, m.order, "review_window_ending", ["client"], "");
    case "transfer_reminder":
      return orderOutgoing(tx, m.order, "transfer_reminder", ["client"], m.note);
    case "dispute_answered":
      return orderOutgoing(tx, m.order, "dispute_answered", ["client", "admin"], m.note);
    case "dispute_evidence_added":
      return orderOutgoing(tx, m.order, "dispute_evidence_added", [m.side === "client" ? "lab" : "client", "admin"], m.note);
    case "request_open": {
      const [r] = await tx.select().from(schema.requests).where(eq(schema.requests.id, m.requestId));
      if (!r) return [];
      const letter = requestOpenLetter({
        id: r.id,
        title: r.title,
        clientName: (await orgName(tx, r.organisationId)).name,
        technique: r.technique,
        deadline: r.deadline ? String(r.deadline) : null,
      });
      const out: Outgoing[] = [];
      for (const labId of m.labIds)
        for (const person of await recipientsOf(tx, labId)) out.push({ kind: "request_open", person, letter, orderId: null, organisationId: labId });
      return out;
    }
    case "request_revised":
    case "request_closed": {
      const [r] = await tx.select().from(schema.requests).where(eq(schema.requests.id, m.requestId));
      if (!r) return [];
      const facts = { id: r.id, title: r.title, clientName: (await orgName(tx, r.organisationId)).name };
      const out: Outgoing[] = [];
      const kind =
        m.kind === "request_revised" ? ("request_revised" as const) : m.how === "withdrawn" ? ("request_withdrawn" as const) : ("request_expired" as const);
      for (const labId of m.labIds) {
        const letter = m.kind === "request_revised" ? requestRevisedLetter({ ...facts, summary: m.summary }) : requestClosedLetter(m.how, facts, "lab");
        for (const person of await recipientsOf(tx, labId)) out.push({ kind, person, letter, orderId: null, organisationId: labId });
      }
      if (m.kind === "request_closed" && m.how === "expired") {
        const letter = requestClosedLetter("expired", facts, "client");
        for (const person of await recipientsOf(tx, r.organisationId, [r.createdBy]))
          out.push({ kind, person, letter, orderId: null, organisationId: r.organisationId });
      }
      return out;
    }
    case "quote_received": {
      const [q] = await tx.select().from(schema.quotes).where(eq(schema.quotes.id, m.quoteId));
      const [r] = q ? await tx.select().from(schema.requests).where(eq(schema.requests.id, q.requestId)) : [];
      if (!q || !r) return [];
      const letter = quoteReceivedLetter({
        requestId: r.id,
        requestTitle: r.title,
        labName: (await orgName(tx, q.labId)).name,
        totalMinor: q.totalMinor,
        currency: q.currency,
        turnaroundDays: q.turnaroundDays,
        validUntil: q.validUntil,
      });
      return (await recipientsOf(tx, r.organisationId, [r.createdBy])).map((person) => ({
        kind: "quote_received" as const,
        person,
        letter,
        orderId: null,
        organisationId: r.organisationId,
      }));
    }
    case "message_posted":
      return messageOutgoing(tx, m.messageId);
    case "quote_decided": {
      const [accepted] = await tx.select().from(schema.quotes).where(eq(schema.quotes.id, m.acceptedQuoteId));
      const [r] = accepted ? await tx.select().from(schema.requests).where(eq(schema.requests.id, accepted.requestId)) : [];
      if (!accepted || !r) return [];
      const clientName = (await orgName(tx, r.organisationId)).name;
      const [order] = await tx
        .select({ number: schema.orders.number, purchaseOrderNumber: schema.orders.purchaseOrderNumber })
        .from(schema.orders)
        .where(eq(schema.orders.id, m.orderId));
      const declined = await tx
        .select()
        .from(schema.quotes)
        .where(and(eq(schema.quotes.requestId, r.id), eq(schema.quotes.state, "declined"), sql`${schema.quotes.decidedAt} = ${accepted.decidedAt}`));
      const out: Outgoing[] = [];
      for (const q of [accepted, ...declined]) {
        const isAccepted = q.id === accepted.id;
        const letter = quoteDecisionLetter(isAccepted, {
          orderId: m.orderId,
          orderNumber: order?.number ?? "",
          purchaseOrderNumber: order?.purchaseOrderNumber ?? null,
          requestTitle: r.title,
          clientName,
          totalMinor: q.totalMinor,
          currency: q.currency,
        });
        for (const person of await recipientsOf(tx, q.labId, [q.createdBy]))
          out.push({
            kind: isAccepted ? "quote_accepted" : "quote_declined",
            person,
            letter,
            orderId: isAccepted ? m.orderId : null,
            organisationId: q.labId,
          });
      }
      return out;
    }
    case "agreement_event": {
      const [a] = await tx.select().from(schema.standingAgreements).where(eq(schema.standingAgreements.id, m.agreementId));
      if (!a) return [];
      const [material] = await tx
        .select({ name: schema.materials.name, code: schema.materials.productCode })
        .from(schema.materials)
        .where(eq(schema.materials.id, a.materialId));
      const facts = {
        id: a.id,
        number: a.number,
        material: material ? `${material.name} (${material.code})` : "—",
        clientName: (await orgName(tx, a.clientOrganisationId)).name,
        labName: (await orgName(tx, a.labId)).name,
        pricePerLotMinor: a.pricePerLotMinor,
        budgetCapMinor: a.budgetCapMinor,
        currency: a.currency,
        startsOn: String(a.startsOn),
        endsOn: String(a.endsOn),
        endingAt: a.endingAt,
        note: m.note,
      };
      const sides: Audience[] = m.event === "lot_ordered" ? ["lab"] : ["client", "lab"];
      const out: Outgoing[] = [];
      for (const side of sides) {
        const organisationId = side === "client" ? a.clientOrganisationId : a.labId;
        const letter = agreementLetter(m.event, facts, side === "client" ? "client" : "lab");
        for (const person of await recipientsOf(tx, organisationId, [side === "client" ? a.createdBy : a.agreedBy]))
          out.push({ kind: "agreement_changed", person, letter, orderId: m.orderId ?? null, organisationId });
      }
      return out;
    }
    case "lab_application_received": {
      const lab = await orgName(tx, m.labId);
      const letter = labApplicationLetter({ labId: m.labId, labName: lab.name, city: lab.city, country: lab.country });
      return (await admins(tx)).map((person) => ({ kind: "lab_application_received" as const, person, letter, orderId: null, organisationId: null }));
    }
    case "lab_decided": {
      if (m.to !== "approved" && m.to !== "rejected") return [];
      const letter = labDecisionLetter(m.to === "approved", { labName: (await orgName(tx, m.labId)).name, note: m.note });
      const kind = m.to === "approved" ? ("lab_approved" as const) : ("lab_rejected" as const);
      return (await recipientsOf(tx, m.labId)).map((person) => ({ kind, person, letter, orderId: null, organisationId: m.labId }));
    }
    case "calibration_lapsed": {
      const [instrument] = await tx.select().from(schema.instruments).where(eq(schema.instruments.id, m.instrumentId));
      if (!instrument) return [];
      const labName = (await orgName(tx, instrument.labId)).name;
      const out: Outgoing[] = [];
      for (const side of ["lab", "admin"] as const) {
        const letter = calibrationLapsedLetter(side, {
          labId: instrument.labId,
          labName,
          instrumentId: instrument.id,
          instrumentName: instrument.name,
          state: m.state,
          note: m.note,
        });
        const people = side === "admin" ? await admins(tx) : await recipientsOf(tx, instrument.labId);
        for (const person of people)
          out.push({ kind: "calibration_lapsed", person, letter, orderId: null, organisationId: side === "admin" ? null : instrument.labId });
      }
      return out;
    }
    case "organisation_invitation": {
      const [inv] = await tx.select().from(schema.organisationInvitations).where(eq(schema.organisationInvitations.id, m.invitationId));
      if (!inv) return [];
      const [inviter] = inv.invitedBy ? await tx.select({ name: schema.users.name }).from(schema.users).where(eq(schema.users.id, inv.invitedBy)) : [];
      const [account] = await tx
        .select({ id: schema.users.id, name: schema.users.name })
        .from(schema.users)
        .where(sql`lower(${schema.users.email}) = lower(${inv.email})`);
      const letter = invitationLetter({
        token: m.token,
        organisationName: (await orgName(tx, inv.organisationId)).name,
        role: inv.role,
        inviterName: inviter?.name ?? null,
        expiresAt: inv.expiresAt,
      });
      const person: Person = { userId: account?.id ?? null, email: inv.email, name: account?.name ?? "there" };
      return [{ kind: "organisation_invitation" as const, person, letter, orderId: null, organisationId: null }];
    }
    case "lot_rule_broken": {
      const [material] = await tx.select().from(schema.materials).where(eq(schema.materials.id, m.materialId));
      if (!material) return [];
      const letter = lotRuleBrokenLetter({ productCode: material.productCode, name: material.name, lotCode: m.lotCode, broken: m.broken, path: m.path });
      // The material's QC people who are still members; none named (or none left): its owners and managers.
      const members = await recipientsOf(tx, material.organisationId, material.qcUserIds);
      const qc = members.filter((p) => p.userId && material.qcUserIds.includes(p.userId));
      const people = qc.length ? qc : await recipientsOf(tx, material.organisationId);
      return people.map((person) => ({ kind: "lot_rule_broken" as const, person, letter, orderId: null, organisationId: material.organisationId }));
    }
    case "password_reset": {
      const [row] = await tx.select().from(schema.passwordResetTokens).where(eq(schema.passwordResetTokens.id, m.tokenId));
      const [user] = row
        ? await tx.select({ email: schema.users.email, name: schema.users.name }).from(schema.users).where(eq(schema.users.id, row.userId))
        : [];
      if (!row || !user) return [];
      // E-mail only: an in-app notification would keep the working link in the notification list.
      const person: Person = { userId: null, email: user.email, name: user.name };
      return [
        {
          kind: "password_reset" as const,
          person,
          letter: passwordResetLetter({ token: m.token, expiresAt: row.expiresAt }),
          orderId: null,
          organisationId: null,
        },
      ];
    }
  }
}

/**
 * Writes a milestone's messages — one outbox row per recipient, and an in-app notification each — in the
 * caller's transaction, so a rolled-back change leaves nothing behind and a committed one is sent by the
 * mail worker even if this process stops right after the commit. Returns how many e-mails were queued.
 */
export async function notify(tx: Tx, milestone: Milestone): Promise<number> {
  const all = await outgoingFor(tx, milestone);
  // One message per person and kind, even when someone belongs to both sides or is also an admin (the first
  // side's organisation keeps the notice).
  const seen = new Set<string>();
  const outgoing = all.filter((o) => {
    const key = `${o.kind}:${o.person.userId ?? o.person.email.toLowerCase()}`;
    if (seen.has(key)) return false;
    seen.add(key);
    return true;
  });
  if (outgoing.length === 0) return 0;

  const optional = outgoing.filter((o) => !isEssential(o.kind) && o.person.userId);
  const optedOut = new Set<string>();
  if (optional.length) {
    const rows = await tx
      .select({ userId: schema.notificationPreferences.userId, kind: schema.notificationPreferences.kind })
      .from(schema.notificationPreferences)
      .where(
        and(
          inArray(
            schema.notificationPreferences.userId,
            optional.map((o) => o.person.userId!),
          ),
          eq(schema.notificationPreferences.emailEnabled, false),
        ),
      );
    for (const r of rows) optedOut.add(`${r.kind}:${r.userId}`);
  }
  // Optional messages of people who chose the daily digest wait for it (app/models/notifications/digest.server.ts).
  const digestReaders = new Set<string>();
  if (optional.length) {
    const rows = await tx
      .select({ id: schema.users.id })
      .from(schema.users)
      .where(
        and(
          inArray(
            schema.users.id,
            optional.map((o) => o.person.userId!),
          ),
          eq(schema.users.dailyDigest, true),
        ),
      );
    for (const r of rows) digestReaders.add(r.id);
  }

  const inApp = outgoing.flatMap((o) =>
    o.person.userId
      ? [{ userId: o.person.userId, kind: o.kind, orderId: o.orderId, organisationId: o.organisationId, title: o.letter.subject, href: o.letter.link.path }]
      : [],
  );
  if (inApp.length) await tx.insert(schema.notifications).values(inApp);
  const mails = outgoing.filter((o) => !optedOut.has(`${o.kind}:${o.person.userId}`));
  if (mails.length === 0) return 0;
  await tx.insert(schema.outboxMessages).values(
    mails.map((o) => {
      const rendered = renderLetter(o.letter, o.person.name);
      return {
        kind: o.kind,
        to: o.person.email,
        subject: rendered.subject,
        html: rendered.html,
        text: rendered.text,
        orderId: o.orderId,
        userId: o.person.userId,
        essential: isEssential(o.kind),
        digest: !isEssential(o.kind) && !!o.person.userId && digestReaders.has(o.person.userId),
      };
    }),
  );
  await tx.execute(sql`select pg_notify(${OUTBOX_CHANNEL}, '')`);
  return mails.length;
}
