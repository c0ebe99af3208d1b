// The header's account area: reads /api/me through TanStack Query and offers workspace, switching and sign-out.
import { useQuery } from "@tanstack/react-query";
import { Link, useRouteLoaderData } from "react-router";
import { SignOutButton } from "./sign-out-button";
import type { MeSummary } from "~/models/accounts/me.server";

async function fetchMe(): Promise<MeSummary | null> {
  const res = await fetch("/api/me", { headers: { Accept: "application/json" } });
  if (res.status === 401) return null;
  if (!res.ok) throw new Error(`Could not load your account (${res.status}).`);
  return res.json();
}

/** `enabled: false` (nobody signed in, as the root loader says) asks nothing: a signed-out page makes no failing request. */
export function useMe(initial?: MeSummary | null, enabled = true) {
  return useQuery({ queryKey: ["me"], queryFn: fetchMe, initialData: initial, staleTime: 60_000, enabled });
}

export function workspaceHref(me: MeSummary) {
  const active = me.organisations.find((o) => o.id === me.activeOrganisationId) ?? me.organisations[0];
  if (active) return active.kind === "lab" ? "/lab" : "/client";
  return me.user.isAdmin ? "/admin" : "/";
}

export function AccountMenu() {
  const signedIn = useRouteLoaderData<{ signedIn?: boolean }>("root")?.signedIn ?? false;
  const { data: me, isPending } = useMe(undefined, signedIn);
  if (signedIn && isPending) return <div className="h-9 w-40" aria-hidden="true" />;
  if (!signedIn || !me) {
    return (
      <div className="flex items-center gap-1 sm:gap-2">
        <Link to="/sign-in" className="btn-quiet">
          Sign in
        </Link>
        <Link to="/create-account" className="btn-primary max-sm:px-2.5">
          Create account
        </Link>
      </div>
    );
  }
  return (
    <div className="flex items-center gap-2 sm:gap-3">
      <Link to={workspaceHref(me)} className="btn-secondary max-sm:px-2.5">
        My workspace
      </Link>
      <span className="hidden text-sm text-ink-600 sm:inline" data-testid="signed-in-as">
        {me.user.name}
      </span>
      <Link to="/account/security" className="hidden text-sm text-ink-600 hover:text-beam-700 hover:underline sm:inline">
        Security
      </Link>
      <SignOutButton />
    </div>
  );
}
