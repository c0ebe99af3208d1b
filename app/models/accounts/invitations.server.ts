// Invitations to join an organisation: sent by e-mail with a one-time link, accepted by the invited address only.
import { createHash, randomBytes } from "node:crypto";
import { and, asc, eq, gt, isNull, sql } from "drizzle-orm";
import { z } from "zod";
import { db, schema } from "~/db/client.server";
import type { MembershipRole, Organisation, OrganisationInvitation, OrganisationKind, User } from "~/db/schema";
import { notify } from "~/models/notifications/outbox.server";
import { audit } from "~/models/audit.server";

const hashToken = (token: string) => createHash("sha256").update(token).digest("hex");

export const INVITATION_DAYS = 7;

/** Who may be invited to each kind of organisation, and which role may invite (docs/design.md#roles). */
export const INVITABLE_ROLES: Record<OrganisationKind, MembershipRole[]> = { client: ["owner", "member"], lab: ["manager", "operator"] };
export const INVITING_ROLE: Record<OrganisationKind, MembershipRole> = { client: "owner", lab: "manager" };

export const InviteSchema = z.object({
  intent: z.literal("invite"),
  email: z
    .email({ error: (i) => (i.input === undefined ? "Enter the e-mail address to invite." : "Enter a valid e-mail address.") })
    .max(254, "An e-mail address has at most 254 characters."),
  role: z.enum(["owner", "member", "manager", "operator"], { error: "Choose a role." }),
});

export const RevokeSchema = z.object({ intent: z.literal("revoke"), invitationId: z.uuid({ error: "Choose an invitation." }) });

export type InviteResult = { ok: true; invitation: OrganisationInvitation; token: string } | { ok: false; field: "email" | "role"; message: string };

/**
 * Invites an address into the organisation: one pending invitation per address (an earlier one is revoked),
 * the e-mail written to the outbox in the same transaction. The token is returned once; only its hash is kept.
 */
export async function inviteToOrganisation(input: {
  organisation: Organisation;
  invitedBy: User;
  email: string;
  role: MembershipRole;
  clientAddress?: string | null;
}): Promise<InviteResult> {
  const { organisation } = input;
  const email = input.email.trim();
  if (!INVITABLE_ROLES[organisation.kind].includes(input.role)) {
    return {
      ok: false,
      field: "role",
      message: `A ${organisation.kind === "lab" ? "lab" : "client organisation"} has ${INVITABLE_ROLES[organisation.kind].join(" and ")} roles.`,
    };
  }
  const [already] = await db
    .select({ userId: schema.memberships.userId })
    .from(schema.memberships)
    .innerJoin(schema.users, eq(schema.users.id, schema.memberships.userId))
    .where(and(eq(schema.memberships.organisationId, organisation.id), sql`lower(${schema.users.email}) = lower(${email})`));
  if (already) return { ok: false, field: "email", message: `${email} is already a member of ${organisation.name}.` };

  const token = randomBytes(24).toString("base64url");
  const now = new Date();
  const invitation = await db.transaction(async (tx) => {
    await tx
      .update(schema.organisationInvitations)
      .set({ revokedAt: now })
      .where(
        and(
          eq(schema.organisationInvitations.organisationId, organisation.id),
          sql`lower(${schema.organisationInvitations.email}) = lower(${email})`,
          isNull(schema.organisationInvitations.acceptedAt),
          isNull(schema.organisationInvitations.revokedAt),
        ),
      );
    const [row] = await tx
      .insert(schema.organisationInvitations)
      .values({
        organisationId: organisation.id,
        email,
        role: input.role,
        tokenHash: hashToken(token),
        invitedBy: input.invitedBy.id,
        expiresAt: new Date(now.getTime() + INVITATION_DAYS * 86_400_000),
      })
      .returning();
    await audit(
      {
        actorUserId: input.invitedBy.id,
        organisationId: organisation.id,
        action: "invitation_sent",
        subjectType: "organisation_invitation",
        subjectId: row.id,
        details: { email, role: input.role },
        clientAddress: input.clientAddress ?? null,
      },
      tx,
    );
    await notify(tx, { kind: "organisation_invitation", invitationId: row.id, token });
    return row;
  });
  return { ok: true, invitation, token };
}

/** The organisation's invitations still waiting for an answer, oldest first. */
export async function listPendingInvitations(organisationId: string) {
  const rows = await db
    .select({ invitation: schema.organisationInvitations, invitedBy: schema.users.name })
    .from(schema.organisationInvitations)
    .leftJoin(schema.users, eq(schema.users.id, schema.organisationInvitations.invitedBy))
    .where(
      and(
        eq(schema.organisationInvitations.organisationId, organisationId),
        isNull(schema.organisationInvitations.acceptedAt),
        isNull(schema.organisationInvitations.revokedAt),
        gt(schema.organisationInvitations.expiresAt, new Date()),
      ),
    )
    .orderBy(asc(schema.organisationInvitations.createdAt));
  return rows.map(({ invitation: i, invitedBy }) => ({
    id: i.id,
    email: i.email,
    role: i.role,
    invitedBy,
    createdAt: i.createdAt.toISOString(),
    expiresAt: i.expiresAt.toISOString(),
  }));
}

