// The job worker process: runs the queue handlers (review-window payouts, and later scan checks and e-mail).
import { getBoss, startWorkers, stopBoss } from "~/jobs/boss.server";

const boss = await getBoss();
await startWorkers(boss);
console.log("Diffractory worker is running");
for (const signal of ["SIGTERM", "SIGINT"] as const) {
  process.on(signal, async () => {
    await stopBoss();
    process.exit(0);
  });
}
