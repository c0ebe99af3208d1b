// The HTTP side of messages: which thread a person's request reaches, and the JSON answers of the message API
// (docs/design.md#messages). Both thread kinds answer 404 to anyone not party to them, admins included.
import type { Actor } from "~/models/accounts/actors.server";
import {
  ATTACHMENT_RULE,
  attachmentPrefix,
  markThreadRead,
  orderThreadFor,
  postMessage,
  requestThreadForClient,
  requestThreadForLab,
  requestThreadsOfClient,
  threadMessages,
  type Side,
  type Thread,
} from "~/models/messages/messages.server";
import { ownRequestOf } from "~/models/requests/requests.server";
import { hasNul, NUL_REFUSAL, readForm } from "~/utils/form.server";
import { readJsonObject, uploadTargetResponse } from "~/utils/uploads.server";
import { UploadProblem } from "~/models/files/files.server";

export interface Party {
  thread: Thread;
  side: Side;
  /** The organisation the person acts for in this thread. */
  organisationId: string;
}

/** The person's memberships, the active organisation first (a person on both sides speaks for the current one). */
const activeFirst = (actor: Actor) =>
  [...actor.memberships].sort(
    (a, b) => Number(b.organisation.id === actor.active?.organisation.id) - Number(a.organisation.id === actor.active?.organisation.id),
  );

/**
 * The request thread a person reaches: a lab member reaches their lab's own thread; the client's member reaches
 * the thread with the lab named by `lab` (slug or id). Null for anyone else.
 */
export async function requestThreadOfActor(actor: Actor, requestId: string | undefined, lab: string | null): Promise<Party | null> {
  for (const m of activeFirst(actor)) {
    if (m.organisation.kind === "lab") {
      const thread = await requestThreadForLab(requestId, m.organisation.id);
      if (thread) return { thread, side: "lab", organisationId: m.organisation.id };
    } else if (m.organisation.kind === "client") {
      const found = await requestThreadForClient(requestId, m.organisation.id, lab);
      if (found) return { thread: found.thread, side: "client", organisationId: m.organisation.id };
    }
  }
  return null;
}

/** The order thread a person reaches through one of their organisations; null for anyone else. */
export async function orderThreadOfActor(actor: Actor, orderId: string | undefined): Promise<Party | null> {
  for (const m of activeFirst(actor)) {
    const found = await orderThreadFor(orderId, m.organisation.id);
    if (found) return { ...found, organisationId: m.organisation.id };
  }
  return null;
}

const NO_STORE = { "Cache-Control": "private, no-store" };

/** The thread as JSON (messages oldest first), marking it read for the person. */
export async function threadJson(actor: Actor, party: Party) {
  const messages = await threadMessages(party.thread);
  await markThreadRead(actor.user.id, party.thread);
  return Response.json(
    {
      thread: {
        kind: party.thread.kind,
        requestId: party.thread.requestId,
        orderId: party.thread.orderId,
        yourSide: party.side,
        open: party.thread.open,
        closedBecause: party.thread.closedBecause,
      },
      messages: messages.map((m) => ({ ...m, at: m.at.toISOString(), mine: m.side === party.side })),
    },
    { headers: NO_STORE },
  );
}

const text = (v: unknown) => (typeof v === "string" ? v : v == null ? "" : String(v));

/**
 * A POST to a thread: a form (the thread component: `intent=upload-target` asks where to upload an attachment,
 * anything else posts `body` with `attachmentKey`, `attachmentName`, `attachmentSha256`) or a JSON object
 * `{ body, attachment?: { storageKey, fileName, sha256 } }`. Answers 201 with the message id, or 400 with a sentence.
 */
export async function postToThread(request: Request, actor: Actor, party: Party) {
  const isJson = (request.headers.get("Content-Type") ?? "").toLowerCase().includes("application/json");
  let body: unknown;
  let attachment: { storageKey: unknown; fileName: unknown; sha256?: unknown } | null = null;
  if (isJson) {
    let json: Record<string, unknown>;
    try {
      json = await readJsonObject(request);
    } catch (err) {
      if (err instanceof UploadProblem) return Response.json({ error: err.message }, { status: err.status });
      throw err;
    }
    body = json.body;
    const a = json.attachment;
    if (a != null) {
      if (typeof a !== "object" || Array.isArray(a))
        return Response.json({ error: "Give the attachment as { storageKey, fileName, sha256 }." }, { status: 400 });
      const o = a as Record<string, unknown>;
      attachment = { storageKey: o.storageKey, fileName: o.fileName, sha256: o.sha256 };
    }
  } else {
    const form = await readForm(request);
    if (form.get("intent") === "upload-target") {
      if (!party.thread.open) return Response.json({ error: party.thread.closedBecause }, { status: 400 });
      return uploadTargetResponse(form, ATTACHMENT_RULE, attachmentPrefix(party.thread));
    }
    body = form.get("body");
    const key = text(form.get("attachmentKey"));
    if (key) attachment = { storageKey: key, fileName: text(form.get("attachmentName")), sha256: text(form.get("attachmentSha256")) };
  }
  if (hasNul(body)) return Response.json({ error: NUL_REFUSAL }, { status: 400 });
  const posted = await postMessage(party.thread, { userId: actor.user.id, organisationId: party.organisationId }, { body, attachment });
  if (!posted.ok) return Response.json({ error: posted.error }, { status: 400 });
  return Response.json({ id: posted.id }, { status: 201, headers: NO_STORE });
}

/** The 404 of both message routes, the same for a missing thread and one the person is not party to. */
export function noThread(kind: "request" | "order") {
  return Response.json(
    { error: kind === "order" ? "No such order for your organisations." : "No such conversation: check the request, and for a client, the lab (?lab=<slug>)." },
    { status: 404 },
  );
}

/**
 * For a member of the request's client organisation who names no lab: the request's conversations, one per lab
 * (slug, name, message and unread counts), as JSON; null for anyone else.
 */
export async function clientThreadList(actor: Actor, requestId: string | undefined) {
  for (const m of activeFirst(actor)) {
    if (m.organisation.kind !== "client") continue;
    const request = await ownRequestOf(requestId, m.organisation.id);
    if (!request || request.state === "draft") continue;
    const threads = await requestThreadsOfClient(request.id, actor.user.id, m.organisation.id);
    return Response.json(
      {
        requestId: request.id,
        threads: threads.map((t) => ({
          lab: { slug: t.slug, name: t.labName },
          messages: t.messages,
          unread: t.unread,
          lastAt: t.last?.toISOString() ?? null,
        })),
      },
      { headers: NO_STORE },
    );
  }
  return null;
}
