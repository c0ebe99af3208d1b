// Writes rows of the audit log: who did what to which object, from where.
import { db, schema } from "~/db/client.server";

type AuditEntry = typeof schema.auditLog.$inferInsert;
type Tx = Pick<typeof db, "insert">;

export async function audit(entry: AuditEntry, tx: Tx = db) {
  await tx.insert(schema.auditLog).values(entry);
}
