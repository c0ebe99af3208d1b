// Messages between a client and a lab: one thread per request and lab before an order exists, one per order
// after. Who may read and write which thread, posting (with one optional attachment), unread counts and reads.
// The rules are described in docs/design.md#messages.
import { and, asc, count, eq, gt, inArray, isNotNull, isNull, ne, or, sql } from "drizzle-orm";
import { db, schema } from "~/db/client.server";
import type { MarketRequest, Order } from "~/db/schema";
import { isUuid } from "~/domain/ids";
import { isKeyUnder } from "~/domain/storage-keys";
import { DOCUMENT_RULE, presignDownload, verifyStoredObject } from "~/models/files/storage.server";
import { notify } from "~/models/notifications/outbox.server";
import { ownRequestOf, requestVisibleToLab } from "~/models/requests/requests.server";
import { orderForOrganisation } from "~/models/orders/queries.server";

/** The longest message accepted, in characters. */
export const MESSAGE_MAX_LENGTH = 4000;

/** A message may carry one document or picture: a PDF, PNG or JPEG within the document size limit. */
export const ATTACHMENT_RULE = DOCUMENT_RULE;

export type Side = "client" | "lab";

/** One conversation: a request's thread between its client and one lab, or an order's thread. */
export interface Thread {
  kind: "request" | "order";
  requestId: string;
  labId: string;
  clientOrganisationId: string;
  /** Null for a request thread. */
  orderId: string | null;
  /** Whether new messages may be posted; a request thread closes once the request has an order. */
  open: boolean;
  /** Why the thread takes no new messages, in a sentence; null when it does. */
  closedBecause: string | null;
}

/** The key under which a person's reading of a thread is kept (message_reads.thread_key). */
export function threadKey(t: Pick<Thread, "kind" | "requestId" | "labId" | "orderId">) {
  return t.kind === "order" ? `order:${t.orderId}` : `request:${t.requestId}:${t.labId}`;
}

/** Storage keys of a thread's attachments start here, so a form cannot point at another thread's file. */
export function attachmentPrefix(t: Pick<Thread, "kind" | "requestId" | "labId" | "orderId">) {
  return t.kind === "order" ? `messages/orders/${t.orderId}` : `messages/requests/${t.requestId}/${t.labId}`;
}

async function hasOrder(requestId: string) {
  const [row] = await db.select({ id: schema.orders.id }).from(schema.orders).where(eq(schema.orders.requestId, requestId)).limit(1);
  return !!row;
}

async function requestThread(request: MarketRequest, labId: string): Promise<Thread> {
  const ordered = await hasOrder(request.id);
  const closedBecause = ordered
    ? "The request has an order now: write on the order's page instead."
    : request.state !== "open"
      ? "The request is no longer open, so its questions are closed."
      : null;
  return {
    kind: "request",
    requestId: request.id,
    labId,
    clientOrganisationId: request.organisationId,
    orderId: null,
    open: closedBecause === null,
    closedBecause,
  };
}

/** An order's thread (the caller has checked that the person is party to the order). */
export function orderThread(order: Order): Thread {
  return {
    kind: "order",
    requestId: order.requestId,
    labId: order.labId,
    clientOrganisationId: order.clientOrganisationId,
    orderId: order.id,
    open: true,
    closedBecause: null,
  };
}

/** A lab's own thread on a request it may see (open to it, invited, or quoted on); null for any other request. */
export async function requestThreadForLab(requestId: string | undefined, labId: string): Promise<Thread | null> {
  const request = await requestVisibleToLab(requestId, labId);
  return request ? requestThread(request, labId) : null;
}

/** A lab organisation named by its slug or its id; null when there is none. */
export async function labByRef(ref: string | null | undefined) {
  const value = (ref ?? "").trim();
  if (!value) return null;
  const [row] = await db
    .select({ id: schema.organisations.id, name: schema.organisations.name, slug: schema.organisations.slug })
    .from(schema.organisations)
    .where(
      and(
        eq(schema.organisations.kind, "lab"),
        isUuid(value) ? or(eq(schema.organisations.id, value), eq(schema.organisations.slug, value)) : eq(schema.organisations.slug, value),
      ),
    );
  return row ?? null;
}