/** Revokes one of the organisation's pending invitations; false when it has no such invitation. */
export async function revokeInvitation(input: { organisationId: string; invitationId: string; by: User; clientAddress?: string | null }) {
  return db.transaction(async (tx) => {
    const rows = await tx
      .update(schema.organisationInvitations)
      .set({ revokedAt: new Date() })
      .where(
        and(
          eq(schema.organisationInvitations.id, input.invitationId),
          eq(schema.organisationInvitations.organisationId, input.organisationId),
          isNull(schema.organisationInvitations.acceptedAt),
          isNull(schema.organisationInvitations.revokedAt),
        ),
      )
      .returning({ id: schema.organisationInvitations.id });
    if (rows.length === 0) return false;
    await audit(
      {
        actorUserId: input.by.id,
        organisationId: input.organisationId,
        action: "invitation_revoked",
        subjectType: "organisation_invitation",
        subjectId: input.invitationId,
        clientAddress: input.clientAddress ?? null,
      },
      tx,
    );
    return true;
  });
}

export type InvitationStatus = "pending" | "expired" | "revoked" | "accepted";

const statusOf = (i: OrganisationInvitation, now = Date.now()): InvitationStatus =>
  i.acceptedAt ? "accepted" : i.revokedAt ? "revoked" : i.expiresAt.getTime() <= now ? "expired" : "pending";

/** The invitation a token names, its organisation and whether it can still be accepted; null for an unknown token. */
export async function resolveInvitation(token: string) {
  if (!token || token.length > 100) return null;
  const [row] = await db
    .select({ invitation: schema.organisationInvitations, organisation: schema.organisations })
    .from(schema.organisationInvitations)
    .innerJoin(schema.organisations, eq(schema.organisations.id, schema.organisationInvitations.organisationId))
    .where(eq(schema.organisationInvitations.tokenHash, hashToken(token)));
  if (!row) return null;
  return { ...row, status: statusOf(row.invitation) };
}

export const STATUS_MESSAGES: Record<Exclude<InvitationStatus, "pending">, string> = {
  expired: "This invitation has expired. Ask for a new one.",
  revoked: "This invitation was withdrawn.",
  accepted: "This invitation has already been used.",
};

export type AcceptResult = { ok: true; organisation: Organisation; role: MembershipRole } | { ok: false; status: 403 | 404 | 410; message: string };

export const emailsMatch = (a: string, b: string) => a.trim().toLowerCase() === b.trim().toLowerCase();

/** The signed-in person accepts: the invitation's address must be theirs; the membership is created once. */
export async function acceptInvitation(token: string, user: User, clientAddress?: string | null): Promise<AcceptResult> {
  if (!token || token.length > 100) return { ok: false, status: 404, message: "There is no such invitation." };
  return db.transaction(async (tx) => {
    // The row lock makes two acceptances of one link wait for each other; the second finds it used.
    const [invitation] = await tx
      .select()
      .from(schema.organisationInvitations)
      .where(eq(schema.organisationInvitations.tokenHash, hashToken(token)))
      .for("update");
    if (!invitation) return { ok: false, status: 404, message: "There is no such invitation." } as const;
    const status = statusOf(invitation);
    if (status !== "pending") return { ok: false, status: 410, message: STATUS_MESSAGES[status] } as const;
    if (!emailsMatch(invitation.email, user.email)) {
      return {
        ok: false,
        status: 403,
        message: `This invitation is for ${invitation.email}; you are signed in as ${user.email}. Sign in with the invited address.`,
      } as const;
    }
    const [organisation] = await tx.select().from(schema.organisations).where(eq(schema.organisations.id, invitation.organisationId));
    const [existing] = await tx
      .select({ role: schema.memberships.role })
      .from(schema.memberships)
      .where(and(eq(schema.memberships.userId, user.id), eq(schema.memberships.organisationId, invitation.organisationId)));
    if (!existing)
      await tx.insert(schema.memberships).values({ userId: user.id, organisationId: invitation.organisationId, role: invitation.role }).onConflictDoNothing();
    await tx.update(schema.organisationInvitations).set({ acceptedAt: new Date() }).where(eq(schema.organisationInvitations.id, invitation.id));
    await audit(
      {
        actorUserId: user.id,
        organisationId: invitation.organisationId,
        action: "invitation_accepted",
        subjectType: "organisation_invitation",
        subjectId: invitation.id,
        details: { role: existing?.role ?? invitation.role, alreadyMember: !!existing },
        clientAddress: clientAddress ?? null,
      },
      tx,
    );
    return { ok: true, organisation, role: existing?.role ?? invitation.role } as const;
  });
}
