// Wakes the worker's queue handlers when a job is sent, instead of leaving it to their next poll: the sender
// NOTIFYs JOB_SENT_CHANNEL with the queue's name (sendAndWake), and the worker LISTENs and asks pg-boss to fetch
// at once (listenForSentJobs). Polling stays as the fallback (a lost connection, a notice sent while nobody listened).
import pg from "pg";
import type PgBoss from "pg-boss";
import { config } from "~/config.server";
import { getBoss } from "./queues.server";

/** The PostgreSQL channel a sent job is announced on; the payload is the queue's name. */
const JOB_SENT_CHANNEL = "diffractory_job_sent";

/** Sends a job and announces it, so a listening worker fetches it now. Answers the job's id (null: not queued). */
export async function sendAndWake(queue: string, data: object, options: PgBoss.SendOptions): Promise<string | null> {
  const boss = await getBoss();
  const jobId = await boss.send(queue, data, options);
  if (jobId) await boss.getDb().executeSql("select pg_notify($1, $2)", [JOB_SENT_CHANNEL, queue]);
  return jobId;
}

/**
 * Listens for sent jobs and wakes the named queues' workers (`{ queue: [workerId, …] }`). After a lost
 * connection it tries again every second. Answers a function that stops listening.
 */
export async function listenForSentJobs(boss: PgBoss, workers: Record<string, string[]>) {
  let stopped = false;
  let listener: pg.Client | null = null;
  const listen = async () => {
    if (stopped) return;
    const client = new pg.Client({ connectionString: config.databaseUrl });
    client.on("notification", (n) => {
      for (const id of workers[n.payload ?? ""] ?? []) boss.notifyWorker(id);
    });
    client.on("error", (err) => {
      console.warn("job wake listener:", err.message);
      const wasListening = listener === client;
      listener = null;
      client.end().catch(() => undefined);
      if (wasListening) relisten();
    });
    await client.connect();
    await client.query(`listen ${JOB_SENT_CHANNEL}`);
    listener = client;
  };
  const relisten = () => {
    if (stopped) return;
    setTimeout(() => {
      listen().catch((err) => {
        console.warn("job wake listener:", (err as Error).message);
        relisten();
      });
    }, 1000);
  };
  await listen();
  return async () => {
    stopped = true;
    await listener?.end().catch(() => undefined);
  };
}