/**
 * The client's thread with one lab on its own request: the lab must be one that may see the request. Null for
 * another organisation's request, or a lab that cannot see it (the same answer as for a missing one).
 */
export async function requestThreadForClient(requestId: string | undefined, organisationId: string, labRef: string | null | undefined) {
  const request = await ownRequestOf(requestId, organisationId);
  if (!request || request.state === "draft") return null;
  const lab = await labByRef(labRef);
  if (!lab || !(await requestVisibleToLab(request.id, lab.id))) return null;
  return { thread: await requestThread(request, lab.id), lab };
}

/** The order's thread for either of its two organisations; null for anyone else. */
export async function orderThreadFor(orderId: string | undefined, organisationId: string): Promise<{ thread: Thread; side: Side } | null> {
  if (!isUuid(orderId)) return null;
  const found = await orderForOrganisation(orderId, organisationId);
  return found ? { thread: orderThread(found.order), side: found.side } : null;
}

function threadWhere(t: Thread) {
  return t.kind === "order"
    ? eq(schema.messages.orderId, t.orderId!)
    : and(eq(schema.messages.requestId, t.requestId), eq(schema.messages.labId, t.labId), isNull(schema.messages.orderId));
}

/** The side a message was written from: the lab's organisation is the lab, anyone else on the thread the client. */
const sideOf = (authorOrganisationId: string | null, labId: string): Side => (authorOrganisationId === labId ? "lab" : "client");

export interface ThreadMessage {
  id: string;
  body: string;
  at: Date;
  authorName: string;
  authorOrganisationName: string;
  side: Side;
  attachment: { name: string; sizeBytes: number; url: string } | null;
}

async function messagesWhere(where: ReturnType<typeof threadWhere>, labId: string): Promise<ThreadMessage[]> {
  const rows = await db
    .select({
      id: schema.messages.id,
      body: schema.messages.body,
      at: schema.messages.createdAt,
      authorName: schema.users.name,
      authorOrganisationId: schema.messages.authorOrganisationId,
      authorOrganisationName: schema.organisations.name,
      attachmentName: schema.messages.attachmentName,
      attachmentKey: schema.messages.attachmentKey,
      attachmentSizeBytes: schema.messages.attachmentSizeBytes,
    })
    .from(schema.messages)
    .leftJoin(schema.users, eq(schema.users.id, schema.messages.authorUserId))
    .leftJoin(schema.organisations, eq(schema.organisations.id, schema.messages.authorOrganisationId))
    .where(where)
    .orderBy(asc(schema.messages.createdAt), asc(schema.messages.id));
  return Promise.all(
    rows.map(async (r) => ({
      id: r.id,
      body: r.body,
      at: r.at,
      authorName: r.authorName ?? "A former member",
      authorOrganisationName: r.authorOrganisationName ?? "—",
      side: sideOf(r.authorOrganisationId, labId),
      attachment:
        r.attachmentKey && r.attachmentName
          ? { name: r.attachmentName, sizeBytes: r.attachmentSizeBytes ?? 0, url: await presignDownload(r.attachmentKey, r.attachmentName) }
          : null,
    })),
  );
}

/** A thread's messages, oldest first, each with its author, the author's organisation and side. */
export async function threadMessages(t: Thread): Promise<ThreadMessage[]> {
  return messagesWhere(threadWhere(t), t.labId);
}

/**
 * The order's thread for a reader outside it (the admin's dispute screen): the same messages, with author name,
 * organisation and side. The caller decides who may read it.
 */
export async function orderThreadMessages(orderId: string): Promise<ThreadMessage[]> {
  if (!isUuid(orderId)) return [];
  const [order] = await db.select({ labId: schema.orders.labId }).from(schema.orders).where(eq(schema.orders.id, orderId));
  return order ? messagesWhere(eq(schema.messages.orderId, orderId), order.labId) : [];
}

export interface MessageInput {
  body: unknown;
  attachment?: { storageKey: unknown; fileName: unknown; sha256?: unknown } | null;
}

export type Posted = { ok: true; id: string } | { ok: false; error: string };

