// Who may use a loader or action: every protected route calls one of these itself.
import { asc, eq, sql } from "drizzle-orm";
import { data, redirect } from "react-router";
import { db, schema } from "~/db/client.server";
import type { MembershipRole, Organisation, OrganisationKind, User } from "~/db/schema";
import { oncePerRequest } from "./request-scope.server";
import { getSession } from "./session.server";

export interface OrgMembership {
  organisation: Organisation;
  role: MembershipRole;
}

export interface Actor {
  user: User;
  memberships: OrgMembership[];
  /** The organisation the person is working in now (they switch between them). */
  active: OrgMembership | null;
}

const isApiRequest = (request: Request) => new URL(request.url).pathname.startsWith("/api/");

export function forbidden(message = "You do not have access to this page."): never {
  throw data({ message }, { status: 403 });
}

export function notFound(message = "There is nothing here."): never {
  throw data({ message }, { status: 404 });
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

// Read on every signed-in page: a named prepared statement, built once and planned once per connection.
const membershipsOf = db
  .select({ organisation: schema.organisations, role: schema.memberships.role })
  .from(schema.memberships)
  .innerJoin(schema.organisations, eq(schema.organisations.id, schema.memberships.organisationId))
  .where(eq(schema.memberships.userId, sql.placeholder("userId")))
  .orderBy(asc(schema.memberships.createdAt))
  .prepare("memberships_of_user");

/** A person with their memberships; the active organisation is the given one, else their first. */
export async function actorFor(user: User, activeOrganisationId: string | null): Promise<Actor> {
  const rows = await membershipsOf.execute({ userId: user.id });
  const active = rows.find((m) => m.organisation.id === activeOrganisationId) ?? rows[0] ?? null;
  return { user, memberships: rows, active };
}

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
