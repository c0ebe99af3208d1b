// The daily digest: a person who chose it gets their optional notices of the day in one e-mail. `notify` marks
// such rows `digest` and the dispatcher leaves them; this job gathers each person's rows into one letter.
import { inArray, sql } from "drizzle-orm";
import { db, schema } from "~/db/client.server";
import { renderLetter, type Letter } from "~/models/notifications/letters.server";
import { OUTBOX_CHANNEL } from "~/models/notifications/outbox.server";

/** The outbox kind of a digest e-mail (not a milestone: it carries several). */
const DIGEST_KIND = "daily_digest";

/** One letter listing the day's notices, newest last, each by its subject. */
function digestLetter(subjects: string[], day: Date): Letter {
  const date = day.toISOString().slice(0, 10);
  return {
    subject: subjects.length === 1 ? `Your Diffractory notice of ${date}` : `Your ${subjects.length} Diffractory notices of ${date}`,
    heading: "Your notices of the day",
    paragraphs: [
      "You asked for optional notices once a day. Since the last digest:",
      ...subjects.map((s) => `• ${s}`),
      "Messages about payments, disputes and the safe handling of samples still reach you at once.",
    ],
    facts: [],
    nextStep: "Each notice is in your notification list, with a link to the order or request it concerns.",
    link: { path: "/account/notifications", label: "Open your notifications" },
  };
}

/**
 * Writes one digest e-mail per person for the rows held for it, and marks those rows sent (their content went
 * out in the digest). Rows are locked, so two workers running at once cannot both send them. Returns how many
 * digests were written.
 */
export async function sendDailyDigests(now = new Date()): Promise<number> {
  return db.transaction(async (tx) => {
    const held = await tx.execute<{ id: string; to: string; subject: string; user_id: string | null }>(sql`
      select id, "to", subject, user_id from outbox_messages
      where digest and status = 'queued' and job_id is null
      order by created_at, id
      for update skip locked`);
    if (held.rows.length === 0) return 0;
    const byAddress = new Map<string, { to: string; userId: string | null; ids: string[]; subjects: string[] }>();
    for (const row of held.rows) {
      const key = row.to.toLowerCase();
      const group = byAddress.get(key) ?? { to: row.to, userId: row.user_id, ids: [], subjects: [] };
      group.ids.push(row.id);
      group.subjects.push(row.subject);
      byAddress.set(key, group);
    }
    const names = new Map<string, string>();
    const userIds = [...byAddress.values()].flatMap((g) => (g.userId ? [g.userId] : []));
    if (userIds.length) {
      const people = await tx.select({ id: schema.users.id, name: schema.users.name }).from(schema.users).where(inArray(schema.users.id, userIds));
      for (const p of people) names.set(p.id, p.name);
    }
    const letters = [...byAddress.values()].map((g) => {
      const rendered = renderLetter(digestLetter(g.subjects, now), (g.userId && names.get(g.userId)) || "there");
      return { kind: DIGEST_KIND, to: g.to, subject: rendered.subject, html: rendered.html, text: rendered.text, userId: g.userId, essential: false };
    });
    await tx.insert(schema.outboxMessages).values(letters);
    await tx
      .update(schema.outboxMessages)
      .set({ status: "sent", sentAt: now })
      .where(
        inArray(
          schema.outboxMessages.id,
          held.rows.map((r) => r.id),
        ),
      );
    await tx.execute(sql`select pg_notify(${OUTBOX_CHANNEL}, '')`);
    return letters.length;
  });
}
