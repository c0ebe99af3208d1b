// Who may use a loader or action: every protected route calls one of these itself. Each guard reads the request,
// asks the models, and answers a refusal as HTTP (a redirect to sign-in, a 401, 403 or 404) for React Router to send.
import { eq } from "drizzle-orm";
import { data, redirect } from "react-router";
import { db, schema } from "~/db/client.server";
import { isUuid } from "~/domain/ids";
import type { MembershipRole, OrganisationKind } from "~/db/schema";
import type { Section } from "~/domain/workspaces";
import { ADMIN_SECTIONS, CLIENT_SECTIONS, LAB_SECTIONS } from "~/domain/workspaces";
import { actorFor, type Actor } from "~/models/accounts/actors.server";
import { API_TOKEN_RATE_LIMIT, apiTokenBySecret, markApiTokenUsed } from "~/models/accounts/api-tokens.server";
import { checkWithOrder } from "~/models/checks/queries.server";
import { orderForOrganisation } from "~/models/orders/queries.server";
import { type DisputeReadSubject, disputedOrder, disputedOrderFile, logDisputeRead } from "~/models/orders/disputes.server";
import { downloadable, fileForOrganisations } from "~/models/files/files.server";
import { NoSuchRecord } from "~/models/errors";
import { labQuoteOf } from "~/models/requests/quotes.server";
import { ownRequestOf, requestVisibleToLab } from "~/models/requests/requests.server";
import { hitRateLimit, rateLimitedResponse } from "./rate-limit.server";
import { oncePerRequest } from "./request-scope.server";
import { getSession, setActiveOrganisation } from "./session.server";
import { redirectWithToast } from "./toast.server";

const isApiRequest = (request: Request) => new URL(request.url).pathname.startsWith("/api/");

export function forbidden(message = "You do not have access to this page."): never {
  throw data({ message }, { status: 403 });
}

export function notFound(message = "There is nothing here."): never {
  throw data({ message }, { status: 404 });
}

/**
 * Runs a model operation and answers its NoSuchRecord (a row the request named that is missing or not the
 * caller's) as a 404 with the model's sentence; any other error passes through untouched.
 */
export async function orNotFound<T>(work: Promise<T>): Promise<T> {
  try {
    return await work;
  } catch (err) {
    if (err instanceof NoSuchRecord) notFound(err.message);
    throw err;
  }
}

/**
 * The request's person with their memberships, looked up once per GET request however many of its loaders
 * ask (app/utils/request-scope.server.ts); each caller still makes its own checks on the answer.
 */
function loadActor(request: Request): Promise<Actor | null> {
  return oncePerRequest(`actor ${request.headers.get("Cookie") ?? ""}`, () => lookUpActor(request));
}

async function lookUpActor(request: Request): Promise<Actor | null> {
  const found = await getSession(request);
  // Password given but not yet the second-factor code: signed in for nothing but the code screen.
  if (!found || found.session.awaitingSecondFactor) return null;
  return actorFor(found.user, found.session.activeOrganisationId);
}

/** The code screen of sign-in: only a session that has passed the password and waits for its code. */
export async function requireSecondFactorPending(request: Request) {
  const found = await getSession(request);
  if (found?.session.awaitingSecondFactor && found.user.totpEnabledAt && found.user.totpSecret) return found;
  if (found) throw redirect(workspacePath(await actorFor(found.user, found.session.activeOrganisationId)));
  throw redirect("/sign-in");
}

/** Where admins without a second factor are sent before any admin screen works. */
export const ENROL_PATH = "/account/security?enrol=required";

/** The signed-in person, or null; for pages that look different when signed in. */
export function getOptionalActor(request: Request) {
  return loadActor(request);
}

/** The signed-in person; pages redirect to sign-in, API routes answer 401. */
export async function requireUser(request: Request): Promise<Actor> {
  const actor = await loadActor(request);
  if (actor) return actor;
  if (isApiRequest(request)) throw data({ error: "Sign in first." }, { status: 401 });
  const url = new URL(request.url);
  throw redirect(`/sign-in?redirectTo=${encodeURIComponent(url.pathname + url.search)}`);
}

