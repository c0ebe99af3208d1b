// The lab's profile: invoicing details and parcel addresses (its sample reception); managers edit, operators read.
import { ProfileScreen } from "~/components/profile-screen";
import { countryOptions, profileOf } from "~/models/accounts/profiles.server";
import { profileAction } from "~/utils/profile-action.server";
import { requireOrgRole } from "~/utils/permissions.server";
import type { Route } from "./+types/profile";

export async function loader({ request }: Route.LoaderArgs) {
  const { membership } = await requireOrgRole(request, "lab");
  const profile = await profileOf(membership.organisation.id);
  return { ...profile, kind: "lab" as const, canEdit: membership.role === "manager", leadRole: "manager", countries: countryOptions() };
}

export async function action({ request, context }: Route.ActionArgs) {
  const { membership, user } = await requireOrgRole(request, "lab", ["manager"]);
  return profileAction({ request, organisationId: membership.organisation.id, userId: user.id, clientAddress: context.clientAddress, path: "/lab/profile" });
}

export default function LabProfile({ loaderData, actionData }: Route.ComponentProps) {
  return <ProfileScreen page={loaderData} actionData={actionData} />;
}

export function meta(_: Route.MetaArgs) {
  return [{ title: "Profile — Diffractory" }, { name: "description", content: "Your lab's invoicing details and the addresses where it receives samples." }];
}
