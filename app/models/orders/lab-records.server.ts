// The lab's records of an order: the receipt of each sample (condition, seal, amount, storage place, photo,
// who and when) or its refusal, the due date the receipt starts, the scans whose verdicts must be confirmed
// before delivery or acceptance, and the measurement conditions the lab enters for a scan (docs/design.md,
// "The lab's records"). The moves themselves stay in lifecycle.server.ts, which calls these in its transaction.
import { and, asc, eq, isNull } from "drizzle-orm";
import { db, schema, type Tx } from "~/db/client.server";
import type { Order } from "~/db/schema";
import type { Verdict } from "~/diffraction/verdict";
import { isKeyUnder } from "~/domain/storage-keys";
import type { MeasurementConditions } from "~/domain/measurement";
import { conditionOfRefusal, dueDateFrom, type AmountUnit, type ReceiptCondition, type RefusalReason } from "~/domain/receipt";
import type { FileVerdict } from "~/domain/verdict-confirmation";
import { presignDownload, verifyStoredObject, type UploadRule } from "~/models/files/storage.server";

/** A photo of a sample on arrival: a PNG or JPEG of at most 20 MB, checked by content. */
export const RECEIPT_PHOTO_RULE: UploadRule = { label: "a photo (PNG or JPEG)", maxBytes: 20 * 1024 * 1024, types: ["image/png", "image/jpeg"] };

/** Where the receipt photos of an order are stored; a form may only name keys under it. */
export const receiptPhotoPrefix = (orderId: string) => `orders/${orderId}/receipts`;

export interface ReceiptInput {
  sampleId: string;
  condition: ReceiptCondition;
  sealIntact: boolean;
  amount?: number | null;
  amountUnit?: AmountUnit | null;
  storagePlace?: string;
  note?: string;
  photo?: { storageKey: string; fileName: string; sha256?: string } | null;
}

export interface RefusedSampleInput {
  sampleId: string;
  reason: RefusalReason;
}

/** A problem with the records sent for an order's samples (unknown sample, a photo not stored), or null. */
export async function receiptProblem(order: Pick<Order, "id" | "requestId">, sampleIds: string[]): Promise<string | null> {
  const samples = await db.select({ id: schema.samples.id }).from(schema.samples).where(eq(schema.samples.requestId, order.requestId));
  const known = new Set(samples.map((s) => s.id));
  if (sampleIds.some((id) => !known.has(id))) return "One of the records names a sample that is not part of this order.";
  if (new Set(sampleIds).size !== sampleIds.length) return "Each sample has one record.";
  return null;
}

/** Checks each record's photo in storage (under the order's prefix, an image by content) and returns its size. */
export async function verifyReceiptPhotos(orderId: string, records: ReceiptInput[]): Promise<{ error: string } | { sizes: Map<string, number> }> {
  const sizes = new Map<string, number>();
  for (const r of records) {
    if (!r.photo?.storageKey) continue;
    if (!isKeyUnder(r.photo.storageKey, receiptPhotoPrefix(orderId))) return { error: "Upload the photo again on this page." };
    const check = await verifyStoredObject(r.photo.storageKey, RECEIPT_PHOTO_RULE, r.photo.sha256 || undefined);
    if (!check.ok) return { error: check.error };
    sizes.set(r.sampleId, check.size);
  }
  return { sizes };
}

/** Writes the receipt records (one per sample; a second receipt of the same sample replaces the first). */
export async function writeReceipts(tx: Tx, orderId: string, userId: string, records: ReceiptInput[], photoSizes = new Map<string, number>()) {
  for (const r of records) {
    const values = {
      condition: r.condition,
      sealIntact: r.sealIntact,
      amount: r.amount ?? null,
      amountUnit: r.amount != null ? (r.amountUnit ?? "mg") : null,
      storagePlace: r.storagePlace?.trim() ?? "",
      photoName: r.photo?.storageKey ? r.photo.fileName || "photo" : null,
      photoKey: r.photo?.storageKey || null,
      photoSizeBytes: photoSizes.get(r.sampleId) ?? null,
      photoContentType: r.photo?.storageKey ? (/\.png$/i.test(r.photo.fileName) ? "image/png" : "image/jpeg") : null,
      refusalReason: null,
      note: r.note?.trim() ?? "",
      receivedBy: userId,
      receivedAt: new Date(),
    };
    await tx
      .insert(schema.sampleReceipts)
      .values({ orderId, sampleId: r.sampleId, ...values })
      .onConflictDoUpdate({ target: [schema.sampleReceipts.orderId, schema.sampleReceipts.sampleId], set: values });
  }
}