/** Signed-out only pages (sign in, create account) send signed-in people to their workspace. */
export async function requireAnonymous(request: Request) {
  const actor = await loadActor(request);
  if (actor) throw redirect(workspacePath(actor));
}

/**
 * The person's membership in an organisation of the given kind, optionally with one of the given roles.
 * The active organisation wins; otherwise the first of that kind.
 */
export async function requireOrgRole(request: Request, kind: OrganisationKind, roles?: MembershipRole[]) {
  const actor = await requireUser(request);
  const ofKind = actor.memberships.filter((m) => m.organisation.kind === kind);
  const membership = actor.active?.organisation.kind === kind ? actor.active : ofKind[0];
  if (!membership) forbidden(kind === "lab" ? "This page is for lab staff." : "This page is for client organisations.");
  if (roles && !roles.includes(membership.role)) forbidden(`This needs the ${roles.join(" or ")} role in ${membership.organisation.name}.`);
  return { ...actor, membership };
}

export async function requireAdmin(request: Request) {
  const actor = await requireUser(request);
  if (!actor.user.isAdmin) forbidden("This page is for platform admins.");
  if (!actor.user.totpEnabledAt) {
    if (isApiRequest(request)) throw data({ error: "Admins set up a second factor at /account/security first." }, { status: 403 });
    throw redirect(ENROL_PATH);
  }
  return actor;
}

/** Where a person lands after signing in: their active organisation's workspace, or admin. */
export function workspacePath(actor: Pick<Actor, "user" | "active">) {
  if (actor.active?.organisation.kind === "lab") return "/lab";
  if (actor.active?.organisation.kind === "client") return "/client";
  if (actor.user.isAdmin) return "/admin";
  return "/";
}

// ───────────── Workspaces ─────────────

export type WorkspaceKind = "client" | "lab" | "admin";

const WORKSPACES: Record<WorkspaceKind, { title: string; sections: Section[] }> = {
  client: { title: "Client workspace", sections: CLIENT_SECTIONS },
  lab: { title: "Lab workspace", sections: LAB_SECTIONS },
  admin: { title: "Admin", sections: ADMIN_SECTIONS },
};

export function workspaceOf(request: Request): WorkspaceKind {
  const first = new URL(request.url).pathname.split("/")[1];
  if (first === "client" || first === "lab" || first === "admin") return first;
  notFound();
}

/** Admits only the people of this workspace: members of a client or lab organisation, or admins. */
export async function requireWorkspace(request: Request) {
  const kind = workspaceOf(request);
  const actor = kind === "admin" ? await requireAdmin(request) : await requireOrgRole(request, kind);
  return { kind, actor, ...WORKSPACES[kind] };
}

// ───────────── Links into another of one's organisations ─────────────

/**
 * A person in several organisations who opens a link (an e-mail, a notice) to an order or request of another of
 * their organisations: on a page load, the session switches there and the same page loads again with "Switched to
 * <organisation>". Only a member of the owning organisation (with one of `roles`, when given) is switched; anyone
 * else, an action and an API call fall through to the caller's 404.
 */
async function switchToOwner(
  request: Request,
  actor: Actor & { membership?: Actor["memberships"][number] },
  kind: OrganisationKind,
  owns: (organisationId: string) => Promise<boolean>,
  roles?: MembershipRole[],
) {
  if (request.method !== "GET" || isApiRequest(request)) return;
  const current = actor.membership?.organisation.id ?? actor.active?.organisation.id;
  for (const m of actor.memberships) {
    if (m.organisation.kind !== kind || m.organisation.id === current || (roles && !roles.includes(m.role))) continue;
    if (!(await owns(m.organisation.id))) continue;
    await setActiveOrganisation(request, m.organisation.id);
    const url = new URL(request.url);
    throw await redirectWithToast(url.pathname + url.search, { kind: "info", message: `Switched to ${m.organisation.name}.` });
  }
}

// ───────────── Orders and their checks ─────────────

/**
 * The order as seen from one side, with the actor. Other organisations' orders, and ids that are no order,
 * are the same 404; a person of the other kind of organisation, or without one of `roles`, gets requireOrgRole's
 * 403. Resource routes that a fetch calls give `jsonNotFound`, the sentence of a JSON `{ error }` 404, since
 * the error page's 404 would mean nothing to their callers.
 */
