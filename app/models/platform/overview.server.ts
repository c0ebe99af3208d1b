// The platform at a glance for its admins: what waits for a decision and how many people and organisations there are.
import { count, eq } from "drizzle-orm";
import { db, schema } from "~/db/client.server";

/** Labs in review, open disputes and parked e-mails (what waits), and people, client organisations and labs. */
export async function platformTallies() {
  const [[people], [clients], [labs], [inReview], [openDisputes], [parked]] = await Promise.all([
    db.select({ n: count() }).from(schema.users),
    db.select({ n: count() }).from(schema.organisations).where(eq(schema.organisations.kind, "client")),
    db.select({ n: count() }).from(schema.organisations).where(eq(schema.organisations.kind, "lab")),
    db.select({ n: count() }).from(schema.labs).where(eq(schema.labs.vettingState, "in_review")),
    db.select({ n: count() }).from(schema.disputes).where(eq(schema.disputes.state, "open")),
    db.select({ n: count() }).from(schema.outboxMessages).where(eq(schema.outboxMessages.status, "parked")),
  ]);
  return { people: people.n, clients: clients.n, labs: labs.n, inReview: inReview.n, openDisputes: openDisputes.n, parked: parked.n };
}
