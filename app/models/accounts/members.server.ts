// The members screens of clients and labs: who belongs and, for the role that may invite, pending invitations.
import { asc, eq } from "drizzle-orm";
import { db, schema } from "~/db/client.server";
import type { MembershipRole, Organisation } from "~/db/schema";
import { INVITABLE_ROLES, INVITATION_DAYS, INVITING_ROLE, listPendingInvitations } from "~/models/accounts/invitations.server";

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
