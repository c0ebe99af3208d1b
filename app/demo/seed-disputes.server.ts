// The demo's open dispute heard from both sides: Granite Ridge answers Halvorsen's statement on lot HC-2655 with
// its own statement and an evidence file (an invented one-page PDF). Idempotent: a second run changes nothing.
import { and, eq } from "drizzle-orm";
import { db, schema } from "~/db/client.server";
import { simplePdf } from "~/demo/demo-pdf";
import { putObject, storageKeyFor } from "~/models/files/storage.server";
import { answerDispute, evidencePrefix } from "~/models/orders/disputes.server";

const ORDER_TITLE = "Impurity check of NMC lot HC-2655";
const LAB_MANAGER = "lab@graniteridge.example";
const EVIDENCE_NAME = "HC-2655-A_blank-holder-log.pdf";

const STATEMENT =
  "The three weak lines near 18°, 25° and 27° 2θ also appear in the blank scan of the zero-background holder we ran the same day (attached log), so we read them as the holder, not the lot. We can remeasure on a fresh holder within five working days if the client wishes.";

export async function seedDemoDisputes() {
  const [row] = await db
    .select({ order: schema.orders, dispute: schema.disputes })
    .from(schema.orders)
    .innerJoin(schema.requests, eq(schema.requests.id, schema.orders.requestId))
    .innerJoin(schema.disputes, eq(schema.disputes.orderId, schema.orders.id))
    .where(and(eq(schema.requests.title, ORDER_TITLE), eq(schema.disputes.state, "open")));
  const [manager] = await db.select({ id: schema.users.id }).from(schema.users).where(eq(schema.users.email, LAB_MANAGER));
  if (!row || !manager || row.dispute.labStatement) return { answered: false };
  const bytes = simplePdf([
    "Granite Ridge Characterisation - instrument log (invented demo document)",
    `Order: ${row.order.number}   Sample: HC-2655-A`,
    "Blank scan, zero-background Si holder, Co K-alpha, 15-120 deg 2-theta",
    "Weak lines observed on the blank: 18.1, 25.3, 27.0 deg 2-theta",
    "Same lines in the HC-2655-A scan at matching intensity ratios.",
    "Conclusion: holder contribution; lot reported single-phase.",
  ]);
  const storageKey = storageKeyFor(evidencePrefix(row.order.id, "lab"), EVIDENCE_NAME);
  await putObject(storageKey, bytes, "application/pdf");
  await db.insert(schema.disputeEvidence).values({
    disputeId: row.dispute.id,
    side: "lab",
    fileName: EVIDENCE_NAME,
    contentType: "application/pdf",
    sizeBytes: bytes.length,
    storageKey,
    uploadedBy: manager.id,
  });
  await answerDispute(row.order, manager.id, STATEMENT);
  return { answered: true };
}
