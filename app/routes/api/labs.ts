// GET /api/labs — the public directory of approved labs, filtered by the query; anonymous callers allowed.
import { parseDirectoryQuery } from "~/domain/directory-query";
import { cachedDirectory } from "~/models/labs/directory.server";
import type { Route } from "./+types/labs";

// Public by design: the directory is what a visitor browses before creating an account.
export async function loader({ request }: Route.LoaderArgs) {
  const parsed = parseDirectoryQuery(new URL(request.url).searchParams);
  if (!parsed.ok) return Response.json({ error: parsed.error, field: parsed.field }, { status: 400 });
  const { body, etag } = await cachedDirectory(parsed.filters);
  const headers = { "Cache-Control": "public, max-age=30", ETag: etag, Vary: "Accept-Encoding" };
  // A client holding this answer already gets 304 and no body (RFC 9110 §13.1.2).
  const known = request.headers.get("If-None-Match");
  if (known && known.split(",").some((t) => t.trim().replace(/^W\//, "") === etag)) return new Response(null, { status: 304, headers });
  return new Response(body, { headers: { ...headers, "Content-Type": "application/json; charset=utf-8" } });
}
