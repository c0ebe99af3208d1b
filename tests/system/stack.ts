// A whole Diffractory for one system-test file: the built app (one or more processes), job workers, and
// the test's OWN S3, e-mail and payment fakes on spare ports, on a database cloned from the template and
// seeded with the demo scenario. The shared PostgreSQL cluster is the only thing shared with other tests.
//
//   const stack = await startStack({ name: "faults", apps: 1, workers: 1, env: { MAIL_RETRY_DELAY_SECONDS: "1" } });
//   stack.url                      first app's base URL (stack.apps[i].url for the others)
//   stack.databaseUrl, stack.sql() the test database, and a query on it (fresh connection per call)
//   stack.fakes.s3 / .mail / .payments: { port, url, stop(), start(), running() } — stop kills the process
//                                  (SIGKILL: "the service went away"); start brings it back on the same port
//                                  with the same data (S3 objects, sent-mail listing, payment state).
//   stack.startWorker()            starts one more worker and resolves once it is consuming jobs
//   stack.killWorker(w, signal?)   SIGKILL by default; resolves when the process has exited
//   stack.startApp(port?) / stack.stopApp(app)   for multi-server tests
//   stack.restartPostgres({ downMs }) restart of the SHARED cluster (stopped downMs between): only from the
//                                  "system" project, which runs after every other project
//   stack.stop()                   stops everything it started and drops the database
// Logs go to .data/logs/system-<name>-*.log; the app must be built first (npm test builds it).
import { spawn, execFileSync, type ChildProcess } from "node:child_process";
import fs from "node:fs";
import net from "node:net";
import path from "node:path";
import pg from "pg";
import { logDir, dataDir, root } from "../../services/paths";
import { portOpen, waitForPort } from "../../services/process";
import { cloneTemplate } from "../../services/test-db";

export interface StackOptions {
  /** Short name: the database is `diffractory_sys_<name>`, logs and fake data are named after it. */
  name: string;
  /** How many app processes (default 1), each on its own spare port. */
  apps?: number;
  /** How many workers to start (default 1). */
  workers?: number;
  /** Extra environment for the app, the workers and the seed (short retry delays and the like). */
  env?: Record<string, string>;
  /** Seed the demo scenario (default true). */
  seed?: boolean;
}

export interface Fake {
  name: "s3" | "mail" | "payments";
  port: number;
  url: string;
  running(): boolean;
  /** SIGKILL by default (the service vanishes); SIGTERM lets the payment fake write its state first. */
  stop(signal?: NodeJS.Signals): Promise<void>;
  start(): Promise<void>;
}

export interface AppProcess {
  port: number;
  url: string;
  process: ChildProcess;
}

export interface WorkerProcess {
  id: number;
  process: ChildProcess;
  log: string;
}

/** A port nobody listens on right now (the OS picks it). */
export async function sparePort(): Promise<number> {
  return new Promise((resolve, reject) => {
    const srv = net.createServer();
    srv.once("error", reject);
    srv.listen(0, "127.0.0.1", () => {
      const { port } = srv.address() as net.AddressInfo;
      srv.close(() => resolve(port));
    });
  });
}

function exited(child: ChildProcess) {
  return child.exitCode !== null || child.signalCode !== null;
}

async function kill(child: ChildProcess, signal: NodeJS.Signals) {
  if (exited(child)) return;
  const done = new Promise((r) => child.once("exit", r));
  child.kill(signal);
  await done;
}

const FAKE_SCRIPTS = { s3: "services/s3-fake.ts", mail: "services/mail-fake.ts", payments: "services/payment-fake/index.ts" } as const;

async function restartPostgres(downMs: number) {
  const script =
    downMs > 0
      ? `import("./services/postgres.ts").then(async (m) => { m.stop(); await new Promise((r) => setTimeout(r, ${downMs})); m.start(); })`
      : `import("./services/postgres.ts").then((m) => m.restart())`;
  const child = spawn(process.execPath, ["--import", "tsx", "--input-type=module", "-e", script], { cwd: root, stdio: ["ignore", "ignore", "inherit"] });
  const code = await new Promise<number | null>((r) => child.once("exit", r));
  if (code !== 0) throw new Error(`restarting PostgreSQL failed (exit ${code})`);
}

