// The client organisation's profile: invoicing details, kind, purchase-order rule and parcel addresses; owners edit, members read.
import { ProfileScreen } from "~/components/profile-screen";
import { countryOptions, profileOf } from "~/models/accounts/profiles.server";
import { profileAction } from "~/utils/profile-action.server";
import { requireOrgRole } from "~/utils/permissions.server";
import type { Route } from "./+types/profile";

export async function loader({ request }: Route.LoaderArgs) {
  const { membership } = await requireOrgRole(request, "client");
  const profile = await profileOf(membership.organisation.id);
  return { ...profile, kind: "client" as const, canEdit: membership.role === "owner", leadRole: "owner", countries: countryOptions() };
}

export async function action({ request, context }: Route.ActionArgs) {
  const { membership, user } = await requireOrgRole(request, "client", ["owner"]);
  return profileAction({ request, organisationId: membership.organisation.id, userId: user.id, clientAddress: context.clientAddress, path: "/client/profile" });
}

export default function ClientProfile({ loaderData, actionData }: Route.ComponentProps) {
  return <ProfileScreen page={loaderData} actionData={actionData} />;
}

export function meta(_: Route.MetaArgs) {
  return [
    { title: "Profile — Diffractory" },
    { name: "description", content: "Your organisation's invoicing details, kind, purchase-order rule and parcel addresses." },
  ];
}
