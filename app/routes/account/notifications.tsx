// /account/notifications — which milestone e-mails a person receives (only the kinds their roles concern, and
// whether optional ones come once a day), and their notification list across all their organisations.
import { Formula } from "~/components/symbols";
import { data, Form, useNavigation } from "react-router";
import { Badge, FormError, PageHeader } from "~/components/ui";
import type { Actor } from "~/models/accounts/actors.server";
import { notificationsOf, preferencesOf, savePreferences, setDailyDigest } from "~/models/notifications/inbox.server";
import { isMilestoneKind, kindsFor, MILESTONES, type MilestoneKind } from "~/domain/milestones";
import { requireUser, workspacePath } from "~/utils/permissions.server";
import { redirectWithToast } from "~/utils/toast.server";
import { readForm } from "~/utils/form.server";
import type { Route } from "./+types/notifications";
import { useFormat } from "~/components/locale";
import { SubmitButton } from "~/components/pending";

/** The kinds of message that concern this person: by the kinds of their organisations, and admin work. */
function offeredKinds(actor: Actor) {
  return kindsFor({
    client: actor.memberships.some((m) => m.organisation.kind === "client"),
    lab: actor.memberships.some((m) => m.organisation.kind === "lab"),
    admin: actor.user.isAdmin,
  });
}

export async function loader({ request }: Route.LoaderArgs) {
  const actor = await requireUser(request);
  const [preferences, list] = await Promise.all([preferencesOf(actor.user.id, offeredKinds(actor)), notificationsOf(actor.user.id, 50, "all")]);
  const organisations = actor.memberships.map((m) => ({ id: m.organisation.id, name: m.organisation.name }));
  return {
    preferences,
    list,
    organisations,
    activeId: actor.active?.organisation.id ?? null,
    dailyDigest: actor.user.dailyDigest,
    back: workspacePath(actor),
    email: actor.user.email,
  };
}

export async function action({ request }: Route.ActionArgs) {
  const actor = await requireUser(request);
  const form = await readForm(request);
  if (form.get("intent") !== "save") return data({ error: "Unknown request." }, { status: 400 });
  const chosen = form.getAll("email").map(String);
  const unknown = chosen.filter((k) => !isMilestoneKind(k));
  if (unknown.length) return data({ error: `Unknown kind of message: ${unknown.slice(0, 3).join(", ")}.` }, { status: 400 });
  const offered = offeredKinds(actor);
  if (chosen.some((k) => !offered.includes(k as MilestoneKind)))
    return data({ error: "One of the messages chosen does not concern your organisations; reload the page and choose again." }, { status: 400 });
  const digest = form.get("digest");
  if (digest !== null && digest !== "on") return data({ error: "Choose the daily digest with its checkbox." }, { status: 400 });
  await savePreferences(actor.user.id, new Set(chosen as MilestoneKind[]), offered);
  await setDailyDigest(actor.user.id, digest === "on");
  return redirectWithToast("/account/notifications", { kind: "success", message: "Your e-mail settings are saved." });
}

