// POST /api/webhooks/payments — signed events from the payment provider; a bad signature changes nothing.
import { BadWebhook, receiveWebhook } from "~/models/payments/webhooks.server";
import { PaymentProblem } from "~/models/payments/provider.server";
import { readBodyText } from "~/utils/form.server";
import type { Route } from "./+types/webhooks-payments";

export async function loader(_: Route.LoaderArgs) {
  return Response.json({ error: "Send provider events with POST." }, { status: 405, headers: { Allow: "POST" } });
}

// The caller is the payment provider; the signature over the raw body is its credential.
export async function action({ request }: Route.ActionArgs) {
  if (request.method !== "POST") return Response.json({ error: "Send provider events with POST." }, { status: 405 });
  // At most 1 MB, declared or sent; a body cut off on the way is a 400.
  const raw = await readBodyText(request);
  try {
    const result = await receiveWebhook(raw, request.headers.get("stripe-signature"));
    return Response.json({ received: true, duplicate: result.duplicate, ...("ignored" in result ? { ignored: result.ignored } : {}) });
  } catch (err) {
    if (err instanceof BadWebhook) return Response.json({ error: err.message }, { status: 400 });
    // The provider retries on 5xx; a provider outage while we re-read the object is such a case.
    if (err instanceof PaymentProblem) return Response.json({ error: err.message }, { status: 503 });
    throw err;
  }
}
