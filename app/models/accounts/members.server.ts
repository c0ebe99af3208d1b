// The members screens of clients and labs: who belongs, pending invitations, and the invite and revoke actions.
import { parseWithZod } from "@conform-to/zod/v4";
import { asc, eq } from "drizzle-orm";
import { data } from "react-router";
import { z } from "zod";
import { db, schema } from "~/db/client.server";
import type { MembershipRole, Organisation, User } from "~/db/schema";
import { redirectWithToast } from "~/utils/toast.server";
import { INVITABLE_ROLES, INVITATION_DAYS, INVITING_ROLE, InviteSchema, RevokeSchema, inviteToOrganisation, listPendingInvitations, revokeInvitation } from "~/models/accounts/invitations.server";
import { readForm } from "~/utils/form.server";

const MembersActionSchema = z.discriminatedUnion("intent", [InviteSchema, RevokeSchema]);

/** What both members screens show; pending invitations only to the role that may invite. */
export async function membersPageData(membership: { organisation: Organisation; role: MembershipRole }) {
  const { organisation } = membership;
  const members = await db
    .select({ name: schema.users.name, email: schema.users.email, role: schema.memberships.role, since: schema.memberships.createdAt })
    .from(schema.memberships)
    .innerJoin(schema.users, eq(schema.users.id, schema.memberships.userId))
    .where(eq(schema.memberships.organisationId, organisation.id))
    .orderBy(asc(schema.memberships.createdAt));
  const canInvite = membership.role === INVITING_ROLE[organisation.kind];
  return {
    organisation: organisation.name,
    members,
    canInvite,
    invitingRole: INVITING_ROLE[organisation.kind],
    roles: INVITABLE_ROLES[organisation.kind],
    invitationDays: INVITATION_DAYS,
    invitations: canInvite ? await listPendingInvitations(organisation.id) : [],
  };
}

/** Invite or revoke; the caller has already required the inviting role. Bad input answers 400, someone else's invitation 404. */
export async function membersAction(input: { request: Request; organisation: Organisation; user: User; clientAddress?: string | null; path: string }) {
  const submission = parseWithZod(await readForm(input.request), { schema: MembersActionSchema });
  if (submission.status !== "success") return data({ result: submission.reply() }, { status: 400 });
  if (submission.value.intent === "invite") {
    const result = await inviteToOrganisation({ organisation: input.organisation, invitedBy: input.user, email: submission.value.email, role: submission.value.role, clientAddress: input.clientAddress });
    if (!result.ok) return data({ result: submission.reply({ fieldErrors: { [result.field]: [result.message] } }) }, { status: 400 });
    return redirectWithToast(input.path, { kind: "success", message: `Invitation sent to ${result.invitation.email}; the link is valid for ${INVITATION_DAYS} days.` });
  }
  const revoked = await revokeInvitation({ organisationId: input.organisation.id, invitationId: submission.value.invitationId, by: input.user, clientAddress: input.clientAddress });
  // Another organisation's invitation looks the same as one that does not exist.
  if (!revoked) return data({ result: submission.reply({ formErrors: ["There is no such pending invitation."] }) }, { status: 404 });
  return redirectWithToast(input.path, { kind: "success", message: "Invitation withdrawn; its link no longer works." });
}