/** Writes the refusal of each refused sample with its reason; the words go to every refused sample's note. */
export async function writeRefusals(tx: Tx, orderId: string, userId: string, refused: RefusedSampleInput[], words: string) {
  for (const r of refused) {
    const values = { ...conditionOfRefusal(r.reason), refusalReason: r.reason, note: words.trim(), receivedBy: userId, receivedAt: new Date() };
    await tx
      .insert(schema.sampleReceipts)
      .values({ orderId, sampleId: r.sampleId, storagePlace: "", ...values })
      .onConflictDoUpdate({ target: [schema.sampleReceipts.orderId, schema.sampleReceipts.sampleId], set: values });
  }
}

/** Sets the order's due date: the receipt time plus the accepted quote's turnaround. */
export async function setDueDate(tx: Tx, order: Pick<Order, "id" | "quoteId">, receivedAt = new Date()) {
  const [quote] = await tx.select({ days: schema.quotes.turnaroundDays }).from(schema.quotes).where(eq(schema.quotes.id, order.quoteId));
  const dueAt = dueDateFrom(receivedAt, quote?.days ?? 0);
  await tx.update(schema.orders).set({ dueAt }).where(eq(schema.orders.id, order.id));
  return dueAt;
}

/** The receipt records of an order in the samples' order, with who recorded each and a short-lived link to its photo. */
export async function receiptsOf(order: Pick<Order, "id">) {
  const rows = await db
    .select({ receipt: schema.sampleReceipts, sampleLabel: schema.samples.label, by: schema.users.name })
    .from(schema.sampleReceipts)
    .innerJoin(schema.samples, eq(schema.samples.id, schema.sampleReceipts.sampleId))
    .leftJoin(schema.users, eq(schema.users.id, schema.sampleReceipts.receivedBy))
    .where(eq(schema.sampleReceipts.orderId, order.id))
    .orderBy(asc(schema.samples.position), asc(schema.samples.label));
  return Promise.all(
    rows.map(async ({ receipt: r, sampleLabel, by }) => ({
      sampleId: r.sampleId,
      sampleLabel,
      condition: r.condition as ReceiptCondition,
      sealIntact: r.sealIntact,
      amount: r.amount,
      amountUnit: r.amountUnit,
      storagePlace: r.storagePlace,
      refusalReason: r.refusalReason as RefusalReason | null,
      note: r.note,
      by: by ?? null,
      at: r.receivedAt.toISOString(),
      photo: r.photoKey ? { name: r.photoName ?? "photo", url: await presignDownload(r.photoKey, r.photoName ?? undefined) } : null,
    })),
  );
}

/**
 * The scans whose finished check is not `consistent`: the newest stored version of each file name the client
 * can see, with its sample. These are named in the confirmation before delivery and acceptance.
 */
export async function scansToConfirm(orderId: string, executor: Tx | typeof db = db): Promise<FileVerdict[]> {
  const rows = await executor
    .select({
      name: schema.orderFiles.name,
      version: schema.orderFiles.version,
      sampleLabel: schema.samples.label,
      status: schema.scanChecks.status,
      verdict: schema.scanChecks.verdict,
    })
    .from(schema.orderFiles)
    .leftJoin(schema.samples, eq(schema.samples.id, schema.orderFiles.sampleId))
    .leftJoin(schema.scanChecks, eq(schema.scanChecks.fileId, schema.orderFiles.id))
    .where(
      and(
        eq(schema.orderFiles.orderId, orderId),
        eq(schema.orderFiles.kind, "scan"),
        eq(schema.orderFiles.state, "stored"),
        isNull(schema.orderFiles.deletedAt),
      ),
    )
    .orderBy(asc(schema.orderFiles.name), asc(schema.orderFiles.version));
  const newest = new Map<string, (typeof rows)[number]>();
  for (const r of rows) newest.set(r.name, r);
  return [...newest.values()]
    .filter((r) => r.status === "done" && r.verdict && r.verdict !== "consistent")
    .map((r) => ({ name: r.name, version: r.version, sampleLabel: r.sampleLabel, verdict: r.verdict as Verdict }));
}

/** Stores what the lab enters about how a scan was measured, stamped with who entered it and when. */
export async function saveScanConditions(orderId: string, fileId: string, conditions: MeasurementConditions, enteredBy: string) {
  const [row] = await db
    .update(schema.orderFiles)
    .set({ conditions: { ...conditions, enteredBy, enteredAt: new Date().toISOString() } })
    .where(and(eq(schema.orderFiles.id, fileId), eq(schema.orderFiles.orderId, orderId), eq(schema.orderFiles.kind, "scan")))
    .returning({ id: schema.orderFiles.id });
  return !!row;
}
