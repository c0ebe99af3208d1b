// POST /sign-out ends the session; a GET only redirects home (mutations happen in actions).
import { redirect } from "react-router";
import { audit } from "~/models/audit.server";
import { requireUser } from "~/utils/permissions.server";
import { endSession } from "~/utils/session.server";
import { redirectWithToast } from "~/utils/toast.server";
import type { Route } from "./+types/sign-out";

export async function loader(_: Route.LoaderArgs) {
  return redirect("/");
}

export async function action({ request, context }: Route.ActionArgs) {
  const actor = await requireUser(request);
  const cookie = await endSession(request);
  await audit({
    actorUserId: actor.user.id,
    action: "signed_out",
    subjectType: "user",
    subjectId: actor.user.id,
    clientAddress: context.clientAddress,
  });
  return redirectWithToast("/", { kind: "info", message: "You are signed out." }, { headers: [["Set-Cookie", cookie]] });
}
