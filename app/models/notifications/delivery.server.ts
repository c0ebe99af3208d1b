// Sends the outbox: a dispatcher hands committed rows to the mail-send queue, whose jobs deliver them through the configured transport.
import { and, eq, sql } from "drizzle-orm";
import nodemailer from "nodemailer";
import pg from "pg";
import type PgBoss from "pg-boss";
import { config } from "~/config.server";
import { db, schema } from "~/db/client.server";
import { getBoss, QUEUES } from "~/jobs/queues.server";
import { lockOrder } from "~/models/orders/lifecycle.server";
import { services } from "~/utils/services.server";
import { notify, OUTBOX_CHANNEL } from "~/models/notifications/outbox.server";

export interface OutgoingMail {
  id: string;
  to: string;
  subject: string;
  html: string;
  text: string;
}

/** Delivers one message or throws; the outbox row's id makes a repeated send harmless. */
export interface MailTransport {
  name: string;
  send(mail: OutgoingMail): Promise<{ providerId: string | null }>;
}

function withTimeout<T>(work: Promise<T>, ms: number): Promise<T> {
  let timer: NodeJS.Timeout;
  const timeout = new Promise<never>((_, reject) => {
    timer = setTimeout(() => reject(new Error(`The mail service did not answer within ${ms} ms.`)), ms);
  });
  return Promise.race([work, timeout]).finally(() => clearTimeout(timer));
}

export function resendTransport(): MailTransport {
  return {
    name: "resend",
    async send(mail) {
      const { data, error } = await withTimeout(
        services.mail.emails.send(
          { from: config.mail.from, to: [mail.to], subject: mail.subject, html: mail.html, text: mail.text },
          { idempotencyKey: mail.id },
        ),
        config.mail.sendTimeoutMs,
      );
      if (error) throw new Error(`${error.name}: ${error.message}`);
      return { providerId: data?.id ?? null };
    },
  };
}

export function smtpTransport(url = config.mail.smtpUrl): MailTransport {
  const transporter = nodemailer.createTransport(url);
  return {
    name: "smtp",
    async send(mail) {
      // SMTP has no idempotency key; the outbox id as Message-ID lets a receiving server drop a repeat.
      const info = await withTimeout(
        transporter.sendMail({
          from: config.mail.from,
          to: mail.to,
          subject: mail.subject,
          html: mail.html,
          text: mail.text,
          messageId: `<${mail.id}@diffractory.outbox>`,
        }),
        config.mail.sendTimeoutMs,
      );
      return { providerId: info.messageId ?? null };
    },
  };
}

const g = globalThis as unknown as { __diffractoryMailTransport?: MailTransport };

/** The transport chosen by `MAIL_TRANSPORT`; tests may replace it. */
export function mailTransport(): MailTransport {
  if (!g.__diffractoryMailTransport) {
    const chosen = config.mail.transport;
    if (chosen !== "resend" && chosen !== "smtp") throw new Error(`MAIL_TRANSPORT must be "resend" or "smtp", got "${chosen}".`);
    g.__diffractoryMailTransport = chosen === "smtp" ? smtpTransport() : resendTransport();
  }
  return g.__diffractoryMailTransport;
}

/** Replaces the configured transport (tests use a broken one); `undefined` goes back to the configured one. */
export function setMailTransport(transport: MailTransport | undefined) {
  g.__diffractoryMailTransport = transport;
}

/** The pg-boss options of every mail-send job, from configuration (short delays in tests). */
export function mailJobOptions() {
  return {
    retryLimit: config.mail.retryLimit,
    retryDelay: config.mail.retryDelaySeconds,
    retryBackoff: config.mail.retryBackoff,
    expireInSeconds: Math.max(60, Math.ceil((config.mail.sendTimeoutMs * 2) / 1000)),
  };
}

/**
 * Hands queued rows that have no job yet to the mail-send queue (rows held for a daily digest wait for it), stamping each row with its job in the
 * same transaction, so a row is handed over exactly once even with several dispatchers running.
 */
export async function dispatchOutbox(boss: PgBoss, limit = 200): Promise<number> {
  const client = await db.$client.connect();
  try {
    await client.query("begin");
    const { rows } = await client.query<{ id: string }>(
      "select id from outbox_messages where job_id is null and status = 'queued' and not digest order by created_at limit $1 for update skip locked",
      [limit],
    );
    const adapter = { executeSql: (text: string, values?: unknown[]) => client.query(text, values) };
    for (const { id } of rows) {
      const jobId = await boss.send(QUEUES.mailSend, { messageId: id }, { ...mailJobOptions(), db: adapter });
      if (!jobId) throw new Error(`The ${QUEUES.mailSend} queue does not exist.`);
      await client.query("update outbox_messages set job_id = $1 where id = $2", [jobId, id]);
    }
    await client.query("commit");
    return rows.length;
  } catch (err) {
    await client.query("rollback").catch(() => undefined);
    throw err;
  } finally {
    client.release();
  }
}

export type DeliveryOutcome = "sent" | "already_done" | "failed" | "parked";

