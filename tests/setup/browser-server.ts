// Starts the built app on a test port with a freshly seeded database for the browser tests, and stops it after.
import { spawn, execFileSync, type ChildProcess } from "node:child_process";
import fs from "node:fs";
import path from "node:path";
import { cloneTemplate } from "../../services/test-db";
import { waitForPort } from "../../services/process";
import { root } from "../../services/paths";

export const BROWSER_APP_PORT = Number(process.env.TEST_APP_PORT ?? 3100);
let server: ChildProcess | undefined;
let worker: ChildProcess | undefined;

export async function setup() {
  if (!fs.existsSync(path.join(root, "build/server/index.js"))) {
    throw new Error("The app is not built; run the tests with `npm test`, which builds it first.");
  }
  const db = await cloneTemplate("diffractory_browser");
  const env = {
    ...process.env,
    DATABASE_URL: db.url,
    NODE_ENV: "production",
    DIFFRACTORY_LOCAL: "1",
    PORT: String(BROWSER_APP_PORT),
    APP_URL: `http://127.0.0.1:${BROWSER_APP_PORT}`,
  };
  execFileSync(process.execPath, ["--import", "tsx", "scripts/seed-demo.ts"], { cwd: root, env, stdio: "inherit" });
  const log = fs.openSync(path.join(root, ".data/logs/browser-app.log"), "w");
  server = spawn(process.execPath, ["--import", "tsx", "server/main.ts"], { cwd: root, env, stdio: ["ignore", log, log] });
  const workerLog = fs.openSync(path.join(root, ".data/logs/browser-worker.log"), "w");
  worker = spawn(process.execPath, ["--import", "tsx", "server/worker.ts"], { cwd: root, env, stdio: ["ignore", workerLog, workerLog] });
  await waitForPort(BROWSER_APP_PORT, "the app under test");
}

export async function teardown() {
  for (const child of [server, worker]) {
    if (child && child.exitCode === null) {
      child.kill("SIGTERM");
      await new Promise((r) => child.once("exit", r));
    }
  }
}
