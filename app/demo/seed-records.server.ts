// Demo of records that hold (docs/design.md#records-that-hold): Ingrid has archived the coated trial's scan of the
// paid-out order HC-2398 from Halvorsen's data room (kept as delivered; "Show archived" brings it back), as the data
// room's archive action does, with its audit entry. Runs again on a seeded database without adding anything.
import { and, eq } from "drizzle-orm";
import { db, schema } from "~/db/client.server";
import { audit } from "~/models/audit.server";
import { archiveFile } from "~/models/files/files.server";

const ORDER_TITLE = "Lattice check of LFP reference lot HC-2398";
const FILE_NAME = "HC-2398-2_Co_15-110.xy";
const BY = "owner@halvorsen.example";

/** Archives the demo file once; answers whether it did so this run. */
export async function seedDemoRecords() {
  const [row] = await db
    .select({ file: schema.orderFiles, order: schema.orders })
    .from(schema.orderFiles)
    .innerJoin(schema.orders, eq(schema.orders.id, schema.orderFiles.orderId))
    .innerJoin(schema.requests, eq(schema.requests.id, schema.orders.requestId))
    .where(and(eq(schema.requests.title, ORDER_TITLE), eq(schema.orderFiles.name, FILE_NAME), eq(schema.orderFiles.state, "stored")));
  const [person] = await db.select().from(schema.users).where(eq(schema.users.email, BY));
  if (!row || !person || row.file.archivedAt) return false;
  await archiveFile(row.file, person.id);
  await audit({
    actorUserId: person.id,
    organisationId: row.order.clientOrganisationId,
    action: "order_file_archived",
    subjectType: "order_file",
    subjectId: row.file.id,
    details: { orderId: row.order.id, name: row.file.name, version: row.file.version },
  });
  return true;
}
