// The forms both profile screens (client and lab) post: the profile itself and its parcel addresses. Bad input
// answers 400 with one sentence per field and saves nothing; another organisation's address is a 404.
import type { SubmissionResult } from "@conform-to/react";
import { parseWithZod } from "@conform-to/zod/v4";
import { data } from "react-router";
import { z } from "zod";
import { AddressSchema, ProfileSchema } from "~/domain/profile-forms";
import { addAddress, removeAddress, saveProfile, setDefaultAddress, updateAddress } from "~/models/accounts/profiles.server";
import { readForm } from "~/utils/form.server";
import { orNotFound } from "~/utils/permissions.server";
import { redirectWithToast } from "~/utils/toast.server";

const AddressIdSchema = z.object({ addressId: z.uuid("There is no such address on this profile.") });

/** The caller has already required the owner (client) or manager (lab) role. */
export async function profileAction(input: { request: Request; organisationId: string; userId: string; clientAddress?: string | null; path: string }) {
  const form = await readForm(input.request);
  const intent = form.get("intent");
  const actor = { userId: input.userId, clientAddress: input.clientAddress };
  const refused = (formId: string, result: SubmissionResult<string[]>, status = 400) => data({ formId, result }, { status });
  const sentence = (formId: string, message: string, status: number) =>
    refused(formId, parseWithZod(form, { schema: z.object({}) }).reply({ formErrors: [message] }), status);
  if (intent === "profile") {
    const submission = parseWithZod(form, { schema: ProfileSchema });
    if (submission.status !== "success") return refused("profile", submission.reply());
    await saveProfile(input.organisationId, submission.value, actor);
    return redirectWithToast(input.path, { kind: "success", message: "Profile saved." });
  }
  if (intent === "add-address") {
    const submission = parseWithZod(form, { schema: AddressSchema });
    if (submission.status !== "success") return refused("address-new", submission.reply());
    await addAddress(input.organisationId, submission.value, actor);
    return redirectWithToast(input.path, { kind: "success", message: `Address “${submission.value.label}” added.` });
  }
  if (intent === "edit-address" || intent === "remove-address" || intent === "default-address") {
    const id = AddressIdSchema.safeParse({ addressId: form.get("addressId") ?? undefined });
    if (!id.success) return sentence("addresses", "There is no such address on this profile.", 404);
    const { addressId } = id.data;
    if (intent === "edit-address") {
      const submission = parseWithZod(form, { schema: AddressSchema });
      if (submission.status !== "success") return refused(`address-${addressId}`, submission.reply());
      await orNotFound(updateAddress(input.organisationId, addressId, submission.value, actor));
      return redirectWithToast(input.path, { kind: "success", message: `Address “${submission.value.label}” saved.` });
    }
    if (intent === "remove-address") {
      await orNotFound(removeAddress(input.organisationId, addressId, actor));
      return redirectWithToast(input.path, { kind: "success", message: "Address removed." });
    }
    await orNotFound(setDefaultAddress(input.organisationId, addressId, actor));
    return redirectWithToast(input.path, { kind: "success", message: "Default address chosen." });
  }
  return sentence("profile", "Choose what to save from the profile page.", 400);
}