/**
 * One attempt at one message. A failure is recorded and rethrown so pg-boss retries it later; on the last
 * attempt the message is parked for an admin instead.
 */
export async function deliverOutboxMessage(messageId: string, { finalAttempt }: { finalAttempt: boolean }): Promise<DeliveryOutcome> {
  const [row] = await db
    .update(schema.outboxMessages)
    .set({ attempts: sql`${schema.outboxMessages.attempts} + 1` })
    .where(and(eq(schema.outboxMessages.id, messageId), eq(schema.outboxMessages.status, "queued")))
    .returning();
  if (!row) return "already_done";
  try {
    await mailTransport().send(row);
  } catch (err) {
    const message = (err as Error).message || String(err);
    await db
      .update(schema.outboxMessages)
      .set({ lastError: message.slice(0, 2000), ...(finalAttempt ? { status: "parked" as const } : {}) })
      .where(eq(schema.outboxMessages.id, row.id));
    if (finalAttempt) {
      console.warn(`mail: message ${row.id} to ${row.to} parked after ${row.attempts} attempts: ${message}`);
      return "parked";
    }
    throw err;
  }
  await db.update(schema.outboxMessages).set({ status: "sent", sentAt: new Date(), lastError: null }).where(eq(schema.outboxMessages.id, row.id));
  return "sent";
}

/** An admin puts a parked message back in the queue; returns false when it is not parked. */
export async function retryParkedMessage(messageId: string): Promise<boolean> {
  return db.transaction(async (tx) => {
    const changed = await tx
      .update(schema.outboxMessages)
      .set({ status: "queued", jobId: null })
      .where(and(eq(schema.outboxMessages.id, messageId), eq(schema.outboxMessages.status, "parked")))
      .returning({ id: schema.outboxMessages.id });
    if (changed.length) await tx.execute(sql`select pg_notify(${OUTBOX_CHANNEL}, '')`);
    return changed.length > 0;
  });
}

/** Writes the "review window ends tomorrow" reminder once per delivered order, a day before it lapses. */
export async function remindReviewWindows(now = new Date()): Promise<number> {
  const due = await db.execute<{ id: string }>(sql`
    select o.id from orders o
    where o.state = 'data_delivered'
      and o.delivered_at + make_interval(days => o.review_window_days) - interval '1 day' <= ${now.toISOString()}
      and o.delivered_at + make_interval(days => o.review_window_days) > ${now.toISOString()}
      and not exists (select 1 from notifications n where n.order_id = o.id and n.kind = 'review_window_ending')`);
  let reminded = 0;
  for (const { id } of due.rows) {
    await db.transaction(async (tx) => {
      // Under the order's lock, so two sweeps cannot both remind.
      const order = await lockOrder(tx, id);
      if (order.state !== "data_delivered") return;
      const [already] = await tx
        .select({ id: schema.notifications.id })
        .from(schema.notifications)
        .where(and(eq(schema.notifications.orderId, id), eq(schema.notifications.kind, "review_window_ending")))
        .limit(1);
      if (already) return;
      await notify(tx, { kind: "review_window_ending", order });
      reminded++;
    });
  }
  return reminded;
}

/** Listens for committed outbox rows and sweeps on a timer; returns a stop function. */
export async function startOutboxDispatcher(boss: PgBoss, { sweepMs = 5000 } = {}) {
  let running = false;
  let again = false;
  let stopped = false;
  const run = async () => {
    if (stopped) return;
    if (running) {
      again = true;
      return;
    }
    running = true;
    try {
      do {
        again = false;
        while ((await dispatchOutbox(boss)) > 0 && !stopped);
      } while (again && !stopped);
    } catch (err) {
      console.warn("mail dispatcher:", (err as Error).message);
    } finally {
      running = false;
    }
  };
  let listener: pg.Client | null = null;
  const listen = async () => {
    if (stopped) return;
    const client = new pg.Client({ connectionString: config.databaseUrl });
    client.on("notification", () => void run());
    client.on("error", (err) => {
      console.warn("mail dispatcher listener:", err.message);
      // A client that never finished listening is retried by listen()'s own failure below.
      const wasListening = listener === client;
      listener = null;
      client.end().catch(() => undefined);
      if (wasListening) relisten();
    });
    await client.connect();
    await client.query(`listen ${OUTBOX_CHANNEL}`);
    listener = client;
  };
  // After a lost connection (a database restart) keep trying every second until LISTEN is back, then sweep
  // once for rows committed while nobody listened.
  const relisten = () => {
    if (stopped) return;
    setTimeout(() => {
      listen().then(
        () => void run(),
        (err) => {
          console.warn("mail dispatcher listener:", (err as Error).message);
          relisten();
        },
      );
    }, 1000);
  };
  await listen();
  const timer = setInterval(() => void run(), sweepMs);
  await run();
  return async () => {
    stopped = true;
    clearInterval(timer);
    while (running) await new Promise((r) => setTimeout(r, 20));
    await listener?.end().catch(() => undefined);
  };
}

/** Puts every queued row in the queue now (for scripts and tests that run no dispatcher). */
export async function dispatchNow() {
  return dispatchOutbox(await getBoss());
}