/** Reads a message's text: required, within the length limit; a sentence when it is not. */
export function messageBodyProblem(body: unknown): string | null {
  if (typeof body !== "string" || body.trim() === "") return "Write a message before sending it.";
  if (body.trim().length > MESSAGE_MAX_LENGTH) return `A message may be at most ${MESSAGE_MAX_LENGTH} characters; this one has ${body.trim().length}.`;
  return null;
}

/**
 * Posts a message to a thread the author's organisation is party to (the caller has checked that), with one
 * optional attachment already uploaded under the thread's prefix; notifies the other side in the same transaction.
 */
export async function postMessage(t: Thread, author: { userId: string; organisationId: string }, input: MessageInput): Promise<Posted> {
  if (!t.open) return { ok: false, error: t.closedBecause ?? "This conversation takes no new messages." };
  const problem = messageBodyProblem(input.body);
  if (problem) return { ok: false, error: problem };
  const body = String(input.body).trim();
  let attachment: { attachmentKey: string; attachmentName: string; attachmentSizeBytes: number; attachmentContentType: string } | null = null;
  const a = input.attachment;
  if (a && (a.storageKey || a.fileName)) {
    const key = typeof a.storageKey === "string" ? a.storageKey : "";
    if (!key || !isKeyUnder(key, attachmentPrefix(t))) return { ok: false, error: "Attach the file through this conversation's upload." };
    const check = await verifyStoredObject(key, ATTACHMENT_RULE, typeof a.sha256 === "string" && a.sha256 ? a.sha256 : undefined);
    if (!check.ok) return { ok: false, error: check.error };
    const name = typeof a.fileName === "string" && a.fileName.trim() ? a.fileName.trim().slice(0, 200) : (key.split("/").pop() ?? "attachment");
    const lower = name.toLowerCase();
    const type = lower.endsWith(".pdf") ? "application/pdf" : lower.endsWith(".png") ? "image/png" : "image/jpeg";
    attachment = { attachmentKey: key, attachmentName: name, attachmentSizeBytes: check.size, attachmentContentType: type };
  }
  const id = await db.transaction(async (tx) => {
    const [row] = await tx
      .insert(schema.messages)
      .values({
        requestId: t.requestId,
        labId: t.labId,
        clientOrganisationId: t.clientOrganisationId,
        orderId: t.orderId,
        authorUserId: author.userId,
        authorOrganisationId: author.organisationId,
        body,
        ...(attachment ?? {}),
      })
      .returning({ id: schema.messages.id, at: schema.messages.createdAt });
    await tx
      .insert(schema.messageReads)
      .values({ userId: author.userId, threadKey: threadKey(t), lastReadAt: row.at })
      .onConflictDoUpdate({ target: [schema.messageReads.userId, schema.messageReads.threadKey], set: { lastReadAt: row.at } });
    await notify(tx, { kind: "message_posted", messageId: row.id });
    return row.id;
  });
  return { ok: true, id };
}

/** Marks a thread read for a person up to now (on viewing it). */
export async function markThreadRead(userId: string, t: Thread) {
  const now = new Date();
  await db
    .insert(schema.messageReads)
    .values({ userId, threadKey: threadKey(t), lastReadAt: now })
    .onConflictDoUpdate({ target: [schema.messageReads.userId, schema.messageReads.threadKey], set: { lastReadAt: now } });
}

/** The thread key of each message row, in SQL, matching threadKey(). */
const keySql = sql<string>`case when ${schema.messages.orderId} is not null then 'order:' || ${schema.messages.orderId}::text else 'request:' || ${schema.messages.requestId}::text || ':' || ${schema.messages.labId}::text end`;

export interface UnreadThread {
  key: string;
  kind: "request" | "order";
  requestId: string;
  labId: string;
  orderId: string | null;
  unread: number;
}

/**
 * Unread messages per thread for a person acting for one organisation: messages written by the other side
 * after the person last read the thread. Threads with nothing unread are left out.
 */
