// Reading the audit log: who did what, when and from where, a page at a time, filtered by kind and person, with
// sign-ins apart; every entry as a sentence with its subjects named (order numbers, titles, names), never ids.
import { and, asc, count, desc, eq, inArray, isNotNull, like, not, or, sql, type SQL } from "drizzle-orm";
import { db, schema } from "~/db/client.server";
import { AUDIT_KIND_ACTIONS, AUDIT_KIND_LABELS, AUDIT_KIND_PRECEDENCE, auditKindOf, auditSentence, type AuditKind } from "~/domain/audit-words";
import { isUuid } from "~/domain/ids";

export type AuditLogSort = "at" | "who" | "action";

export interface AuditLogFilter {
  /** One kind of action; `sign_ins` is the sign-in view. Without a kind, everything but sign-ins. */
  kind?: AuditKind | null;
  /** Entries of one person. */
  actorUserId?: string | null;
}

/** The actions a kind's names and prefixes match, before precedence. */
function matchesKind(kind: AuditKind): SQL {
  const { exact, prefixes } = AUDIT_KIND_ACTIONS[kind];
  const parts: SQL[] = [];
  if (exact.length) parts.push(inArray(schema.auditLog.action, exact));
  for (const p of prefixes) parts.push(like(schema.auditLog.action, `${p.replace(/_/g, "\\_")}%`));
  return or(...parts) ?? sql`false`;
}

/** The kind's actions as auditKindOf decides them: matched by the kind and by none tried before it. */
function kindCondition(kind: AuditKind): SQL {
  const earlier = AUDIT_KIND_PRECEDENCE.slice(0, AUDIT_KIND_PRECEDENCE.indexOf(kind));
  return and(matchesKind(kind), ...earlier.map((k) => not(matchesKind(k)))) ?? sql`false`;
}

function where(f: AuditLogFilter) {
  const conditions: SQL[] = [f.kind ? kindCondition(f.kind) : not(kindCondition("sign_ins"))];
  if (f.actorUserId) conditions.push(eq(schema.auditLog.actorUserId, f.actorUserId));
  return and(...conditions);
}

/** How many entries the filter matches. */
export async function auditLogCount(f: AuditLogFilter = {}) {
  const [{ total }] = await db.select({ total: count() }).from(schema.auditLog).where(where(f));
  return total;
}

/** The people who appear in the log, by name, for the person filter. */
export async function auditLogPeople() {
  const actors = db.selectDistinct({ id: schema.auditLog.actorUserId }).from(schema.auditLog).where(isNotNull(schema.auditLog.actorUserId));
  return db
    .select({ id: schema.users.id, name: schema.users.name, email: schema.users.email })
    .from(schema.users)
    .where(inArray(schema.users.id, actors))
    .orderBy(asc(schema.users.name), asc(schema.users.email));
}

const ids = (values: unknown[]) => [...new Set(values.filter((v): v is string => typeof v === "string" && isUuid(v)))];
const byId = <T extends { id: string }>(rows: T[]) => new Map(rows.map((r) => [r.id, r]));