export default function NotificationSettings({ loaderData, actionData }: Route.ComponentProps) {
  const fmt = useFormat();
  const { preferences, list, organisations, activeId, dailyDigest, back, email } = loaderData;
  const orgName = new Map(organisations.map((o) => [o.id, o.name]));
  const busy = useNavigation().state !== "idle";
  return (
    <main id="main" className="mx-auto w-full max-w-3xl px-4 py-8 sm:px-6">
      <p className="mb-4 text-sm">
        <a href={back} className="text-beam-700 hover:underline">
          ← Back to your workspace
        </a>
      </p>
      <PageHeader title="Notifications" subtitle={`E-mails go to ${email}. Messages about payments, disputes and safety always go out.`} />
      <Form method="post" className="card">
        <input type="hidden" name="intent" value="save" />
        <fieldset>
          <legend className="mb-3 font-semibold">E-mail me when…</legend>
          <ul className="grid gap-2 sm:grid-cols-2">
            {preferences.map((p) => (
              <li key={p.kind}>
                {/* biome-ignore lint/a11y/noLabelWithoutControl: the checkbox is inside the label, in either branch */}
                <label className="flex items-start gap-2 text-sm">
                  {p.essential ? (
                    <input type="checkbox" checked disabled aria-describedby="essential-note" className="mt-1" />
                  ) : (
                    <input type="checkbox" name="email" value={p.kind} defaultChecked={p.emailEnabled} className="mt-1" />
                  )}
                  <span>
                    {MILESTONES[p.kind].label} {p.essential ? <Badge tone="neutral">always</Badge> : null}
                  </span>
                </label>
              </li>
            ))}
          </ul>
        </fieldset>
        <fieldset className="mt-4 border-t border-ink-100 pt-4">
          <legend className="sr-only">Daily digest</legend>
          <label className="flex items-start gap-2 text-sm">
            <input type="checkbox" name="digest" defaultChecked={dailyDigest} aria-describedby="digest-note" className="mt-1" />
            <span>Collect the messages I chose above into one e-mail a day</span>
          </label>
          <p id="digest-note" className="mt-1 text-xs text-ink-500">
            Messages marked “always” still come at once. The digest goes out each morning (UTC) when there is something to tell.
          </p>
        </fieldset>
        <p id="essential-note" className="mt-3 text-xs text-ink-500">
          Messages marked “always” concern money, disputes or the safe handling of samples and cannot be turned off. Every message also appears in the list
          below.
        </p>
        <div className="mt-4 h-6">
          <FormError errors={actionData?.error ? [actionData.error] : undefined} />
        </div>
        <SubmitButton pendingText="Saving…">Save e-mail settings</SubmitButton>
      </Form>
      <section className="mt-8">
        <h2 className="mb-3 text-lg font-semibold">Recent notifications {list.unread ? <Badge tone="brand">{list.unread} unread</Badge> : null}</h2>
        {list.items.length === 0 ? (
          <p className="text-sm text-ink-500">
            Nothing yet. Quotes, orders, payments and scan checks that concern you are announced here and, as set above, by e-mail.
          </p>
        ) : (
          <ul className="card divide-y divide-ink-100 p-0">
            {list.items.map((n) => (
              <li key={n.id} className="px-4 py-3 text-sm">
                {n.read ? null : (
                  <span className="mr-2">
                    <Badge tone="brand">New</Badge>
                  </span>
                )}
                {n.organisationId && n.organisationId !== activeId && orgName.has(n.organisationId) ? (
                  // Another of the person's organisations: switch to it first, so the link does not meet a 404.
                  <Form method="post" action="/switch-organisation" reloadDocument className="inline">
                    <input type="hidden" name="organisationId" value={n.organisationId} />
                    <input type="hidden" name="notification" value={n.id} />
                    {n.href ? <input type="hidden" name="next" value={n.href} /> : null}
                    <button type="submit" className={`text-left hover:underline ${n.read ? "text-ink-700" : "font-medium text-ink-900"}`}>
                      <Formula>{n.title}</Formula>
                    </button>{" "}
                    <span className="text-xs text-ink-500">(switches to {orgName.get(n.organisationId)})</span>
                  </Form>
                ) : (
                  <a href={n.href || "#"} className={n.read ? "text-ink-700" : "font-medium text-ink-900"}>
                    <Formula>{n.title}</Formula>
                  </a>
                )}
                <span className="block text-xs text-ink-500">{fmt.dateTime(n.createdAt)}</span>
              </li>
            ))}
          </ul>
        )}
      </section>
    </main>
  );
}

export function meta(_: Route.MetaArgs) {
  return [
    { title: "Notifications — Diffractory" },
    { name: "description", content: "Choose which milestone e-mails you receive and read your notifications across all your organisations." },
  ];
}
