// GET /api/notifications — the signed-in person's notifications and unread count; POST marks some or all read.
import { z } from "zod";
import { markRead, notificationsOf } from "~/models/notifications/inbox.server";
import { readBodyText, readForm } from "~/utils/form.server";
import { requireUser } from "~/utils/permissions.server";
import type { Route } from "./+types/notifications";

const noStore = { "Cache-Control": "private, no-store" };

export async function loader({ request }: Route.LoaderArgs) {
  const actor = await requireUser(request);
  const { unread, items } = await notificationsOf(actor.user.id);
  return Response.json({ unread, items }, { headers: noStore });
}

const MarkRead = z.union([z.object({ all: z.literal(true) }), z.object({ ids: z.array(z.uuid()).min(1).max(200) })]);

const FORM_TYPE = /^\s*(application\/x-www-form-urlencoded|multipart\/form-data)\b/i;

/** The body through the one reader (size, UTF-8, NUL); a body of another kind or malformed JSON is undefined (400). */
async function readBody(request: Request): Promise<unknown> {
  const type = request.headers.get("content-type") ?? "";
  if (type.includes("application/json")) {
    const text = await readBodyText(request);
    try {
      return JSON.parse(text);
    } catch {
      return undefined;
    }
  }
  if (!FORM_TYPE.test(type)) return undefined;
  const form = await readForm(request);
  if (form.get("all") === "true") return { all: true };
  return { ids: form.getAll("id").map(String) };
}

export async function action({ request }: Route.ActionArgs) {
  const actor = await requireUser(request);
  if (request.method !== "POST") return Response.json({ error: "Use POST to mark notifications read." }, { status: 405 });
  const parsed = MarkRead.safeParse(await readBody(request));
  if (!parsed.success) return Response.json({ error: 'Send {"all": true} or {"ids": [notification ids]}.' }, { status: 400 });
  const marked = await markRead(actor.user.id, "all" in parsed.data ? "all" : parsed.data.ids);
  const { unread } = await notificationsOf(actor.user.id, 0);
  return Response.json({ marked, unread }, { headers: noStore });
}
