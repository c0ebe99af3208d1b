// Starts PostgreSQL and the local fakes (S3, e-mail, payments) on loopback; safe to run when they already run.
import { spawn } from "node:child_process";
import fs from "node:fs";
import path from "node:path";
import * as postgres from "./postgres";
import { logDir, root, runDir } from "./paths";
import { isMain, portOpen, waitForPort } from "./process";

export const FAKES = [
  { name: "s3", script: "services/s3-fake.ts", port: Number(process.env.S3_FAKE_PORT ?? 54330) },
  { name: "mail", script: "services/mail-fake.ts", port: Number(process.env.MAIL_FAKE_PORT ?? 54331) },
  { name: "payments", script: "services/payment-fake/index.ts", port: Number(process.env.PAYMENTS_FAKE_PORT ?? 54332) },
] as const;

/** Starts one fake as a detached process that outlives this script; its output goes to .data/logs. */
export async function startFake(fake: (typeof FAKES)[number]) {
  if (await portOpen(fake.port)) return "running";
  fs.mkdirSync(runDir, { recursive: true });
  fs.mkdirSync(logDir, { recursive: true });
  const log = fs.openSync(path.join(logDir, `${fake.name}.log`), "a");
  const child = spawn(process.execPath, ["--import", "tsx", path.join(root, fake.script)], {
    cwd: root,
    detached: true,
    stdio: ["ignore", log, log],
    env: process.env,
  });
  child.unref();
  fs.writeFileSync(path.join(runDir, `${fake.name}.pid`), String(child.pid));
  await waitForPort(fake.port, `the ${fake.name} fake`);
  return "started";
}

export async function servicesUp({ quiet = false } = {}) {
  const t0 = Date.now();
  const pg = postgres.start();
  const states = await Promise.all(FAKES.map(startFake));
  if (!quiet) {
    console.log(`postgres ${pg.created ? "initialised and " : ""}running on 127.0.0.1:${process.env.PG_PORT ?? 54329}`);
    FAKES.forEach((f, i) => console.log(`${f.name} fake ${states[i]} on 127.0.0.1:${f.port}`));
    console.log(`services up in ${((Date.now() - t0) / 1000).toFixed(1)} s`);
  }
}

if (isMain(import.meta.url)) {
  await servicesUp();
}
