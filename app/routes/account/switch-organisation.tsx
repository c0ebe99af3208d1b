// POST /switch-organisation — a person in several organisations chooses which one they work in; from a notice of
// another organisation (the bell, the notification list) it also marks the notice read and goes where it leads.
import { parseWithZod } from "@conform-to/zod/v4";
import { data, redirect } from "react-router";
import { z } from "zod";
import { requireUser, workspacePath } from "~/utils/permissions.server";
import { setActiveOrganisation } from "~/utils/session.server";
import { redirectWithToast } from "~/utils/toast.server";
import { readForm } from "~/utils/form.server";
import { markRead } from "~/models/notifications/inbox.server";
import type { Route } from "./+types/switch-organisation";

const SwitchSchema = z.object({
  organisationId: z.uuid({ error: "Choose an organisation." }),
  /** Where to go after switching: a path inside the app only (never another site). */
  next: z
    .string()
    .max(500)
    .regex(/^\/(?![/\\])[^\s]*$/, { error: "That is not a page of Diffractory." })
    .optional(),
  /** The notice followed, marked read on the way. */
  notification: z.uuid().optional(),
});

export async function loader({ request }: Route.LoaderArgs) {
  await requireUser(request);
  return redirect("/");
}

export async function action({ request }: Route.ActionArgs) {
  const actor = await requireUser(request);
  const submission = parseWithZod(await readForm(request), { schema: SwitchSchema });
  if (submission.status !== "success") return data({ result: submission.reply() }, { status: 400 });
  const target = actor.memberships.find((m) => m.organisation.id === submission.value.organisationId);
  // Someone else's organisation id looks the same as one that does not exist.
  if (!target) return data({ result: submission.reply({ formErrors: ["You are not a member of that organisation."] }) }, { status: 404 });
  await setActiveOrganisation(request, target.organisation.id);
  if (submission.value.notification) await markRead(actor.user.id, [submission.value.notification]);
  return redirectWithToast(submission.value.next ?? workspacePath({ user: actor.user, active: target }), {
    kind: "info",
    message: `You are now working in ${target.organisation.name}.`,
  });
}
