// What the request wizard's step loaders and actions share beyond their guard: a closed request leaves the
// wizard; an open one is edited step by step and each changed step makes a new revision (docs/design.md#the-requests-life).
import { redirect } from "react-router";
import type { MarketRequest } from "~/db/schema";
import type { Revision } from "~/models/requests/request-life.server";
import { notEditable } from "~/models/requests/requests.server";
import { redirectWithToast } from "~/utils/toast.server";

/** Loaders of wizard steps send a request that can no longer be changed (awarded, expired, withdrawn) to its own page. */
export function redirectIfPublished(row: MarketRequest) {
  if (notEditable(row)) throw redirect(`/client/requests/${row.id}`);
}

/**
 * Where a saved step leads: a draft goes on to the next step; an open request goes back to its page, saying
 * what changed and that the labs that quoted were told (or that nothing changed).
 */
export function stepSaved(row: MarketRequest, revision: Revision, next: string) {
  if (row.state !== "open") return redirect(`/client/requests/${row.id}/edit/${next}`);
  return redirectWithToast(`/client/requests/${row.id}`, {
    kind: "success",
    message: revision
      ? `Saved as revision ${revision.revision}: ${revision.summary}. Labs that quoted have been told and must re-confirm their quotes.`
      : "Saved; nothing the labs quote on has changed.",
  });
}
