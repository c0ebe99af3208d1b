// The load benchmark's yardstick: a bare node:http server with a pg pool that runs the SQL the app ran
// (captured from the app's own query log, text and parameters unchanged) and answers with little else.
// Started by bench/load.ts with BARE_SQL (the captured queries), DATABASE_URL and PORT; by bench/cpu.ts with
// BARE_PAGES instead: per page path, the queries the app ran for it, run in turn, every row in a plain table.
import { createHash, randomBytes } from "node:crypto";
import fs from "node:fs";
import http from "node:http";
import { verify } from "@node-rs/argon2";
import pg from "pg";
import { directoryLab, type DirectoryRow } from "../app/models/labs/directory.server";

export interface CapturedQuery {
  query: string;
  params: unknown[];
}
export interface BareSql {
  /** GET /api/labs?… : the directory query(ies) the app ran for the benchmark's filter. */
  directory: CapturedQuery[];
  /** GET /client/requests: the session, membership and list queries, once each. */
  requestsPage: CapturedQuery[];
  /** POST /sign-in: the user lookup, then the session insert. */
  userLookup: CapturedQuery;
  sessionInsert: CapturedQuery;
}

/** bench/cpu.ts: per page path (without its query string), the queries the app ran for that page. */
export interface BarePages {
  pages: Record<string, CapturedQuery[]>;
}

const sqlSet = (process.env.BARE_SQL ? JSON.parse(fs.readFileSync(process.env.BARE_SQL, "utf8")) : {}) as BareSql;
const pageSql = (process.env.BARE_PAGES ? JSON.parse(fs.readFileSync(process.env.BARE_PAGES, "utf8")) : { pages: {} }) as BarePages;
const pool = new pg.Pool({ connectionString: process.env.DATABASE_URL, max: Number(process.env.PG_POOL_MAX ?? 10) });
const escapeHtml = (s: unknown) => String(s ?? "").replace(/[&<>"]/g, (c) => `&#${c.charCodeAt(0)};`);

async function directory(res: http.ServerResponse) {
  let rows: Record<string, unknown>[] = [];
  for (const q of sqlSet.directory) rows = (await pool.query(q.query, q.params)).rows;
  const body = JSON.stringify({
    page: 1,
    total: rows.length ? Number(rows[0].total) : 0,
    labs: rows.map((r) => directoryLab(r as unknown as DirectoryRow)),
  });
  res.writeHead(200, { "Content-Type": "application/json; charset=utf-8", "Cache-Control": "public, max-age=30" });
  res.end(body);
}

async function requestsPage(req: http.IncomingMessage, res: http.ServerResponse) {
  // The token's hash is computed as the app does; the captured parameters already hold it.
  createHash("sha256")
    .update(req.headers.cookie ?? "")
    .digest("hex");
  let rows: Record<string, unknown>[] = [];
  for (const q of sqlSet.requestsPage) rows = (await pool.query(q.query, q.params)).rows;
  const body = `<!DOCTYPE html><html lang="en"><head><meta charset="utf-8"><title>Requests</title></head><body><main><h1>Requests</h1><table>${rows
    .map(
      (r) =>
        `<tr><td><a href="/client/requests/${escapeHtml(r.id)}">${escapeHtml(r.title)}</a></td><td>${escapeHtml(r.state)}</td><td>${escapeHtml(r.samples)}</td><td>${escapeHtml(r.quotes)}</td></tr>`,
    )
    .join("")}</table></main></body></html>`;
  res.writeHead(200, { "Content-Type": "text/html; charset=utf-8" });
  res.end(body);
}

/** Any page of BARE_PAGES: its queries in turn, then every row of every query as a table (JSON for /api/). */
async function page(path: string, res: http.ServerResponse) {
  const results: Record<string, unknown>[][] = [];
  for (const q of pageSql.pages[path]) results.push((await pool.query(q.query, q.params)).rows);
  if (path.startsWith("/api/")) {
    res.writeHead(200, { "Content-Type": "application/json; charset=utf-8" });
    return res.end(JSON.stringify(results));
  }
  const body = `<!DOCTYPE html><html lang="en"><head><meta charset="utf-8"><title>Page</title></head><body><main>${results
    .map(
      (rows) =>
        `<table>${rows
          .map(
            (r) =>
              `<tr>${Object.values(r)
                .map((v) => `<td>${escapeHtml(typeof v === "object" && v !== null && !(v instanceof Date) ? JSON.stringify(v) : v)}</td>`)
                .join("")}</tr>`,
          )
          .join("")}</table>`,
    )
    .join("")}</main></body></html>`;
  res.writeHead(200, { "Content-Type": "text/html; charset=utf-8" });
  res.end(body);
}

async function signIn(req: http.IncomingMessage, res: http.ServerResponse) {
  const chunks: Buffer[] = [];
  for await (const c of req) chunks.push(c as Buffer);
  const form = new URLSearchParams(Buffer.concat(chunks).toString());
  const email = String(form.get("email") ?? "")
    .trim()
    .toLowerCase();
  const lookup = sqlSet.userLookup;
  const { rows } = await pool.query(
    lookup.query,
    lookup.params.map((p) => (p === lookup.params[0] ? email : p)),
  );
  const ok = rows[0] ? await verify(rows[0].password_hash, String(form.get("password") ?? "")) : false;
  if (!ok) {
    res.writeHead(400, { "Content-Type": "text/plain" });
    return res.end("The e-mail or password is not right.");
  }
  const token = randomBytes(32).toString("base64url");
  const id = createHash("sha256").update(token).digest("hex");
  const insert = sqlSet.sessionInsert;
  // The captured insert's own session id (64 hex digits) is replaced by the new one.
  await pool.query(
    insert.query,
    insert.params.map((p) => (typeof p === "string" && /^[0-9a-f]{64}$/.test(p) ? id : p)),
  );
  res.writeHead(302, { Location: "/client", "Set-Cookie": `diffractory_session=${token}; Path=/; HttpOnly; SameSite=Lax` });
  res.end();
}

const server = http.createServer((req, res) => {
  const path = (req.url ?? "/").split("?")[0];
  const route =
    req.method === "GET" && pageSql.pages[path]
      ? page(path, res)
      : req.method === "GET" && path === "/api/labs"
        ? directory(res)
        : req.method === "GET" && path === "/client/requests"
          ? requestsPage(req, res)
          : req.method === "POST" && path === "/sign-in"
            ? signIn(req, res)
            : null;
  if (!route) {
    res.writeHead(404).end();
    return;
  }
  route.catch((err) => {
    console.error(err);
    if (!res.headersSent) res.writeHead(500);
    res.end();
  });
});
server.keepAliveTimeout = 5000;
server.listen(Number(process.env.PORT), "127.0.0.1", () => console.log(`bare server on ${process.env.PORT}`));
process.on("SIGTERM", () => server.close(() => pool.end().then(() => process.exit(0))));
