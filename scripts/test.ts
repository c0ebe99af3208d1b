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

// Two runs: every project but "system" first, then "system" alone, since its fault tests restart the
// PostgreSQL cluster the other projects' databases live on. Arguments naming a project run as given, once.
const args = process.argv.slice(2);
const namesProject = args.some((a) => a === "--project" || a.startsWith("--project="));
const runs: { name: string; args: string[] }[] = namesProject
  ? [{ name: "chosen", args }]
  : [
      { name: "main", args: ["--project", "!system", ...(args.length ? ["--passWithNoTests"] : []), ...args] },
      { name: "system", args: ["--project", "system", "--passWithNoTests", ...args] },
    ];

type Report = { numPassedTests: number; numFailedTests: number; numPendingTests: number; numTodoTests: number };
const tally = { passed: 0, failed: 0, skipped: 0 };
let status = 0;
for (const r of runs) {
  const report = path.join(root, "test-results", r.name === "system" ? "vitest-system.json" : "vitest.json");
  fs.mkdirSync(path.dirname(report), { recursive: true });
  fs.rmSync(report, { force: true });
  const code = run("npx", ["vitest", "run", "--reporter=default", "--reporter=json", `--outputFile.json=${report}`, ...r.args]);
  if (code !== 0) status = code;
  if (fs.existsSync(report)) {
    const j = JSON.parse(fs.readFileSync(report, "utf8")) as Report;
    tally.passed += j.numPassedTests;
    tally.failed += j.numFailedTests;
    tally.skipped += j.numPendingTests + j.numTodoTests;
  } else if (code !== 0) {
    console.error(`The ${r.name} test run ended without a report.`);
  }
}

console.log(`\nnpm test finished in ${((Date.now() - t0) / 1000).toFixed(0)} s`);
console.log(`${tally.passed} passed, ${tally.failed} failed, ${tally.skipped} skipped`);
process.exit(status);