export async function unreadThreads(userId: string, organisationId: string): Promise<UnreadThread[]> {
  const rows = await db
    .select({
      key: keySql,
      requestId: schema.messages.requestId,
      labId: schema.messages.labId,
      orderId: schema.messages.orderId,
      unread: count(),
    })
    .from(schema.messages)
    .leftJoin(schema.messageReads, and(eq(schema.messageReads.userId, userId), eq(schema.messageReads.threadKey, keySql)))
    .where(unreadFor(organisationId))
    .groupBy(keySql, schema.messages.requestId, schema.messages.labId, schema.messages.orderId);
  return rows.map((r) => ({ ...r, kind: r.orderId ? "order" : "request", unread: Number(r.unread) }));
}

/** Messages the person has not read: written by the other side of a thread of the organisation, after the person last read it. */
const unreadFor = (organisationId: string) =>
  and(
    // Either side's messages are one index read (messages_lab_created_idx, messages_client_created_idx).
    or(eq(schema.messages.labId, organisationId), eq(schema.messages.clientOrganisationId, organisationId)),
    or(isNull(schema.messages.authorOrganisationId), ne(schema.messages.authorOrganisationId, organisationId)),
    or(isNull(schema.messageReads.lastReadAt), gt(schema.messages.createdAt, schema.messageReads.lastReadAt)),
  );

/**
 * Unread messages for a person in one organisation: in request threads, in order threads, and in all. Every
 * workspace page shows them, so they are counted in SQL (one row) rather than summed over the threads here.
 */
export async function unreadTotals(userId: string, organisationId: string) {
  const [row] = await db
    .select({
      requests: sql<number>`count(*) filter (where ${schema.messages.orderId} is null)::int`,
      orders: sql<number>`count(*) filter (where ${schema.messages.orderId} is not null)::int`,
    })
    .from(schema.messages)
    .leftJoin(schema.messageReads, and(eq(schema.messageReads.userId, userId), eq(schema.messageReads.threadKey, keySql)))
    .where(unreadFor(organisationId));
  const requests = Number(row?.requests ?? 0);
  const orders = Number(row?.orders ?? 0);
  return { requests, orders, total: requests + orders };
}

/**
 * The client's lab threads on a request: every lab that wrote or was written to, and every lab that quoted, with
 * the number of messages and the client person's unread count, newest conversation first.
 */
export async function requestThreadsOfClient(requestId: string, userId: string, organisationId: string) {
  const withMessages = await db
    .select({ labId: schema.messages.labId, messages: count(), last: sql<Date>`max(${schema.messages.createdAt})` })
    .from(schema.messages)
    .where(and(eq(schema.messages.requestId, requestId), isNull(schema.messages.orderId)))
    .groupBy(schema.messages.labId);
  const quoted = await db
    .selectDistinct({ labId: schema.quotes.labId })
    .from(schema.quotes)
    .where(and(eq(schema.quotes.requestId, requestId), isNotNull(schema.quotes.labId)));
  const labIds = [...new Set([...withMessages.map((m) => m.labId), ...quoted.map((q) => q.labId)])];
  if (labIds.length === 0) return [];
  const labs = await db
    .select({ id: schema.organisations.id, name: schema.organisations.name, slug: schema.organisations.slug })
    .from(schema.organisations)
    .where(inArray(schema.organisations.id, labIds));
  const unread = new Map((await unreadThreads(userId, organisationId)).filter((t) => t.requestId === requestId && !t.orderId).map((t) => [t.labId, t.unread]));
  return labs
    .map((l) => {
      const m = withMessages.find((w) => w.labId === l.id);
      return {
        labId: l.id,
        labName: l.name,
        slug: l.slug,
        messages: Number(m?.messages ?? 0),
        last: m?.last ? new Date(m.last) : null,
        unread: unread.get(l.id) ?? 0,
      };
    })
    .sort((a, b) => (b.last?.getTime() ?? 0) - (a.last?.getTime() ?? 0) || a.labName.localeCompare(b.labName));
}

/**
 * What a screen shows of a thread: its messages, how many were unread when it was opened, and whether it takes
 * new ones. Viewing marks it read for the person.
 */
export async function viewThread(userId: string, organisationId: string, t: Thread) {
  const key = threadKey(t);
  const unread = (await unreadThreads(userId, organisationId)).find((u) => u.key === key)?.unread ?? 0;
  const messages = await threadMessages(t);
  await markThreadRead(userId, t);
  return { messages, unread, open: t.open, closedBecause: t.closedBecause };
}
