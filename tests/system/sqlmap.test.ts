// An outside SQL-injection scanner against a whole stack (tests/system/stack.ts): Debian's sqlmap tries every
// filter of the directory API (GET /api/labs) and every field of the sign-in form (POST /sign-in) on 127.0.0.1,
// and must report nothing injectable. Each run is bounded (techniques, level, risk, delays, timeouts and a
// wall-clock limit) and stays offline: sqlmap talks to the stack only, with no update check, no proxy from the
// environment and no prompt answered (so never its "report this crash online" question). The traffic sqlmap
// logged is read back, so the verdict cannot come from a scan that sent nothing, was refused by the same-origin
// rule or the sign-in limit, or made the app fail (no 5xx, per the bad-input rule).
// Skipped only when sqlmap is not installed: `services/bootstrap.sh --test` installs it.
import { spawn, spawnSync } from "node:child_process";
import fs from "node:fs";
import http from "node:http";
import type net from "node:net";
import path from "node:path";
import pg from "pg";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { logDir } from "../../services/paths";
import { startStack, type Stack } from "./stack";

const SQLMAP = (spawnSync("sh", ["-c", "command -v sqlmap"], { encoding: "utf8" }).stdout ?? "").trim();
if (!SQLMAP) console.warn("tests/system/sqlmap.test.ts is skipped: sqlmap is not installed (services/bootstrap.sh --test installs Debian's sqlmap).");

/**
 * Longest each sqlmap run may take before it is killed and its test fails (a cut-short scan proves nothing).
 * Measured on 2 cores: the runs took about 8 / 18 / 25 s with the machine lightly loaded and 12 / 34 / 60 s with it
 * five times oversubscribed; the whole file (stack start and stop included) about 1.5 and 3.2 minutes.
 */
const LIMIT_MS = { control: 30_000, directory: 75_000, signIn: 100_000 };

// What every run shares. Level 2 / risk 1 are sqlmap's thorough-but-harmless payload sets (risk 1 has no
// OR-based or heavy queries that could change data); --dbms narrows payloads to PostgreSQL, the app's only
// database; 1 s delays keep the time-based tests short on loopback, where a normal answer takes milliseconds.
const COMMON = [
  "--batch",
  "--disable-coloring",
  "--technique=BEUSTQ",
  "--dbms=PostgreSQL",
  "--level=2",
  "--risk=1",
  "--time-sec=1",
  "--timeout=10",
  "--retries=1",
  // No WAF probe (an extra parameter the directory refuses anyway); the session cookie of a successful
  // sign-in is not reused (the scan would otherwise meet "already signed in" redirects).
  "--skip-waf",
  "--drop-set-cookie",
  // Standard input is not a terminal here; unread, sqlmap would take it for a list of targets.
  "--ignore-stdin",
];

// Each run's output, log and traffic stay here for a look after a failure (replaced by the next run).
const work = path.join(logDir, "system-sqlmap");
let stack: Stack;

interface Exchange {
  id: number;
  method: string;
  target: string;
  body: string;
  status: number | null;
  answer: string;
}

interface Scan {
  output: string;
  exchanges: Exchange[];
  injectionLog: string;
  ms: number;
}

