// The production build the benches run (build/), rebuilt when app/ or server/ holds a newer file.
import { execFileSync } from "node:child_process";
import fs from "node:fs";
import path from "node:path";
import { root } from "../services/paths";

function newestMtime(dir: string): number {
  let newest = 0;
  for (const entry of fs.readdirSync(dir, { withFileTypes: true })) {
    const p = path.join(dir, entry.name);
    newest = Math.max(newest, entry.isDirectory() ? newestMtime(p) : fs.statSync(p).mtimeMs);
  }
  return newest;
}

export function buildIfNeeded(at = root) {
  const built = path.join(at, "build/server/index.js");
  const sources = Math.max(newestMtime(path.join(at, "app")), newestMtime(path.join(at, "server")));
  if (fs.existsSync(built) && fs.statSync(built).mtimeMs >= sources) return;
  console.log("building the app (sources are newer than build/)…");
  execFileSync("npx", ["react-router", "build"], { cwd: at, stdio: "ignore" });
}
