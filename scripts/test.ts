// npm test: starts the services, builds the template database and the app, runs every test, prints the tally.
import { spawnSync } from "node:child_process";
import fs from "node:fs";
import path from "node:path";
import { root } from "../services/paths";
import { servicesUp } from "../services/up";
import { buildTemplate } from "../services/test-db";

const t0 = Date.now();
function run(cmd: string, args: string[], env: NodeJS.ProcessEnv = process.env) {
  const r = spawnSync(cmd, args, { cwd: root, stdio: "inherit", env });
  return r.status ?? 1;
}

await servicesUp();
await buildTemplate();
console.log("template database built from drizzle/");
if (run("npx", ["react-router", "typegen"]) !== 0 || run("npx", ["react-router", "build"]) !== 0) {
  console.error("The app did not build.");
  process.exit(1);
}

const report = path.join(root, "test-results", "vitest.json");
fs.mkdirSync(path.dirname(report), { recursive: true });
fs.rmSync(report, { force: true });
const status = run("npx", ["vitest", "run", "--reporter=default", "--reporter=json", `--outputFile.json=${report}`, ...process.argv.slice(2)]);

if (fs.existsSync(report)) {
  const r = JSON.parse(fs.readFileSync(report, "utf8")) as { numPassedTests: number; numFailedTests: number; numPendingTests: number; numTodoTests: number };
  console.log(`\nnpm test finished in ${((Date.now() - t0) / 1000).toFixed(0)} s`);
  console.log(`${r.numPassedTests} passed, ${r.numFailedTests} failed, ${r.numPendingTests + r.numTodoTests} skipped`);
}
process.exit(status);
