// The client organisation's members and their roles; owners invite people and withdraw pending invitations.
import { MembersScreen } from "~/components/members-screen";
import { membersPageData } from "~/models/accounts/members.server";
import { membersAction } from "~/utils/members-action.server";
import { requireOrgRole } from "~/utils/permissions.server";
import type { Route } from "./+types/members";

export async function loader({ request }: Route.LoaderArgs) {
  const { membership } = await requireOrgRole(request, "client");
  return membersPageData(membership);
}

export async function action({ request, context }: Route.ActionArgs) {
  const { membership, user } = await requireOrgRole(request, "client", ["owner"]);
  return membersAction({ request, organisation: membership.organisation, user, clientAddress: context.clientAddress, path: "/client/members" });
}

export default function Members({ loaderData: page, actionData }: Route.ComponentProps) {
  return <MembersScreen {...page} lastResult={actionData?.result} leadRole="owner" />;
}

export function meta(_: Route.MetaArgs) {
  return [{ title: "Members — Diffractory" }, { name: "description", content: "The people of your organisation and their roles; owners invite new members." }];
}