export async function requireOrderSide(
  request: Request,
  side: "client" | "lab",
  orderId: string,
  { roles, jsonNotFound }: { roles?: MembershipRole[]; jsonNotFound?: string } = {},
) {
  const actor = await requireOrgRole(request, side, roles);
  const found = await orderForOrganisation(orderId, actor.membership.organisation.id);
  if (found?.side !== side) {
    await switchToOwner(request, actor, side, async (id) => (await orderForOrganisation(orderId, id))?.side === side, roles);
    if (jsonNotFound) throw Response.json({ error: jsonNotFound }, { status: 404 });
    notFound(side === "client" ? "No such order in your organisation." : "No such order for your lab.");
  }
  return { actor, order: found.order };
}

/**
 * The order with the side of the first of the person's organisations that is on it, or null. The active
 * organisation is tried first, so a person on both sides of an order sees their current side.
 */
async function partyTo(actor: Actor, orderId: string) {
  const ordered = [...actor.memberships].sort(
    (a, b) => Number(b.organisation.id === actor.active?.organisation.id) - Number(a.organisation.id === actor.active?.organisation.id),
  );
  for (const m of ordered) {
    const found = await orderForOrganisation(orderId, m.organisation.id);
    if (found) return { ...found, organisation: m.organisation };
  }
  return null;
}

/** The order for anyone on either side of it (the API's order routes); everyone else gets the same 404. */
export async function requireOrderParty(request: Request, orderId: string) {
  const actor = await requireUser(request);
  const found = await partyTo(actor, orderId);
  if (!found) notFound("No such order for your organisations.");
  return { actor, ...found };
}

/** An admin who has set up the second factor (a guard for admin reads outside the admin workspace). */
const isFullAdmin = (actor: Actor) => actor.user.isAdmin && !!actor.user.totpEnabledAt;

/**
 * A lattice check with its file, order and the viewer's side, for the order's client organisation and its lab,
 * and for an admin when the order has a dispute (open or decided; each such read is audit-logged with `what`);
 * a check of anyone else's order is the same 404 as a missing one. `statusOnly` (the status API) reads the check
 * without its stored result, keeping only its `withinWindow`.
 */
export async function requireCheckAccess(
  request: Request,
  checkId: string,
  { what = "check", clientAddress, statusOnly }: { what?: string; clientAddress?: string; statusOnly?: boolean } = {},
) {
  const actor = await requireUser(request);
  const found = await checkWithOrder(checkId, { statusOnly });
  if (!found) notFound("There is no such check.");
  const party = await partyTo(actor, found.file.orderId);
  if (party) return { actor, ...found, order: party.order, side: party.side, organisation: party.organisation };
  const disputed = isFullAdmin(actor) ? await disputedOrder(found.file.orderId) : null;
  if (!disputed) notFound("There is no such check.");
  await logDisputeRead(
    actor.user.id,
    disputed,
    { type: "check", id: found.check.id, what: `${what} of ${found.file.name} v${found.file.version}` },
    clientAddress,
  );
  return { actor, ...found, order: disputed, side: "admin" as const, organisation: { name: "Diffractory admin (dispute)" } };
}

/**
 * The order for its parties, and for an admin when the order has a dispute (the read is audit-logged with
 * `what`); everyone else gets the same 404. The side is the viewer's: client, lab or admin.
 */
export async function requireOrderPartyOrDisputeAdmin(
  request: Request,
  orderId: string,
  { what, subject, clientAddress }: { what: string; subject?: DisputeReadSubject; clientAddress?: string },
) {
  const actor = await requireUser(request);
  const found = await partyTo(actor, orderId);
  if (found) return { actor, order: found.order, side: found.side };
  const disputed = isFullAdmin(actor) ? await disputedOrder(orderId) : null;
  if (!disputed) notFound("No such order for your organisations.");
  await logDisputeRead(actor.user.id, disputed, subject ?? { type: "order", id: disputed.id, what }, clientAddress);
  return { actor, order: disputed, side: "admin" as const };
}

/**
 * The order for its parties and for any admin with the second factor (the invoices and credit notes of an order,
 * which admins read and export anyway); everyone else gets the same 404. The side is the viewer's.
 */
