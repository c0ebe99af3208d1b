// npm run demo: starts the services, migrates, seeds the demo scenario, builds and serves the app.
// npm run demo:scale (`--scale`): two app servers and two workers behind a round-robin proxy on the same port.
import { spawn, spawnSync, type ChildProcess } from "node:child_process";
import { DEMO_ADMIN_TOTP_SECRET } from "../app/demo/demo-secrets";
import { root } from "../services/paths";
import { servicesUp } from "../services/up";
import { migrateDatabase } from "../server/migrate";
import { databaseUrl } from "../services/postgres";
import { waitForPort } from "../services/process";
import { startProxy } from "../services/proxy";

const t0 = Date.now();
const port = Number(process.env.PORT ?? 3000);
const url = process.env.DATABASE_URL ?? databaseUrl("diffractory");
const scale = process.argv.includes("--scale");

await servicesUp();
await migrateDatabase(url);
console.log("migrations applied");
const env = { ...process.env, DATABASE_URL: url };
for (const [cmd, args] of [
  [process.execPath, ["--import", "tsx", "scripts/seed-demo.ts"]],
  ["npx", ["react-router", "build"]],
] as const) {
  const r = spawnSync(cmd, [...args], { cwd: root, stdio: ["ignore", "inherit", "inherit"], env });
  if (r.status !== 0) process.exit(r.status ?? 1);
}

// With --scale the app servers sit on the next ports and the proxy takes the public one.
const appPorts = scale ? [port + 1, port + 2] : [port];
const publicUrl = `http://127.0.0.1:${port}`;
const children: ChildProcess[] = [];
const start = (script: string, extra: NodeJS.ProcessEnv = {}) => {
  const child = spawn(process.execPath, ["--import", "tsx", script], { cwd: root, stdio: "inherit", env: { ...env, ...extra } });
  children.push(child);
  return child;
};
const apps = appPorts.map((p) =>
  start("server/main.ts", {
    NODE_ENV: "production",
    DIFFRACTORY_LOCAL: "1",
    PORT: String(p),
    APP_URL: publicUrl,
    ...(scale ? { TRUST_PROXY: "loopback" } : {}),
  }),
);
for (let i = 0; i < (scale ? 2 : 1); i++) start("server/worker.ts");
const stopAll = (signal: NodeJS.Signals) => children.forEach((c) => c.exitCode === null && c.kill(signal));
for (const s of ["SIGINT", "SIGTERM"] as const) process.on(s, () => stopAll(s));
for (const app of apps) {
  app.on("exit", (code) => {
    stopAll("SIGTERM");
    process.exit(code ?? 0);
  });
}
for (const p of appPorts) await waitForPort(p, `the app on ${p}`, 60_000);
if (scale) {
  await startProxy({ port, upstreams: appPorts.map((p) => `http://127.0.0.1:${p}`) });
  console.log(`round-robin proxy on ${publicUrl} → app servers on ${appPorts.join(" and ")}, two workers`);
}

const tour = spawnSync(process.execPath, ["--import", "tsx", "scripts/demo-tour.ts"], { cwd: root, env: { ...env, APP_URL: publicUrl }, encoding: "utf8" });
console.log(`
Diffractory demo is ready in ${((Date.now() - t0) / 1000).toFixed(0)} s: ${publicUrl}/sign-in
${tour.status === 0 ? tour.stdout.trim() : `(the tour could not be printed: ${tour.stderr.trim().split("\n").pop()})`}
The admin's TOTP key is ${DEMO_ADMIN_TOTP_SECRET} (RFC 6238, 6 digits, 30 s) for an authenticator app.
Stop with Ctrl-C; \`npm run services:down\` stops PostgreSQL and the fakes.
`);
