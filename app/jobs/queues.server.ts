// The job queue (pg-boss on the app's PostgreSQL): queue names and the shared client. It imports no handler:
// app/jobs/worker.server.ts registers those, and only the worker process loads it.
import PgBoss from "pg-boss";
import { config } from "~/config.server";

export const QUEUES = {
  /** Every few minutes: accept deliveries whose review window has lapsed, and pay the labs. */
  reviewWindow: "review-window",
  /** The lattice check of one stored scan (`{ fileId }`). */
  scanCheck: "scan-check",
  /** One outbox e-mail (`{ messageId }`), retried with growing delays, parked after the last try. */
  mailSend: "mail-send",
  /** Every quarter hour: "review window ends tomorrow" reminders. */
  reviewReminder: "review-reminder",
  /** Once a day: each digest reader's held optional notices in one e-mail. */
  dailyDigest: "daily-digest",
  /** Every hour: open requests past their deadline expire (docs/design.md#the-requests-life). */
  requestExpiry: "request-expiry",
  /** On the 1st of each month (UTC): last month's platform fee invoices to labs (docs/design.md#platform-fee-invoices). */
  feeInvoices: "fee-invoices",
  /** Every hour: bank transfers reminded before their pay-by date, lapsed after it (docs/design.md#bank-transfer). */
  bankTransfers: "bank-transfers",
  /** Every hour: standing agreements past their last day or their notice end (docs/design.md#standing-agreements). */
  agreementEnds: "agreement-ends",
  /** Every hour: instruments past their calibration due date become overdue and leave matching (docs/design.md#calibration-on-record). */
  calibrationOverdue: "calibration-overdue",
} as const;

const g = globalThis as unknown as { __diffractoryBoss?: Promise<PgBoss> };

/** A started pg-boss client for sending jobs (created once per process). */
export function getBoss(): Promise<PgBoss> {
  g.__diffractoryBoss ??= (async () => {
    const boss = new PgBoss({
      connectionString: config.databaseUrl,
      schema: "pgboss",
      max: 4,
      // Maintenance fails jobs whose worker died (expired) so they are retried; tests shorten it.
      maintenanceIntervalSeconds: config.jobs.maintenanceIntervalSeconds,
    });
    boss.on("error", (err) => console.warn("job queue:", err.message));
    await boss.start();
    for (const name of Object.values(QUEUES)) await boss.createQueue(name);
    return boss;
  })();
  // A start that failed (the database was unreachable) is not kept: the next caller tries again.
  const started = g.__diffractoryBoss;
  started.catch(() => {
    if (g.__diffractoryBoss === started) delete g.__diffractoryBoss;
  });
  return started;
}

export async function stopBoss() {
  if (!g.__diffractoryBoss) return;
  const boss = await g.__diffractoryBoss;
  delete g.__diffractoryBoss;
  await boss.stop({ graceful: true, wait: true });
}
