// Where a page's CPU time goes: reads the --cpu-prof profiles bench/cpu.ts wrote with CPU_PROF=dir (one folder
// per page) and prints, per page, the ten functions with the most self time. Only the samples taken while the
// page was measured count (window.json beside each profile, in the monotonic clock the profiles use).
// `npx tsx bench/cpu-profile.ts dir [top]`
import fs from "node:fs";
import path from "node:path";

interface ProfileNode {
  id: number;
  callFrame: { functionName: string; url: string; lineNumber: number };
}
interface Profile {
  nodes: ProfileNode[];
  startTime: number;
  samples: number[];
  timeDeltas: number[];
}

/** Shortens a module URL to the part people recognise: the package or the project file. */
function where(url: string) {
  if (!url) return "";
  const nm = url.lastIndexOf("node_modules/");
  if (nm >= 0)
    return url
      .slice(nm + 13)
      .split("/")
      .slice(0, url.slice(nm + 13).startsWith("@") ? 2 : 1)
      .join("/");
  const b = url.indexOf("/build/");
  if (b >= 0) return url.slice(b + 1);
  return url.replace(/^.*\/(app|server|bench)\//, "$1/").replace(/^node:/, "node:");
}

export function topSelfTime(profile: Profile, window: { from: number; to: number } | null, top = 10) {
  const byId = new Map(profile.nodes.map((n) => [n.id, n]));
  const self = new Map<string, number>();
  let t = profile.startTime;
  let total = 0;
  for (let i = 0; i < profile.samples.length; i++) {
    t += profile.timeDeltas[i];
    const dt = profile.timeDeltas[i + 1] ?? 0;
    if (window && (t < window.from || t > window.to)) continue;
    const n = byId.get(profile.samples[i])!;
    const name = n.callFrame.functionName || "(anonymous)";
    if (name === "(idle)") continue;
    const key = `${name}  ${where(n.callFrame.url)}${n.callFrame.url ? `:${n.callFrame.lineNumber + 1}` : ""}`;
    self.set(key, (self.get(key) ?? 0) + dt);
    total += dt;
  }
  const rows = [...self.entries()].sort((a, b) => b[1] - a[1]).slice(0, top);
  return { totalMs: total / 1000, rows: rows.map(([fn, us]) => ({ fn, ms: us / 1000, share: us / total })) };
}

const dir = process.argv[2];
if (!dir) {
  console.error("Give the folder CPU_PROF wrote to.");
  process.exit(1);
}
const top = Number(process.argv[3] ?? 10);
for (const page of fs.readdirSync(dir).sort()) {
  const folder = path.join(dir, page);
  if (!fs.statSync(folder).isDirectory()) continue;
  const file = fs.readdirSync(folder).find((f) => f.endsWith(".cpuprofile"));
  if (!file) continue;
  const windowFile = path.join(folder, "window.json");
  const window = fs.existsSync(windowFile) ? (JSON.parse(fs.readFileSync(windowFile, "utf8")) as { from: number; to: number; views: number }) : null;
  const profile = JSON.parse(fs.readFileSync(path.join(folder, file), "utf8")) as Profile;
  const r = topSelfTime(profile, window, top);
  const views = (window as { views?: number } | null)?.views;
  console.log(`\n${page}: ${r.totalMs.toFixed(0)} ms sampled${views ? ` over ${views} views (${(r.totalMs / views).toFixed(2)} ms/view)` : ""}`);
  for (const x of r.rows) console.log(`  ${(100 * x.share).toFixed(1).padStart(5)} %  ${x.ms.toFixed(0).padStart(6)} ms  ${x.fn}`);
}
