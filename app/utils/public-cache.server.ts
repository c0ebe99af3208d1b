// An in-process shared cache for GET answers that declare themselves `Cache-Control: public, max-age=N`,
// kept the way a caching proxy in front of the app would keep them (RFC 9111 §3): a repeat of the same URL
// within min(N s, PUBLIC_CACHE_MS) is answered from memory without entering React Router. Security headers
// are still set per response by the middleware before this one; only the representation headers are kept.
// A route that marks an answer public promises it is the same for everyone (cookies are not part of the key).
import { config } from "~/config.server";
import type { NextFunction, Request, Response } from "express";

interface Stored {
  at: number;
  ttlMs: number;
  headers: [string, string][];
  body: Buffer;
  etag: string | undefined;
}

const LIMIT_MS = config.cacheMs.publicAnswers;
const MAX_ENTRIES = 500;
const MAX_BODY_BYTES = 256 * 1024;
const KEPT_HEADERS = ["content-type", "cache-control", "etag", "vary", "last-modified"];
const store = new Map<string, Stored>();
/** An answer begun before the last purge may show what the purge removed; it is not kept. */
let lastPurgeAt = 0;

/** Forgets the kept answers whose URL starts with the prefix (a change they show has been made). */
export function purgePublicCache(pathPrefix: string) {
  lastPurgeAt = Date.now();
  for (const key of store.keys()) if (key.startsWith(pathPrefix)) store.delete(key);
}

const etagMatches = (header: string | undefined, etag: string | undefined) =>
  !!header && !!etag && header.split(",").some((t) => t.trim().replace(/^W\//, "") === etag.replace(/^W\//, ""));

/** The answer may be kept: 200, public with a max-age, no cookie set, varying at most by encoding. */
function keepFor(res: Response): number {
  if (res.statusCode !== 200 || res.getHeader("set-cookie")) return 0;
  const cc = String(res.getHeader("cache-control") ?? "");
  const maxAge = /(?:^|,)\s*public\s*(?:,|$)/.test(cc) && !/no-store|private|no-cache/.test(cc) ? /max-age=(\d+)/.exec(cc) : null;
  const vary = String(res.getHeader("vary") ?? "")
    .toLowerCase()
    .split(",")
    .map((v) => v.trim())
    .filter(Boolean);
  if (!maxAge || vary.some((v) => v !== "accept-encoding")) return 0;
  return Math.min(LIMIT_MS, Number(maxAge[1]) * 1000);
}

export function publicCache(req: Request, res: Response, next: NextFunction) {
  if (LIMIT_MS <= 0 || req.method !== "GET" || req.headers.authorization) return next();
  const key = req.originalUrl;
  const hit = store.get(key);
  if (hit && Date.now() - hit.at < hit.ttlMs) {
    for (const [name, value] of hit.headers) res.setHeader(name, value);
    if (etagMatches(req.headers["if-none-match"], hit.etag)) {
      res.statusCode = 304;
      res.end();
      return;
    }
    res.statusCode = 200;
    res.end(hit.body);
    return;
  }
  const chunks: Buffer[] = [];
  let size = 0;
  const collect = (chunk: unknown, encoding?: unknown) => {
    if (chunk === undefined || chunk === null || typeof chunk === "function" || size > MAX_BODY_BYTES) return;
    const b =
      typeof chunk === "string" ? Buffer.from(chunk, typeof encoding === "string" ? (encoding as BufferEncoding) : "utf8") : Buffer.from(chunk as Uint8Array);
    size += b.length;
    chunks.push(b);
  };
  const write = res.write.bind(res) as (...args: unknown[]) => boolean;
  const end = res.end.bind(res) as (...args: unknown[]) => Response;
  const started = Date.now();
  res.write = ((chunk: unknown, ...rest: unknown[]) => {
    collect(chunk, rest[0]);
    return write(chunk, ...rest);
  }) as Response["write"];
  res.end = ((chunk?: unknown, ...rest: unknown[]) => {
    collect(chunk, rest[0]);
    const ttlMs = keepFor(res);
    if (ttlMs > 0 && size <= MAX_BODY_BYTES && started > lastPurgeAt) {
      const headers = KEPT_HEADERS.flatMap((h): [string, string][] => (res.getHeader(h) === undefined ? [] : [[h, String(res.getHeader(h))]]));
      store.delete(key);
      store.set(key, { at: started, ttlMs, headers, body: Buffer.concat(chunks), etag: res.getHeader("etag")?.toString() });
      if (store.size > MAX_ENTRIES) store.delete(store.keys().next().value!);
    }
    return end(chunk, ...rest);
  }) as Response["end"];
  next();
}
