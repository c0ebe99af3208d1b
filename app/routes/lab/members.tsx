// /lab/members — the lab's staff and their roles; managers invite managers and operators and withdraw pending invitations.
import { MembersScreen } from "~/components/members-screen";
import { membersPageData } from "~/models/accounts/members.server";
import { membersAction } from "~/utils/members-action.server";
import { requireOrgRole } from "~/utils/permissions.server";
import type { Route } from "./+types/members";

export async function loader({ request }: Route.LoaderArgs) {
  const { membership } = await requireOrgRole(request, "lab");
  return membersPageData(membership);
}

export async function action({ request, context }: Route.ActionArgs) {
  const { membership, user } = await requireOrgRole(request, "lab", ["manager"]);
  return membersAction({ request, organisation: membership.organisation, user, clientAddress: context.clientAddress, path: "/lab/members" });
}

export default function Members({ loaderData: page, actionData }: Route.ComponentProps) {
  return <MembersScreen {...page} lastResult={actionData?.result} leadRole="manager" />;
}

export function meta(_: Route.MetaArgs) {
  return [{ title: "Members — Diffractory" }, { name: "description", content: "Your lab's staff and their roles; managers invite managers and operators." }];
}
