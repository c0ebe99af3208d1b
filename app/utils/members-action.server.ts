// The invite and revoke form both members screens (client and lab) post: read, act, answer with a toast or the form's errors.
import { parseWithZod } from "@conform-to/zod/v4";
import { data } from "react-router";
import { z } from "zod";
import type { Organisation, User } from "~/db/schema";
import { INVITATION_DAYS, InviteSchema, RevokeSchema, inviteToOrganisation, revokeInvitation } from "~/models/accounts/invitations.server";
import { readForm } from "~/utils/form.server";
import { redirectWithToast } from "~/utils/toast.server";

const MembersActionSchema = z.discriminatedUnion("intent", [InviteSchema, RevokeSchema]);

/** Invite or revoke; the caller has already required the inviting role. Bad input answers 400, someone else's invitation 404. */
export async function membersAction(input: { request: Request; organisation: Organisation; user: User; clientAddress?: string | null; path: string }) {
  const submission = parseWithZod(await readForm(input.request), { schema: MembersActionSchema });
  if (submission.status !== "success") return data({ result: submission.reply() }, { status: 400 });
  if (submission.value.intent === "invite") {
    const result = await inviteToOrganisation({
      organisation: input.organisation,
      invitedBy: input.user,
      email: submission.value.email,
      role: submission.value.role,
      clientAddress: input.clientAddress,
    });
    if (!result.ok) return data({ result: submission.reply({ fieldErrors: { [result.field]: [result.message] } }) }, { status: 400 });
    return redirectWithToast(input.path, {
      kind: "success",
      message: `Invitation sent to ${result.invitation.email}; the link is valid for ${INVITATION_DAYS} days.`,
    });
  }
  const revoked = await revokeInvitation({
    organisationId: input.organisation.id,
    invitationId: submission.value.invitationId,
    by: input.user,
    clientAddress: input.clientAddress,
  });
  // Another organisation's invitation looks the same as one that does not exist.
  if (!revoked) return data({ result: submission.reply({ formErrors: ["There is no such pending invitation."] }) }, { status: 404 });
  return redirectWithToast(input.path, { kind: "success", message: "Invitation withdrawn; its link no longer works." });
}
