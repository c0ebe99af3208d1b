// What the request wizard's step loaders share beyond their guard: a published request leaves the wizard.
import { redirect } from "react-router";
import type { MarketRequest } from "~/db/schema";

/** Loaders of wizard steps send a published request to its own page. */
export function redirectIfPublished(row: MarketRequest) {
  if (row.state !== "draft") throw redirect(`/client/requests/${row.id}`);
}
