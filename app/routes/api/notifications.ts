// GET /api/notifications — the signed-in person's notifications of the organisation they work in (and their own),
// the unread count, and each other organisation's unread count; POST marks some or all of them read.
import { z } from "zod";
import type { Actor } from "~/models/accounts/actors.server";
import { markRead, notificationsOf, unreadElsewhere, type InboxScope } from "~/models/notifications/inbox.server";
import { readBodyText, readForm } from "~/utils/form.server";
import { requireUser } from "~/utils/permissions.server";
import type { Route } from "./+types/notifications";

const noStore = { "Cache-Control": "private, no-store" };

/** The bell's scope: the active organisation's notices and the person's own. */
function bellScope(actor: Actor): InboxScope {
  return { organisationId: actor.active?.organisation.id ?? null };
}

export async function loader({ request }: Route.LoaderArgs) {
  const actor = await requireUser(request);
  const [{ unread, items }, elsewhere] = await Promise.all([
    notificationsOf(actor.user.id, 30, bellScope(actor)),
    unreadElsewhere(
      actor.user.id,
      actor.active?.organisation.id ?? null,
      actor.memberships.map((m) => ({ id: m.organisation.id, name: m.organisation.name })),
    ),
  ]);
  return Response.json({ unread, items, elsewhere }, { headers: noStore });
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
  // "All" is all of the bell's (another organisation's stay unread); listed ids are marked wherever they belong.
  const marked = "all" in parsed.data ? await markRead(actor.user.id, "all", bellScope(actor)) : await markRead(actor.user.id, parsed.data.ids);
  const { unread } = await notificationsOf(actor.user.id, 0, bellScope(actor));
  return Response.json({ marked, unread }, { headers: noStore });
}
