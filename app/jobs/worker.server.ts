// Every queue handler and schedule of the job worker, registered in one place; only server/worker.ts (and the
// tests that run a worker in-process) import this module, so the app server never loads a handler.
import type PgBoss from "pg-boss";
import { config } from "~/config.server";
import { runScanCheck } from "~/models/checks/scan-check.server";
import { sendDailyDigests } from "~/models/notifications/digest.server";
import { deliverOutboxMessage, remindReviewWindows, startOutboxDispatcher } from "~/models/notifications/delivery.server";
import { acceptLapsedDeliveries, releasePendingPayouts } from "~/models/orders/lifecycle.server";
import { expireOverdueRequests } from "~/models/requests/request-life.server";
import { issueDueFeeInvoices } from "~/models/invoices/fee-invoices.server";
import { sweepBankTransfers } from "~/models/payments/bank-transfer.server";
import { endDueAgreements } from "~/models/agreements/agreements.server";
import { markOverdueCalibrations } from "~/models/labs/calibration.server";
import { QUEUES } from "./queues.server";
import { listenForSentJobs } from "./wake.server";

/** Registers every queue's handler and the schedules; the worker process calls this once. */
export async function startWorkers(boss: PgBoss, { reviewWindowCron = config.reviewWindowCron } = {}) {
  await boss.schedule(QUEUES.reviewWindow, reviewWindowCron);
  await boss.work(QUEUES.reviewWindow, async () => {
    const accepted = await acceptLapsedDeliveries();
    if (accepted > 0) console.log(`review window: ${accepted} deliveries accepted automatically`);
    // Payouts the provider failed to make after an acceptance are tried again on the same schedule.
    const paid = await releasePendingPayouts();
    if (paid > 0) console.log(`payouts: ${paid} delayed payouts released`);
  });
  await boss.schedule(QUEUES.requestExpiry, "5 * * * *");
  await boss.work(QUEUES.requestExpiry, async () => {
    const expired = await expireOverdueRequests();
    if (expired > 0) console.log(`request expiry: ${expired} requests expired on their deadline`);
  });
  await boss.schedule(QUEUES.feeInvoices, config.feeInvoiceCron);
  await boss.work(QUEUES.feeInvoices, async () => {
    const runs = await issueDueFeeInvoices();
    for (const run of runs) if (run.issued.length) console.log(`fee invoices: ${run.issued.length} issued for ${run.month}`);
  });
  await boss.schedule(QUEUES.bankTransfers, "20 * * * *");
  await boss.work(QUEUES.bankTransfers, async () => {
    const swept = await sweepBankTransfers();
    if (swept.reminded + swept.lapsed + swept.closed > 0)
      console.log(`bank transfers: ${swept.reminded} reminded, ${swept.lapsed} lapsed, ${swept.closed} closed`);
  });
  await boss.schedule(QUEUES.agreementEnds, "25 * * * *");
  await boss.work(QUEUES.agreementEnds, async () => {
    const ended = await endDueAgreements();
    if (ended > 0) console.log(`standing agreements: ${ended} ended`);
  });
  await boss.schedule(QUEUES.calibrationOverdue, "35 * * * *");
  await boss.work(QUEUES.calibrationOverdue, async () => {
    const marked = await markOverdueCalibrations();
    if (marked > 0) console.log(`calibration: ${marked} instruments overdue, withdrawn from matching`);
  });
  const scanCheckWorker = await boss.work<{ fileId: string }>(
    QUEUES.scanCheck,
    { batchSize: 1, includeMetadata: true, pollingIntervalSeconds: 0.5 },
    async ([job]) => {
      await runScanCheck(job.data.fileId, { finalAttempt: job.retryCount >= job.retryLimit });
    },
  );
  // A sent check wakes its worker at once (app/jobs/wake.server.ts); the half-second poll is the fallback.
  const stopListening = await listenForSentJobs(boss, { [QUEUES.scanCheck]: [scanCheckWorker] });
  boss.once("stopped", () => void stopListening());
  await startMailWorkers(boss);
}

/** The mail workers: the dispatcher, the mail-send handlers, the daily digest and the review-window reminder schedule. */
export async function startMailWorkers(boss: PgBoss, { sweepMs = 5000, reminderCron = "*/15 * * * *", digestCron = config.dailyDigestCron, workers = 2 } = {}) {
  await boss.schedule(QUEUES.dailyDigest, digestCron);
  await boss.work(QUEUES.dailyDigest, async () => {
    const sent = await sendDailyDigests();
    if (sent > 0) console.log(`daily digest: ${sent} digests written`);
  });
  await boss.schedule(QUEUES.reviewReminder, reminderCron);
  await boss.work(QUEUES.reviewReminder, async () => {
    const reminded = await remindReviewWindows();
    if (reminded > 0) console.log(`review window: ${reminded} reminders written`);
  });
  for (let i = 0; i < workers; i++) {
    await boss.work<{ messageId: string }>(QUEUES.mailSend, { batchSize: 10, includeMetadata: true, pollingIntervalSeconds: 1 }, async (jobs) => {
      // Each job of the batch succeeds or fails on its own: failed ones are failed by id (pg-boss then
      // retries them after their delay) and the rest are completed when this handler returns.
      await Promise.all(
        jobs.map(async (job) => {
          try {
            await deliverOutboxMessage(job.data.messageId, { finalAttempt: job.retryCount >= job.retryLimit });
          } catch (err) {
            await boss.fail(QUEUES.mailSend, job.id, { message: (err as Error).message });
          }
        }),
      );
    });
  }
  const stop = await startOutboxDispatcher(boss, { sweepMs });
  // The dispatcher's own connection closes with the queue (the worker's shutdown, a test's stopBoss).
  boss.once("stopped", () => void stop());
  return stop;
}
