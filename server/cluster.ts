// Runs WEB_CONCURRENCY copies of the web server (server/main.ts) on one port with node:cluster, one per core
// by default, and starts a new one when one dies. The app keeps no state in memory that another copy needs
// (sessions, limits and jobs live in PostgreSQL); each copy's short-lived directory cache is its own.
import cluster from "node:cluster";
import os from "node:os";
import path from "node:path";
import { fileURLToPath } from "node:url";

const count = Math.max(1, Number(process.env.WEB_CONCURRENCY ?? os.availableParallelism()));
cluster.setupPrimary({ exec: path.join(path.dirname(fileURLToPath(import.meta.url)), "main.ts") });
let stopping = false;
for (let i = 0; i < count; i++) cluster.fork();
cluster.on("exit", (worker, code, signal) => {
  if (stopping) {
    if (Object.keys(cluster.workers ?? {}).length === 0) process.exit(0);
    return;
  }
  console.warn(`web server ${worker.process.pid} exited (${signal ?? code}); starting another`);
  cluster.fork();
});
for (const signal of ["SIGTERM", "SIGINT"] as const) {
  process.on(signal, () => {
    stopping = true;
    for (const worker of Object.values(cluster.workers ?? {})) worker?.process.kill("SIGTERM");
  });
}