export async function startStack(opts: StackOptions) {
  if (!fs.existsSync(path.join(root, "build/server/index.js"))) {
    throw new Error("The app is not built; run `npx react-router build` (npm test builds it first).");
  }
  const name = opts.name.replace(/[^a-z0-9_]/gi, "_").toLowerCase();
  fs.mkdirSync(logDir, { recursive: true });
  const fakeDir = path.join(dataDir, "system", name);
  fs.rmSync(fakeDir, { recursive: true, force: true });
  fs.mkdirSync(fakeDir, { recursive: true });
  const logFile = (what: string) => fs.openSync(path.join(logDir, `system-${name}-${what}.log`), "w");

  const appPorts = await Promise.all(Array.from({ length: opts.apps ?? 1 }, sparePort));
  const [s3Port, mailPort, paymentsPort] = [await sparePort(), await sparePort(), await sparePort()];
  const db = await cloneTemplate(`diffractory_sys_${name}`);
  const origins = appPorts.flatMap((p) => [`http://127.0.0.1:${p}`, `http://localhost:${p}`]);

  // Every process of the stack points at the stack's own fakes.
  const baseEnv: NodeJS.ProcessEnv = {
    ...process.env,
    NODE_ENV: "production",
    DIFFRACTORY_LOCAL: "1",
    DATABASE_URL: db.url,
    APP_URL: `http://127.0.0.1:${appPorts[0]}`,
    S3_FAKE_PORT: String(s3Port),
    S3_ENDPOINT: `http://127.0.0.1:${s3Port}`,
    MAIL_FAKE_PORT: String(mailPort),
    RESEND_BASE_URL: `http://127.0.0.1:${mailPort}`,
    PAYMENTS_FAKE_PORT: String(paymentsPort),
    STRIPE_API_HOST: "127.0.0.1",
    STRIPE_API_PORT: String(paymentsPort),
    STRIPE_API_PROTOCOL: "http",
    ...opts.env,
  };
  const fakeEnv: Record<Fake["name"], NodeJS.ProcessEnv> = {
    s3: { ...baseEnv, S3_FAKE_DIR: path.join(fakeDir, "s3"), S3_FAKE_ORIGINS: origins.join(",") },
    mail: { ...baseEnv, MAIL_FAKE_FILE: path.join(fakeDir, "mail.json") },
    payments: {
      ...baseEnv,
      PAYMENTS_FAKE_STATE_FILE: path.join(fakeDir, "payments.json"),
      PAYMENTS_WEBHOOK_URLS: appPorts.map((p) => `http://127.0.0.1:${p}/api/webhooks/payments`).join(","),
    },
  };

  const children = new Set<ChildProcess>();
  function spawnTracked(script: string, env: NodeJS.ProcessEnv, log: number) {
    const child = spawn(process.execPath, ["--import", "tsx", script], { cwd: root, env, stdio: ["ignore", "pipe", log] });
    children.add(child);
    child.once("exit", () => children.delete(child));
    return child;
  }

  function makeFake(fakeName: Fake["name"], port: number): Fake {
    let child: ChildProcess | null = null;
    const log = logFile(fakeName);
    return {
      name: fakeName,
      port,
      url: `http://127.0.0.1:${port}`,
      running: () => child !== null && !exited(child),
      async start() {
        if (child && !exited(child)) return;
        child = spawnTracked(FAKE_SCRIPTS[fakeName], fakeEnv[fakeName], log);
        child.stdout?.on("data", (d) => fs.writeSync(log, d));
        await waitForPort(port, `the ${fakeName} fake`);
      },
      async stop(signal: NodeJS.Signals = "SIGKILL") {
        if (!child) return;
        await kill(child, signal);
        child = null;
        // The port is free again once the kernel has closed the listening socket.
        const until = Date.now() + 5000;
        while ((await portOpen(port)) && Date.now() < until) await new Promise((r) => setTimeout(r, 50));
      },
    };
  }

  const fakes = { s3: makeFake("s3", s3Port), mail: makeFake("mail", mailPort), payments: makeFake("payments", paymentsPort) };
  const apps: AppProcess[] = [];
  const workers: WorkerProcess[] = [];
  let workerCount = 0;

  async function startApp(port?: number): Promise<AppProcess> {
    const p = port ?? (await sparePort());
    const env = { ...baseEnv, PORT: String(p) };
    const child = spawnTracked("server/main.ts", env, logFile(`app-${p}`));
    const log = fs.openSync(path.join(logDir, `system-${name}-app-${p}.out.log`), "w");
    child.stdout?.on("data", (d) => fs.writeSync(log, d));
    await waitForPort(p, "the app under test", 60_000);
    const app = { port: p, url: `http://127.0.0.1:${p}`, process: child };
    apps.push(app);
    return app;
  }

  async function stopApp(app: AppProcess) {
    await kill(app.process, "SIGTERM");
    apps.splice(apps.indexOf(app), 1);
  }

  async function startWorker(): Promise<WorkerProcess> {
    const id = ++workerCount;
    const logPath = path.join(logDir, `system-${name}-worker-${id}.log`);
    const log = fs.openSync(logPath, "w");
    const child = spawnTracked("server/worker.ts", { ...baseEnv, PORT: String(appPorts[0]) }, log);
    await new Promise<void>((resolve, reject) => {
      let seen = "";
      const timer = setTimeout(() => reject(new Error(`worker ${id} did not start within 60 s; see ${logPath}`)), 60_000);
      child.stdout!.on("data", (d: Buffer) => {
        fs.writeSync(log, d);
        seen += d.toString();
        if (seen.includes("worker is running")) {
          clearTimeout(timer);
          resolve();
        }
      });
      child.once("exit", (code) => {
        clearTimeout(timer);
        reject(new Error(`worker ${id} exited (${code}) while starting; see ${logPath}`));
      });
    });
    const w = { id, process: child, log: logPath };
    workers.push(w);
    return w;
  }

  async function killWorker(w: WorkerProcess, signal: NodeJS.Signals = "SIGKILL") {
    await kill(w.process, signal);
    workers.splice(workers.indexOf(w), 1);
  }

  async function sql<T extends pg.QueryResultRow = Record<string, unknown>>(text: string, values?: unknown[]): Promise<T[]> {
    const client = new pg.Client({ connectionString: db.url });
    await client.connect();
    try {
      return (await client.query<T>(text, values)).rows;
    } finally {
      await client.end();
    }
  }

  async function stop() {
    // SIGTERM, then at most 10 s of grace: once, with the cluster restarted during teardown, a child never
    // exited on SIGTERM and the hook hung until its 180 s timeout.
    const grace = () => new Promise((r) => setTimeout(r, 10_000).unref());
    await Promise.all([...children].map((c) => Promise.race([kill(c, "SIGTERM"), grace()]).catch(() => undefined)));
    // Anything that ignored SIGTERM within the grace period is killed.
    await Promise.all([...children].map((c) => kill(c, "SIGKILL").catch(() => undefined)));
    await db.drop().catch(() => undefined);
  }

  try {
    await Promise.all(Object.values(fakes).map((f) => f.start()));
    if (opts.seed ?? true) {
      execFileSync(process.execPath, ["--import", "tsx", "scripts/seed-demo.ts"], { cwd: root, env: baseEnv, stdio: ["ignore", "ignore", "inherit"] });
    }
    await Promise.all(appPorts.map((p) => startApp(p)));
    for (let i = 0; i < (opts.workers ?? 1); i++) await startWorker();
  } catch (err) {
    await stop();
    throw err;
  }

  return {
    name,
    get url() {
      return apps[0]?.url ?? `http://127.0.0.1:${appPorts[0]}`;
    },
    apps,
    workers,
    fakes,
    databaseUrl: db.url,
    env: baseEnv,
    sql,
    startApp,
    stopApp,
    startWorker,
    killWorker,
    /**
     * Restarts the shared PostgreSQL cluster (pg_ctl, fast mode: every connection is cut), in a child process
     * so this one keeps running requests meanwhile; `downMs` keeps it stopped that long between stop and start.
     */
    restartPostgres: ({ downMs = 0 } = {}) => restartPostgres(downMs),
    stop,
  };
}

export type Stack = Awaited<ReturnType<typeof startStack>>;
