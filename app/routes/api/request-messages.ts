// GET/POST /api/requests/:id/messages — a request's thread between its client and one lab, before an order exists.
// A lab member reaches their lab's own thread; the client's members name the lab with ?lab=<slug or id>.
// Anyone else — other labs, other clients, admins — gets the same 404 as for a missing request (docs/design.md#messages).
import { clientThreadList, noThread, postToThread, requestThreadOfActor, threadJson } from "~/utils/messages.server";
import { requireUser } from "~/utils/permissions.server";
import type { Route } from "./+types/request-messages";

async function party(request: Request, id: string) {
  const actor = await requireUser(request);
  const lab = new URL(request.url).searchParams.get("lab");
  return { actor, party: await requestThreadOfActor(actor, id, lab) };
}

export async function loader({ request, params }: Route.LoaderArgs) {
  const { actor, party: found } = await party(request, params.id);
  if (found) return threadJson(actor, found);
  // The client without ?lab: the list of its conversations on the request, one per lab.
  const list = new URL(request.url).searchParams.has("lab") ? null : await clientThreadList(actor, params.id);
  return list ?? noThread("request");
}

export async function action({ request, params }: Route.ActionArgs) {
  if (request.method !== "POST") return Response.json({ error: "Only GET and POST are answered here." }, { status: 405 });
  const { actor, party: found } = await party(request, params.id);
  if (found) return postToThread(request, actor, found);
  const list = new URL(request.url).searchParams.has("lab") ? null : await clientThreadList(actor, params.id);
  return list ? Response.json({ error: "Name the lab to write to with ?lab=<the lab's slug>." }, { status: 400 }) : noThread("request");
}
