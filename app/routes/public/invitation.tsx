// /invitations/:token — the page an invitation e-mail links to: which organisation, then sign in or create an account with the invited address, and accept.
import { data, Form, Link, useNavigation } from "react-router";
import { Badge, FormError } from "~/components/ui";
import { acceptInvitation, emailsMatch, resolveInvitation, STATUS_MESSAGES } from "~/models/accounts/invitations.server";
import { getOptionalActor, notFound, requireUser, workspacePath } from "~/utils/permissions.server";
import { setActiveOrganisation } from "~/utils/session.server";
import { redirectWithToast } from "~/utils/toast.server";
import type { Route } from "./+types/invitation";
import { useFormat } from "~/components/locale";

export async function loader({ request, params }: Route.LoaderArgs) {
  const found = await resolveInvitation(params.token);
  if (!found) notFound("There is no such invitation. Check the link in the e-mail.");
  const actor = await getOptionalActor(request);
  const { invitation, organisation, status } = found;
  const path = `/invitations/${params.token}`;
  return {
    organisation: { name: organisation.name, kind: organisation.kind, city: organisation.city, country: organisation.country },
    role: invitation.role,
    email: invitation.email,
    expiresAt: invitation.expiresAt.toISOString(),
    status,
    problem: status === "pending" ? null : STATUS_MESSAGES[status],
    signedInAs: actor?.user.email ?? null,
    emailMatches: actor ? emailsMatch(actor.user.email, invitation.email) : false,
    signInPath: `/sign-in?redirectTo=${encodeURIComponent(path)}`,
    createAccountPath: `/create-account?${new URLSearchParams({ email: invitation.email, redirectTo: path })}`,
  };
}

export async function action({ request, params, context }: Route.ActionArgs) {
  const actor = await requireUser(request);
  const result = await acceptInvitation(params.token, actor.user, context.clientAddress);
  if (!result.ok) return data({ formErrors: [result.message] }, { status: result.status });
  await setActiveOrganisation(request, result.organisation.id);
  return redirectWithToast(workspacePath({ user: actor.user, active: { organisation: result.organisation, role: result.role } }), {
    kind: "success",
    message: `You joined ${result.organisation.name} as ${result.role}. Switch between your organisations from the menu.`,
  });
}

export default function Invitation({ loaderData: page, actionData }: Route.ComponentProps) {
  const fmt = useFormat();
  const busy = useNavigation().state !== "idle";
  const where = [page.organisation.city, page.organisation.country].filter(Boolean).join(", ");
  return (
    <div className="mx-auto max-w-xl px-4 py-12">
      <div className="card space-y-4">
        <h1 className="text-2xl font-bold">Join {page.organisation.name}</h1>
        <p className="text-sm text-ink-700">
          {page.organisation.kind === "lab" ? "A lab" : "A client organisation"} on Diffractory{where ? ` in ${where}` : ""} invited{" "}
          <strong>{page.email}</strong> as <Badge tone="brand">{page.role}</Badge>.
        </p>
        {page.problem ? (
          <p role="alert" className="text-sm font-medium text-danger-700">
            {page.problem}
          </p>
        ) : page.signedInAs === null ? (
          <div className="space-y-3">
            <p className="text-sm text-ink-700">Sign in or create an account with {page.email}, then accept the invitation here.</p>
            <div className="flex flex-wrap gap-3">
              <Link to={page.signInPath} className="btn-primary">
                Sign in
              </Link>
              <Link to={page.createAccountPath} className="btn-secondary">
                Create an account
              </Link>
            </div>
          </div>
        ) : page.emailMatches ? (
          <Form method="post" className="space-y-2">
            <FormError errors={actionData?.formErrors} />
            <button type="submit" className="btn-primary w-full" disabled={busy}>
              Accept and join {page.organisation.name}
            </button>
          </Form>
        ) : (
          <div className="space-y-2">
            <p role="alert" className="text-sm font-medium text-danger-700">
              You are signed in as {page.signedInAs}, but this invitation is for {page.email}. Sign out and sign in with the invited address.
            </p>
            <Form method="post" action="/sign-out">
              <button type="submit" className="btn-secondary">
                Sign out
              </button>
            </Form>
          </div>
        )}
        <p className="text-xs text-ink-500">The link is valid until {fmt.date(page.expiresAt)}.</p>
      </div>
    </div>
  );
}

export function meta(_: Route.MetaArgs) {
  return [
    { title: "Invitation — Diffractory" },
    {
      name: "description",
      content: "An invitation to join an organisation on Diffractory: sign in or create an account with the invited address, then accept.",
    },
  ];
}
