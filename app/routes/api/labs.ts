// GET /api/labs — the public directory of approved labs, filtered by the query; anonymous callers allowed.
import { parseDirectoryQuery } from "~/models/directory";
import { searchDirectory } from "~/models/directory.server";
import type { Route } from "./+types/labs";

// Public by design: the directory is what a visitor browses before creating an account.
export async function loader({ request }: Route.LoaderArgs) {
  const parsed = parseDirectoryQuery(new URL(request.url).searchParams);
  if (!parsed.ok) return Response.json({ error: parsed.error, field: parsed.field }, { status: 400 });
  const result = await searchDirectory(parsed.filters);
  return Response.json(result, { headers: { "Cache-Control": "public, max-age=30" } });
}
