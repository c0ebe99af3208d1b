// npm run demo: starts the services, migrates, seeds the demo scenario, builds and serves the app.
import { spawn, spawnSync } from "node:child_process";
import { root } from "../services/paths";
import { servicesUp } from "../services/up";
import { migrateDatabase } from "../services/migrate";
import { databaseUrl } from "../services/postgres";
import { waitForPort } from "../services/process";

const t0 = Date.now();
const port = Number(process.env.PORT ?? 3000);
const url = process.env.DATABASE_URL ?? databaseUrl("diffractory");

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

const app = spawn(process.execPath, ["--import", "tsx", "server/main.ts"], {
  cwd: root,
  stdio: "inherit",
  env: { ...env, NODE_ENV: "production", DIFFRACTORY_LOCAL: "1", PORT: String(port) },
});
const worker = spawn(process.execPath, ["--import", "tsx", "services/worker.ts"], { cwd: root, stdio: "inherit", env });
for (const s of ["SIGINT", "SIGTERM"] as const)
  process.on(s, () => {
    app.kill(s);
    worker.kill(s);
  });
app.on("exit", (code) => {
  worker.kill("SIGTERM");
  process.exit(code ?? 0);
});
await waitForPort(port, "the app", 60_000);

console.log(`
Diffractory demo is ready in ${((Date.now() - t0) / 1000).toFixed(0)} s: http://127.0.0.1:${port}/sign-in
Every demo account has the password  diffractory-demo
  owner@halvorsen.example      client owner, Halvorsen Cathode Works
  owner@pinecrest.example      client owner, Pinecrest Solid Forms
  lab@graniteridge.example     lab manager, Granite Ridge Characterisation
  admin@diffractory.example    platform admin
Stop with Ctrl-C; \`npm run services:down\` stops PostgreSQL and the fakes.
`);