export async function requireOrderPartyOrAdmin(request: Request, orderId: string) {
  const actor = await requireUser(request);
  const found = await partyTo(actor, orderId);
  if (found) return { actor, order: found.order, side: found.side };
  const [order] = isFullAdmin(actor) && isUuid(orderId) ? await db.select().from(schema.orders).where(eq(schema.orders.id, orderId)) : [];
  if (!order) notFound("No such order for your organisations.");
  return { actor, order, side: "admin" as const };
}

/**
 * A delivered file for a download: for the order's parties as `fileForOrganisations` says, and for an admin when
 * the file's order has a dispute (the download is audit-logged). Anything else is the same 404.
 */
export async function requireFileDownload(request: Request, fileId: string, clientAddress?: string) {
  const actor = await requireUser(request);
  const found = await fileForOrganisations(
    fileId,
    actor.memberships.map((m) => m.organisation.id),
  );
  if (found && downloadable(found.file, found.side)) return { actor, file: found.file };
  const disputed = !found && isFullAdmin(actor) ? await disputedOrderFile(fileId) : null;
  if (!disputed || !downloadable(disputed.file, "lab")) notFound("No such file for your organisations.");
  await logDisputeRead(
    actor.user.id,
    disputed.order,
    { type: "order_file", id: disputed.file.id, what: `download of ${disputed.file.name} v${disputed.file.version}` },
    clientAddress,
  );
  return { actor, file: disputed.file };
}

// ───────────── Requests ─────────────

/**
 * The organisation's own request; another organisation's, and an id that is no request, are the same 404. With
 * `follow` (a page's loader), a request of another of the person's client organisations switches there first.
 */
export async function requireOwnRequest(requestId: string | undefined, organisationId: string, follow?: { request: Request; actor: Actor }) {
  const row = await ownRequestOf(requestId, organisationId);
  if (!row) {
    if (follow) await switchToOwner(follow.request, follow.actor, "client", async (id) => !!(await ownRequestOf(requestId, id)));
    notFound("No such request in your organisation.");
  }
  return row;
}

/**
 * A request the lab may see (open to it, or one it has quoted on); anything else is the same 404, so a lab
 * cannot tell another's invitation from a missing request.
 */
export async function requireRequestForLab(requestId: string | undefined, labId: string, follow?: { request: Request; actor: Actor }) {
  const row = await requestVisibleToLab(requestId, labId);
  if (!row) {
    if (follow) await switchToOwner(follow.request, follow.actor, "lab", async (id) => !!(await requestVisibleToLab(requestId, id)));
    notFound("No such request.");
  }
  return row;
}

/** The lab's own quote; another lab's, and an id that is no quote, are the same 404. */
export async function requireLabQuote(quoteId: string | undefined, labId: string) {
  const row = await labQuoteOf(quoteId, labId);
  if (!row) notFound("No such quote.");
  return row;
}

/**
 * A wizard step's access check, called by each step's loader and action: a client member and the
 * organisation's own request.
 */
export async function requireOwnDraft(request: Request, requestId: string | undefined) {
  const actor = await requireOrgRole(request, "client");
  const row = await requireOwnRequest(requestId, actor.membership.organisation.id);
  return { actor, row };
}

// ───────────── Instrument computers ─────────────

const unauthorized = (error: string) => Response.json({ error }, { status: 401, headers: { "WWW-Authenticate": 'Bearer realm="diffractory"' } });

/**
 * The upload API's own "require" step: a valid, unrevoked bearer token, counted against its rate limit.
 * Throws the 401 or 429 answer; returns the token row (its `labId` scopes every lookup).
 */
export async function requireApiToken(request: Request) {
  const header = request.headers.get("Authorization") ?? "";
  const match = /^Bearer\s+(\S+)$/i.exec(header);
  if (!match) throw unauthorized("Send an API token as `Authorization: Bearer <token>`.");
  const token = await apiTokenBySecret(match[1]);
  if (!token) throw unauthorized("This API token is not known.");
  if (token.revokedAt) throw unauthorized("This API token has been revoked.");
  const limit = await hitRateLimit(`api-token:${token.id}`, API_TOKEN_RATE_LIMIT);
  if (!limit.ok) throw rateLimitedResponse(limit);
  await markApiTokenUsed(token.id);
  return token;
}
