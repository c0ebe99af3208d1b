// Purchase orders on orders: the number (and optional PDF) given on acceptance, required when the client's
// organisation says so, correctable until the order is paid (docs/design.md#purchase-orders).
import { and, eq } from "drizzle-orm";
import { db, schema } from "~/db/client.server";
import type { MarketRequest, Order } from "~/db/schema";
import { isKeyUnder } from "~/domain/storage-keys";
import { normalisePurchaseOrderNumber, purchaseOrderNumberProblem } from "~/domain/purchase-orders";
import { audit } from "~/models/audit.server";
import { DOCUMENT_RULE, presignDownload, verifyStoredObject, type UploadRule } from "~/models/files/storage.server";

/** A purchase order's file is a PDF within the document size limit. */
export const PO_FILE_RULE: UploadRule = { label: "a PDF", maxBytes: DOCUMENT_RULE.maxBytes, types: ["application/pdf"] };

/** Storage keys of a request's purchase-order files start here, so a form cannot point at someone else's file. */
export function purchaseOrderPrefix(request: Pick<MarketRequest, "id" | "organisationId">) {
  return `requests/${request.organisationId}/${request.id}/purchase-order`;
}

/** What the acceptance or order form sends. */
export interface PurchaseOrderInput {
  number: string;
  fileKey?: string | null;
  fileName?: string | null;
  fileSha256?: string | null;
}

/** A checked purchase order, as kept on the order. */
export interface PurchaseOrder {
  number: string | null;
  fileKey: string | null;
  fileName: string | null;
}

/** The purchase-order fields of a form. */
export function purchaseOrderInputFrom(form: FormData): PurchaseOrderInput {
  const text = (name: string) => {
    const v = form.get(name);
    return typeof v === "string" && v.trim() ? v.trim() : null;
  };
  return {
    number: text("purchaseOrderNumber") ?? "",
    fileKey: text("purchaseOrderFileKey"),
    fileName: text("purchaseOrderFileName"),
    fileSha256: text("purchaseOrderFileSha256"),
  };
}

/** Whether the client organisation asks for a purchase-order number on every order. */
export async function requiresPurchaseOrder(organisationId: string) {
  const [row] = await db
    .select({ requires: schema.organisations.requiresPurchaseOrder })
    .from(schema.organisations)
    .where(eq(schema.organisations.id, organisationId));
  return row?.requires ?? false;
}

/**
 * Checks a typed purchase order: the number's form, and an uploaded file in storage (under the request's prefix,
 * a PDF, the browser's checksum). Whether a number is required is the caller's to ask (acceptQuote does, in its
 * transaction).
 */
export async function checkPurchaseOrder(
  request: Pick<MarketRequest, "id" | "organisationId">,
  input: PurchaseOrderInput,
): Promise<{ ok: true; po: PurchaseOrder } | { ok: false; error: string }> {
  const problem = purchaseOrderNumberProblem(input.number);
  if (problem) return { ok: false, error: problem };
  const number = normalisePurchaseOrderNumber(input.number) || null;
  if (!input.fileKey) return { ok: true, po: { number, fileKey: null, fileName: null } };
  if (!number) return { ok: false, error: "Enter the purchase-order number the file belongs to." };
  if (!isKeyUnder(input.fileKey, purchaseOrderPrefix(request))) return { ok: false, error: "Upload the purchase-order file on this page." };
  const check = await verifyStoredObject(input.fileKey, PO_FILE_RULE, input.fileSha256 ?? undefined);
  if (!check.ok) return { ok: false, error: check.error };
  return { ok: true, po: { number, fileKey: input.fileKey, fileName: input.fileName || "purchase-order.pdf" } };
}

/**
 * The client adds or corrects the purchase order of its order while the order awaits payment. A number the
 * organisation requires cannot be removed; a file is kept unless a new one is uploaded.
 */
export async function setOrderPurchaseOrder(order: Order, userId: string, input: PurchaseOrderInput): Promise<{ error?: string }> {
  if (order.state !== "awaiting_payment") return { error: "The purchase order can be changed only until the order is paid." };
  const checked = await checkPurchaseOrder({ id: order.requestId, organisationId: order.clientOrganisationId }, input);
  if (!checked.ok) return { error: checked.error };
  const { po } = checked;
  if (!po.number && (await requiresPurchaseOrder(order.clientOrganisationId))) {
    return { error: "Your organisation requires a purchase-order number on every order; it cannot be removed." };
  }
  const values = po.fileKey
    ? { purchaseOrderNumber: po.number, purchaseOrderFileKey: po.fileKey, purchaseOrderFileName: po.fileName }
    : po.number
      ? { purchaseOrderNumber: po.number }
      : { purchaseOrderNumber: null, purchaseOrderFileKey: null, purchaseOrderFileName: null };
  await db.transaction(async (tx) => {
    const changed = await tx
      .update(schema.orders)
      .set({ ...values, updatedAt: new Date() })
      .where(and(eq(schema.orders.id, order.id), eq(schema.orders.state, "awaiting_payment")))
      .returning({ id: schema.orders.id });
    if (changed.length === 0) return;
    await audit(
      {
        actorUserId: userId,
        organisationId: order.clientOrganisationId,
        action: "order_purchase_order_set",
        subjectType: "order",
        subjectId: order.id,
        details: { purchaseOrderNumber: po.number, file: po.fileName },
      },
      tx,
    );
  });
  return {};
}

/** The purchase order as the order pages show it: the number, and a short-lived download link of its file. */
export async function purchaseOrderView(order: Pick<Order, "purchaseOrderNumber" | "purchaseOrderFileKey" | "purchaseOrderFileName">) {
  return {
    number: order.purchaseOrderNumber,
    fileName: order.purchaseOrderFileName,
    fileUrl: order.purchaseOrderFileKey ? await presignDownload(order.purchaseOrderFileKey, order.purchaseOrderFileName ?? "purchase-order.pdf") : null,
  };
}