/** The records the page's entries point to, each read once. */
async function namesFor(rows: { subjectType: string | null; subjectId: string | null; details: Record<string, unknown> }[]) {
  const subjectsOf = (type: string) => rows.filter((r) => r.subjectType === type).map((r) => r.subjectId);
  const quoteRows = await (async () => {
    const list = ids(subjectsOf("quote"));
    if (!list.length) return [];
    return db
      .select({ id: schema.quotes.id, requestId: schema.quotes.requestId, labId: schema.quotes.labId, currency: schema.quotes.currency })
      .from(schema.quotes)
      .where(inArray(schema.quotes.id, list));
  })();
  const fileRows = await (async () => {
    const list = ids(subjectsOf("order_file"));
    if (!list.length) return [];
    return db
      .select({ id: schema.orderFiles.id, name: schema.orderFiles.name, version: schema.orderFiles.version, orderId: schema.orderFiles.orderId })
      .from(schema.orderFiles)
      .where(inArray(schema.orderFiles.id, list));
  })();
  const linkRows = await (async () => {
    const list = ids(subjectsOf("share_link"));
    if (!list.length) return [];
    return db
      .select({ id: schema.shareLinks.id, label: schema.shareLinks.label, orderId: schema.shareLinks.orderId })
      .from(schema.shareLinks)
      .where(inArray(schema.shareLinks.id, list));
  })();
  const orderIds = ids([...subjectsOf("order"), ...rows.map((r) => r.details?.orderId), ...fileRows.map((f) => f.orderId), ...linkRows.map((l) => l.orderId)]);
  const orderRows = orderIds.length
    ? await db
        .select({
          id: schema.orders.id,
          number: schema.orders.number,
          currency: schema.orders.currency,
          requestId: schema.orders.requestId,
          labId: schema.orders.labId,
        })
        .from(schema.orders)
        .where(inArray(schema.orders.id, orderIds))
    : [];
  const requestIds = ids([
    ...subjectsOf("request"),
    ...rows.map((r) => r.details?.requestId),
    ...quoteRows.map((q) => q.requestId),
    ...orderRows.map((o) => o.requestId),
  ]);
  const requestRows = requestIds.length
    ? await db.select({ id: schema.requests.id, title: schema.requests.title }).from(schema.requests).where(inArray(schema.requests.id, requestIds))
    : [];
  const orgIds = ids([
    ...subjectsOf("lab"),
    ...subjectsOf("organisation"),
    ...quoteRows.map((q) => q.labId),
    ...orderRows.map((o) => o.labId),
    ...rows.map((r) => r.details?.labId),
  ]);
  const orgRows = orgIds.length
    ? await db
        .select({ id: schema.organisations.id, name: schema.organisations.name })
        .from(schema.organisations)
        .where(inArray(schema.organisations.id, orgIds))
    : [];
  const simple = async <T extends { id: string; name: string }>(type: string, read: (list: string[]) => Promise<T[]>) => {
    const list = ids(subjectsOf(type));
    return list.length ? read(list) : [];
  };
  const [userRows, instrumentRows, stageRows, tokenRows, invitationRows] = await Promise.all([
    simple("user", (l) => db.select({ id: schema.users.id, name: schema.users.name }).from(schema.users).where(inArray(schema.users.id, l))),
    simple("instrument", (l) =>
      db.select({ id: schema.instruments.id, name: schema.instruments.name }).from(schema.instruments).where(inArray(schema.instruments.id, l)),
    ),
    simple("sample_stage", (l) =>
      db.select({ id: schema.sampleStages.id, name: schema.sampleStages.name }).from(schema.sampleStages).where(inArray(schema.sampleStages.id, l)),
    ),
    simple("api_token", (l) =>
      db.select({ id: schema.apiTokens.id, name: schema.apiTokens.name }).from(schema.apiTokens).where(inArray(schema.apiTokens.id, l)),
    ),
    simple("organisation_invitation", (l) =>
      db
        .select({ id: schema.organisationInvitations.id, name: schema.organisationInvitations.email })
        .from(schema.organisationInvitations)
        .where(inArray(schema.organisationInvitations.id, l)),
    ),
  ]);
  return {
    quotes: byId(quoteRows),
    files: byId(fileRows),
    links: byId(linkRows),
    orders: byId(orderRows),
    requests: byId(requestRows),
    orgs: byId(orgRows),
    named: byId([...userRows, ...instrumentRows, ...stageRows, ...tokenRows, ...invitationRows]),
  };
}

/** The kind an action is filtered under, in words, or null for an action no kind names. */
function kindLabel(action: string) {
  const kind = auditKindOf(action);
  return kind ? AUDIT_KIND_LABELS[kind] : null;
}

/**
 * One page of entries as sentences: the person's name, the organisation's name, the subject named in words and
 * the remaining details with amounts as money. The e-mail stays beside the name for telling people apart.
 */
