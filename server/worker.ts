// The job worker process: runs every queue handler (review-window payouts, scan checks, e-mail) until stopped.
import { getBoss, stopBoss } from "~/jobs/queues.server";
import { startWorkers } from "~/jobs/worker.server";

// A worker started while PostgreSQL is unreachable (restarting, or not up yet) waits for it instead of exiting.
async function startWhenReachable() {
  for (let attempt = 1; ; attempt++) {
    try {
      return await getBoss();
    } catch (err) {
      console.warn(`worker: the database cannot be reached (${(err as Error).message}); trying again in 2 s (attempt ${attempt})`);
      await new Promise((r) => setTimeout(r, 2000));
    }
  }
}

const boss = await startWhenReachable();
await startWorkers(boss);
console.log("Diffractory worker is running");
for (const signal of ["SIGTERM", "SIGINT"] as const) {
  process.on(signal, async () => {
    await stopBoss();
    process.exit(0);
  });
}