/** The requests sqlmap logged (-t), each with its answer's status (null: none) and text. */
function readTraffic(file: string): Exchange[] {
  const text = fs.existsSync(file) ? fs.readFileSync(file, "utf8") : "";
  const exchanges: Exchange[] = [];
  // Each exchange is the request, the answer, then a line of 76 '#'.
  for (const chunk of text.split(/\r?\n#{76}\r?\n/)) {
    const req = chunk.match(/HTTP request \[#(\d+)\]:\r?\n(\S+) (\S+) HTTP\/[\d.]+\r?\n([\s\S]*?)(?:\r?\nHTTP response \[#\d+\] \((\d{3})[^\n]*\n([\s\S]*))?$/);
    if (!req) continue;
    const [, id, method, target, head, status, answer] = req;
    exchanges.push({
      id: Number(id),
      method,
      target,
      body: head.split(/\r?\n\r?\n/)[1]?.trim() ?? "",
      status: status ? Number(status) : null,
      answer: answer ?? "",
    });
  }
  return exchanges;
}

/** One bounded sqlmap run with its own output folder; resolves with what it printed and the traffic it logged. */
async function sqlmap(name: string, limitMs: number, args: string[]): Promise<Scan> {
  const dir = path.join(work, name);
  fs.mkdirSync(dir, { recursive: true });
  const traffic = path.join(dir, "traffic.txt");
  const env: NodeJS.ProcessEnv = { PATH: process.env.PATH, LANG: "C.UTF-8", HOME: dir };
  const started = Date.now();
  const child = spawn(SQLMAP, [...COMMON, ...args, `--output-dir=${path.join(dir, "out")}`, "-t", traffic], {
    env,
    stdio: ["ignore", "pipe", "pipe"],
  });
  let output = "";
  child.stdout.on("data", (d) => (output += d));
  child.stderr.on("data", (d) => (output += d));
  let killed = false;
  const timer = setTimeout(() => {
    killed = true;
    child.kill("SIGKILL");
  }, limitMs);
  const code = await new Promise<number | null>((r) => child.once("exit", r));
  clearTimeout(timer);
  const ms = Date.now() - started;
  fs.writeFileSync(path.join(dir, "sqlmap.out"), output);
  console.log(`sqlmap ${name}: exit ${code} after ${(ms / 1000).toFixed(1)} s; output in ${dir}`);
  expect(killed, `sqlmap ${name} did not finish within ${limitMs / 1000} s; see ${dir}/sqlmap.out`).toBe(false);
  expect(output, `sqlmap ${name} stopped with an error; see ${dir}/sqlmap.out`).not.toMatch(
    /\[CRITICAL\] (?!all tested parameters do not appear to be injectable)/,
  );
  // sqlmap writes each injection point it found to <output-dir>/<host>/log.
  const logFile = path.join(dir, "out", "127.0.0.1", "log");
  const injectionLog = fs.existsSync(logFile) ? fs.readFileSync(logFile, "utf8") : "";
  return { output, exchanges: readTraffic(traffic), injectionLog, ms };
}

/** Nothing injectable: neither sqlmap's verdict lines nor its injection log name a parameter. */
function expectNothingInjectable(scan: Scan) {
  expect(scan.output).not.toMatch(/identified the following injection point|appears to be .* injectable|is vulnerable/i);
  expect(scan.injectionLog.trim(), "sqlmap's injection log").toBe("");
  expect(scan.output).toContain("all tested parameters do not appear to be injectable");
}

/** Each parameter went through sqlmap's tests, from the first to its verdict ("does not seem to be injectable"). */
function expectTested(scan: Scan, place: "GET" | "POST", params: string[]) {
  for (const p of params) {
    expect(scan.output, `sqlmap's verdict on ${place} parameter '${p}'`).toContain(`${place} parameter '${p}' does not seem to be injectable`);
    expect(scan.output).toContain(`testing for SQL injection on ${place} parameter '${p}'`);
  }
}

const statuses = (exchanges: Exchange[]) => {
  const counts: Record<string, number> = {};
  for (const e of exchanges) counts[String(e.status)] = (counts[String(e.status)] ?? 0) + 1;
  return counts;
};

/**
 * The control: the directory's free-text filter written the wrong way, its value pasted into the SQL text, served
 * on 127.0.0.1 from this stack's throwaway database in read-only transactions. The same scan must find it, which
 * shows that these options and this sqlmap can see an injection here at all.
 */
async function startInjectableTwin() {
  const pool = new pg.Pool({ connectionString: stack.databaseUrl, max: 2, options: "-c default_transaction_read_only=on" });
  const server = http.createServer(async (req, res) => {
    const q = new URL(req.url ?? "/", "http://127.0.0.1").searchParams.get("q") ?? "";
    try {
      const result = await pool.query(`select name from organisations where name ilike '%${q}%' order by name`);
      const rows = (Array.isArray(result) ? result : [result]).flatMap((r: pg.QueryResult) => r.rows);
      res.writeHead(200, { "content-type": "application/json" }).end(JSON.stringify({ labs: rows }));
    } catch {
      res.writeHead(400, { "content-type": "application/json" }).end(JSON.stringify({ error: "Bad query." }));
    }
  });
  await new Promise<void>((r) => server.listen(0, "127.0.0.1", r));
  const { port } = server.address() as net.AddressInfo;
  return {
    url: `http://127.0.0.1:${port}`,
    stop: async () => {
      server.closeAllConnections();
      await new Promise((r) => server.close(r));
      await pool.end();
    },
  };
}

describe.skipIf(!SQLMAP)(`sqlmap finds nothing injectable${SQLMAP ? "" : " (skipped: sqlmap is not installed)"}`, () => {
  beforeAll(async () => {
    fs.rmSync(work, { recursive: true, force: true });
    // No caches: every payload reaches PostgreSQL, and a repeated URL cannot hide a time-based delay.
    stack = await startStack({ name: "sqlmap", workers: 0, env: { DIRECTORY_CACHE_MS: "0", PUBLIC_CACHE_MS: "0" } });
    // The scan sends thousands of failed sign-ins from one address; counted, they would turn every later answer
    // into the same 429 and blind the scan. Backdated out of the limit's window on insert, they still go through
    // the same statement but never add up. Only this stack's throwaway database is changed.
    await stack.sql(`create function sqlmap_backdate_attempt() returns trigger language plpgsql as $$
      begin new.at := now() - interval '1 year'; return new; end $$`);
    await stack.sql(`create trigger sqlmap_backdate_attempt before insert on sign_in_attempts
      for each row execute function sqlmap_backdate_attempt()`);
  });

  afterAll(async () => {
    await stack?.stop();
  });

  // Every filter with a value that keeps labs in the answer, so a payload that changed the query would show.
  const FILTERS = {
    technique: "powder_reflection",
    source: "Cu",
    dMin: "2",
    temperatureK: "300",
    hazard: "GHS07",
    maxPrice: "500",
    turnaroundDays: "30",
    q: "a",
    page: "1",
  };

  it("control: the same scan finds the free-text filter when its value is pasted into the SQL", { timeout: LIMIT_MS.control + 10_000 }, async () => {
    const twin = await startInjectableTwin();
    try {
      const scan = await sqlmap("control", LIMIT_MS.control, ["-u", `${twin.url}/labs?q=a`]);
      expect(scan.output).toContain("sqlmap identified the following injection point");
      expect(scan.injectionLog, "sqlmap's injection log").toContain("Parameter: q (GET)");
    } finally {
      await twin.stop();
    }
  });

  it("the directory API's filters (GET /api/labs)", { timeout: LIMIT_MS.directory + 10_000 }, async () => {
    const url = `${stack.url}/api/labs?${new URLSearchParams(FILTERS)}`;
    const base = await fetch(url);
    expect(base.status).toBe(200);
    const { labs } = (await base.json()) as { labs: unknown[] };
    expect(labs.length, "labs matching the scan's base query").toBeGreaterThan(0);

    const scan = await sqlmap("directory", LIMIT_MS.directory, ["-u", url]);
    expectNothingInjectable(scan);
    expectTested(scan, "GET", Object.keys(FILTERS));
    const counts = statuses(scan.exchanges);
    console.log(`sqlmap directory: ${scan.exchanges.length} requests, answers by status ${JSON.stringify(counts)}`);
    expect(scan.exchanges.length).toBeGreaterThan(500);
    expect(scan.exchanges.every((e) => e.method === "GET" && e.target.startsWith("/api/labs?"))).toBe(true);
    // Every request was answered, none with a server error; free text (q) went through to PostgreSQL (200).
    expect(counts.null ?? 0, "requests without an answer").toBe(0);
    expect(Object.keys(counts).filter((s) => s.startsWith("5"))).toEqual([]);
    const payloadsThrough = scan.exchanges.filter((e) => e.status === 200 && /[?&]q=a[^&]*(%27|'|%20|\+)/i.test(e.target));
    expect(payloadsThrough.length, "payloads in q answered from the database").toBeGreaterThan(50);
  });

  it("the sign-in form (POST /sign-in)", { timeout: LIMIT_MS.signIn + 10_000 }, async () => {
    // A known account with a wrong password: the answer is the form with its message, as for an attacker.
    const fields = { email: "owner@halvorsen.example", password: "not-the-password", redirectTo: "/" };
    // The page is mostly markup with a fresh nonce each time; its text (the form and its message) is compared.
    const scan = await sqlmap("sign-in", LIMIT_MS.signIn, [
      "-u",
      `${stack.url}/sign-in`,
      "--data",
      new URLSearchParams(fields).toString(),
      "--headers",
      `Origin: ${stack.url}`,
      "--text-only",
      // redirectTo is only checked as a path on this site and never reaches the database; each request here costs
      // an argon2 verification, so the scan's time goes to the two fields the action checks against the database.
      "-p",
      "email,password",
    ]);
    expectNothingInjectable(scan);
    expectTested(scan, "POST", ["email", "password"]);
    const counts = statuses(scan.exchanges);
    console.log(`sqlmap sign-in: ${scan.exchanges.length} requests, answers by status ${JSON.stringify(counts)}`);
    expect(scan.exchanges.length).toBeGreaterThan(250);
    expect(scan.exchanges.every((e) => e.method === "POST" && e.target === "/sign-in")).toBe(true);
    expect(counts.null ?? 0, "requests without an answer").toBe(0);
    expect(Object.keys(counts).filter((s) => s.startsWith("5"))).toEqual([]);
    // Neither refused as cross-site (403) nor blinded by the sign-in limit (429): the payloads met the action.
    expect(counts["403"] ?? 0).toBe(0);
    expect(counts["429"] ?? 0).toBe(0);
    // Payloads in the password went through the form's checks to the account lookup ("… is not right").
    const wrong = scan.exchanges.filter(
      (e) => new URLSearchParams(e.body).get("password") !== fields.password && e.answer.includes("The e-mail or password is not right."),
    );
    expect(wrong.length, "password payloads answered by the account lookup").toBeGreaterThan(100);
  });
});