export async function auditLogEntries(page: { sort: AuditLogSort; dir: "asc" | "desc"; limit: number; offset: number } & AuditLogFilter) {
  const by = page.dir === "asc" ? asc : desc;
  // The id breaks ties in the order entries were written.
  const order = {
    at: [by(schema.auditLog.at), by(schema.auditLog.id)],
    who: [by(sql`coalesce(${schema.users.name}, '')`), desc(schema.auditLog.id)],
    action: [by(schema.auditLog.action), desc(schema.auditLog.id)],
  }[page.sort];
  const rows = await db
    .select({
      id: schema.auditLog.id,
      at: schema.auditLog.at,
      action: schema.auditLog.action,
      subjectType: schema.auditLog.subjectType,
      subjectId: schema.auditLog.subjectId,
      clientAddress: schema.auditLog.clientAddress,
      actorName: schema.users.name,
      actorEmail: schema.users.email,
      organisationId: schema.auditLog.organisationId,
      organisation: schema.organisations.name,
      details: schema.auditLog.details,
    })
    .from(schema.auditLog)
    .leftJoin(schema.users, eq(schema.users.id, schema.auditLog.actorUserId))
    .leftJoin(schema.organisations, eq(schema.organisations.id, schema.auditLog.organisationId))
    .where(where(page))
    .orderBy(...order)
    .limit(page.limit)
    .offset(page.offset);
  const n = await namesFor(rows);
  return rows.map((r) => {
    const details = r.details ?? {};
    const sid = r.subjectId ?? "";
    const quote = r.subjectType === "quote" ? n.quotes.get(sid) : undefined;
    const file = r.subjectType === "order_file" ? n.files.get(sid) : undefined;
    const link = r.subjectType === "share_link" ? n.links.get(sid) : undefined;
    const orderId = r.subjectType === "order" ? sid : ((details.orderId as string | undefined) ?? file?.orderId ?? link?.orderId);
    const order = orderId ? n.orders.get(orderId) : undefined;
    const requestId = r.subjectType === "request" ? sid : ((details.requestId as string | undefined) ?? quote?.requestId ?? order?.requestId);
    const labId = r.subjectType === "lab" ? sid : (quote?.labId ?? order?.labId ?? (details.labId as string | undefined));
    const subject =
      r.subjectType === "order"
        ? (order?.number ?? null)
        : r.subjectType === "request"
          ? (n.requests.get(sid)?.title ?? null)
          : r.subjectType === "lab" || r.subjectType === "organisation"
            ? (n.orgs.get(sid)?.name ?? null)
            : file
              ? `${file.name} v${file.version}`
              : link
                ? link.label
                : (n.named.get(sid)?.name ?? null);
    const currency = order?.currency ?? quote?.currency ?? (typeof details.currency === "string" ? details.currency : null);
    const words = auditSentence(
      { action: r.action, details },
      {
        who: r.actorName ?? r.actorEmail ?? null,
        organisation: r.organisation,
        subject,
        orderNumber: order?.number ?? null,
        requestTitle: requestId ? (n.requests.get(requestId)?.title ?? null) : null,
        labName: labId ? (n.orgs.get(labId)?.name ?? (labId === r.organisationId ? r.organisation : null)) : null,
        currency,
      },
    );
    return {
      id: r.id,
      at: r.at,
      action: r.action,
      kind: kindLabel(r.action),
      who: r.actorName ?? null,
      email: r.actorEmail ?? null,
      organisation: r.organisation,
      clientAddress: r.clientAddress,
      sentence: words.sentence,
      details: words.details,
    };
  });
}

/** The latest sign-in attempts (every try, succeeded or not) for the sign-in view, newest first. */
export async function signInAttempts(limit = 50) {
  return db
    .select({
      id: schema.signInAttempts.id,
      email: schema.signInAttempts.email,
      clientAddress: schema.signInAttempts.clientAddress,
      succeeded: schema.signInAttempts.succeeded,
      at: schema.signInAttempts.at,
    })
    .from(schema.signInAttempts)
    .orderBy(desc(schema.signInAttempts.at), desc(schema.signInAttempts.id))
    .limit(limit);
}
