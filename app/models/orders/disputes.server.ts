// Both sides of a dispute: the lab's statement, each side's evidence files, and the admin's reads of the
// disputed order's data room (each one written to the audit log). The decision itself is `resolveDispute` in
// lifecycle.server.ts. See docs/design.md#disputes.
import { and, asc, eq, sql } from "drizzle-orm";
import { alias } from "drizzle-orm/pg-core";
import { db, schema } from "~/db/client.server";
import type { Order } from "~/db/schema";
import { isUuid } from "~/domain/ids";
import { fileNameProblem, isKeyUnder } from "~/domain/storage-keys";
import { audit } from "~/models/audit.server";
import { NoSuchRecord } from "~/models/errors";
import { contentTypeFor, presignDownload, verifyStoredObject, type UploadRule } from "~/models/files/storage.server";
import { notify } from "~/models/notifications/outbox.server";

export type DisputeSide = "client" | "lab";

/** A refused dispute step, with the sentence for the person and the HTTP status to answer with. */
export class DisputeProblem extends Error {
  constructor(
    message: string,
    readonly status = 400,
  ) {
    super(message);
  }
}

/** What either side may hand in as evidence: a document, a photo or a text file (a scan export, a log). */
export const EVIDENCE_RULE: UploadRule = {
  label: "a PDF, an image (PNG, JPEG) or a text file",
  maxBytes: 20 * 1024 * 1024,
  types: ["application/pdf", "image/png", "image/jpeg", "text/plain"],
};

/** Evidence files per side of one dispute; enough for any case, and a bound on what an admin must read. */
export const MAX_EVIDENCE_PER_SIDE = 20;
export const STATEMENT_MAX_LENGTH = 5000;

/** Where one side's evidence of an order's dispute is stored; a form's key must lie under it. */
export const evidencePrefix = (orderId: string, side: DisputeSide) => `disputes/${orderId}/${side}`;

/** The order's dispute with both statements, who wrote them, and each side's evidence; null when there is none. */
export async function disputeCase(orderId: string) {
  if (!isUuid(orderId)) return null;
  const opener = alias(schema.users, "opener");
  const labAuthor = alias(schema.users, "lab_author");
  const [row] = await db
    .select({ dispute: schema.disputes, openedBy: opener.name, labStatementBy: labAuthor.name })
    .from(schema.disputes)
    .leftJoin(opener, eq(opener.id, schema.disputes.openedBy))
    .leftJoin(labAuthor, eq(labAuthor.id, schema.disputes.labStatementBy))
    .where(eq(schema.disputes.orderId, orderId));
  if (!row) return null;
  const evidence = await db
    .select({
      id: schema.disputeEvidence.id,
      side: schema.disputeEvidence.side,
      fileName: schema.disputeEvidence.fileName,
      sizeBytes: schema.disputeEvidence.sizeBytes,
      uploadedAt: schema.disputeEvidence.uploadedAt,
      uploadedBy: schema.users.name,
    })
    .from(schema.disputeEvidence)
    .leftJoin(schema.users, eq(schema.users.id, schema.disputeEvidence.uploadedBy))
    .where(eq(schema.disputeEvidence.disputeId, row.dispute.id))
    .orderBy(asc(schema.disputeEvidence.uploadedAt), asc(schema.disputeEvidence.fileName));
  const d = row.dispute;
  return {
    id: d.id,
    state: d.state,
    reason: d.reason,
    openedAt: d.openedAt.toISOString(),
    openedBy: row.openedBy,
    labStatement: d.labStatement,
    labStatementAt: d.labStatementAt?.toISOString() ?? null,
    labStatementBy: row.labStatementBy,
    refundMinor: d.refundMinor,
    payoutMinor: d.payoutMinor,
    decisionReason: d.decisionReason,
    decidedAt: d.decidedAt?.toISOString() ?? null,
    evidence: evidence.map((e) => ({ ...e, uploadedAt: e.uploadedAt.toISOString() })),
  };
}

async function openDisputeOf(orderId: string) {
  const [row] = await db.select().from(schema.disputes).where(eq(schema.disputes.orderId, orderId));
  if (!row) throw new NoSuchRecord("This order has no dispute.");
  if (row.state !== "open") throw new DisputeProblem("The dispute is already decided; nothing more can be added.", 409);
  return row;
}

/**
 * The lab's answer to the client's statement (it may be rewritten while the dispute is open). The client and
 * the admins are told at once, by e-mail whatever their settings say, since money waits on it.
 */
export async function answerDispute(order: Order, userId: string, statement: string, clientAddress?: string | null) {
  const text = statement.trim();
  if (text.length < 10) throw new DisputeProblem("Write the lab's statement in a sentence or more (at least 10 characters).");
  if (text.length > STATEMENT_MAX_LENGTH)
    throw new DisputeProblem(`Keep the statement within ${STATEMENT_MAX_LENGTH} characters; add longer material as evidence.`);
  const dispute = await openDisputeOf(order.id);
  await db.transaction(async (tx) => {
    await tx
      .update(schema.disputes)
      .set({ labStatement: text, labStatementBy: userId, labStatementAt: new Date() })
      .where(and(eq(schema.disputes.id, dispute.id), eq(schema.disputes.state, "open")));
    await notify(tx, { kind: "dispute_answered", order, note: text });
    await audit(
      {
        actorUserId: userId,
        organisationId: order.labId,
        action: "dispute_lab_statement",
        subjectType: "order",
        subjectId: order.id,
        details: { orderNumber: order.number, rewritten: dispute.labStatement !== null },
        clientAddress: clientAddress ?? null,
      },
      tx,
    );
  });
}

/** The declared file a side uploaded straight to storage: its key, its name and the browser's SHA-256. */
export interface UploadedEvidence {
  storageKey: string;
  fileName: string;
  sha256?: string;
}

/**
 * Adds a file one side uploaded to the dispute, after checking the stored bytes against the evidence rule; the
 * other side and the admins are told, except when the file comes with the lab's statement (that notice says it).
 */
export async function addDisputeEvidence(order: Order, side: DisputeSide, userId: string, file: UploadedEvidence, { withStatement = false } = {}) {
  const dispute = await openDisputeOf(order.id);
  if (!isKeyUnder(file.storageKey, evidencePrefix(order.id, side))) throw new DisputeProblem("Upload the evidence file again.");
  const [{ count }] = await db
    .select({ count: sql<number>`count(*)::int` })
    .from(schema.disputeEvidence)
    .where(and(eq(schema.disputeEvidence.disputeId, dispute.id), eq(schema.disputeEvidence.side, side)));
  if (count >= MAX_EVIDENCE_PER_SIDE) throw new DisputeProblem(`Each side may hand in at most ${MAX_EVIDENCE_PER_SIDE} evidence files.`, 409);
  const fileName = file.fileName.trim();
  const problem = fileNameProblem(fileName);
  if (problem) throw new DisputeProblem(problem);
  // The content must be what the name says (a text file named .pdf is refused), so a download opens as named.
  const contentType = contentTypeFor(EVIDENCE_RULE, fileName);
  const stored = await verifyStoredObject(file.storageKey, { ...EVIDENCE_RULE, types: [contentType as UploadRule["types"][number]] }, file.sha256 || undefined);
  if (!stored.ok) throw new DisputeProblem(stored.error, 422);
  return db.transaction(async (tx) => {
    const [row] = await tx
      .insert(schema.disputeEvidence)
      .values({ disputeId: dispute.id, side, fileName, contentType, sizeBytes: stored.size, storageKey: file.storageKey, uploadedBy: userId })
      .returning();
    if (!withStatement)
      await notify(tx, { kind: "dispute_evidence_added", order, side, note: `${side === "client" ? "The client" : "The lab"} added ${fileName}.` });
    return row;
  });
}

/** One evidence file of the order's dispute, or null (another order's, or no such file). */
export async function evidenceOfOrder(orderId: string, evidenceId: string) {
  if (!isUuid(orderId) || !isUuid(evidenceId)) return null;
  const [row] = await db
    .select({ evidence: schema.disputeEvidence })
    .from(schema.disputeEvidence)
    .innerJoin(schema.disputes, eq(schema.disputes.id, schema.disputeEvidence.disputeId))
    .where(and(eq(schema.disputeEvidence.id, evidenceId), eq(schema.disputes.orderId, orderId)));
  return row?.evidence ?? null;
}

/** A short-lived download of an evidence file, named as it was handed in. */
export function evidenceDownloadUrl(evidence: { storageKey: string; fileName: string }) {
  return presignDownload(evidence.storageKey, evidence.fileName);
}

/** The order if it has a dispute (open or decided), else null: the only way an admin reaches an order's data room. */
export async function disputedOrder(orderId: string) {
  if (!isUuid(orderId)) return null;
  const [row] = await db
    .select({ order: schema.orders })
    .from(schema.orders)
    .innerJoin(schema.disputes, eq(schema.disputes.orderId, schema.orders.id))
    .where(eq(schema.orders.id, orderId));
  return row?.order ?? null;
}

/** A delivered file with its order, when that order has a dispute; null otherwise. */
export async function disputedOrderFile(fileId: string) {
  if (!isUuid(fileId)) return null;
  const [row] = await db
    .select({ file: schema.orderFiles, order: schema.orders })
    .from(schema.orderFiles)
    .innerJoin(schema.orders, eq(schema.orders.id, schema.orderFiles.orderId))
    .innerJoin(schema.disputes, eq(schema.disputes.orderId, schema.orders.id))
    .where(eq(schema.orderFiles.id, fileId));
  return row ?? null;
}

/** What an admin read of a disputed order: a check, a file, the file list or a side's evidence. */
export type DisputeReadSubject = { type: "check" | "order_file" | "order" | "dispute_evidence"; id: string; what: string };

/** Writes one admin read of a disputed order's data to the audit log. */
export async function logDisputeRead(
  adminUserId: string,
  order: Pick<Order, "id" | "number" | "clientOrganisationId">,
  subject: DisputeReadSubject,
  clientAddress?: string | null,
) {
  await audit({
    actorUserId: adminUserId,
    organisationId: order.clientOrganisationId,
    action: "dispute_evidence_read",
    subjectType: subject.type,
    subjectId: subject.id,
    details: { orderNumber: order.number, orderId: order.id, read: subject.what },
    clientAddress: clientAddress ?? null,
  });
}
