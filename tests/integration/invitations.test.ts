// Invitations into an organisation: the e-mail through the outbox, accepting with the invited address only, and every refusal.
import { and, eq, sql } from "drizzle-orm";
import { beforeAll, describe, expect, it } from "vitest";
import { db, schema } from "~/db/client.server";
import { seedDemo } from "~/demo/seed.server";
import { action as clientMembersAction, loader as clientMembersLoader } from "~/routes/client/members";
import { action as labMembersAction } from "~/routes/lab/members";
import { action as createAccountAction } from "~/routes/public/create-account";
import { action as acceptAction, loader as invitationLoader } from "~/routes/public/invitation";
import { action as signInAction } from "~/routes/public/sign-in";
import { callRoute, cookieFrom, formRequest, getRequest } from "./route-call";

const OWNER = "owner@halvorsen.example";
const MEMBER = "member@halvorsen.example";
const OTHER_OWNER = "owner@pinecrest.example";
const LAB_MANAGER = "lab@graniteridge.example";

const cookies: Record<string, string> = {};
async function as(email: string) {
  cookies[email] ??= cookieFrom(await callRoute(signInAction, formRequest("/sign-in", { email, password: "diffractory-demo" })))!;
  return cookies[email];
}

async function orgId(name: string) {
  const [o] = await db.select({ id: schema.organisations.id }).from(schema.organisations).where(eq(schema.organisations.name, name));
  return o.id;
}

const invitationMails = (to: string) =>
  db
    .select()
    .from(schema.outboxMessages)
    .where(and(eq(schema.outboxMessages.kind, "organisation_invitation"), sql`lower(${schema.outboxMessages.to}) = lower(${to})`));

/** Invites through the members screen and returns the token from the e-mail's link. */
async function invite(by: string, email: string, role: string, path = "/client/members") {
  const fn = path === "/lab/members" ? labMembersAction : clientMembersAction;
  const answer = await callRoute(fn, formRequest(path, { intent: "invite", email, role }, await as(by)));
  expect(answer.status).toBe(302);
  const mails = await invitationMails(email);
  const token = mails.at(-1)!.text.match(/\/invitations\/([A-Za-z0-9_-]+)/)![1];
  return token;
}

async function invitationByEmail(email: string) {
  return db.select().from(schema.organisationInvitations).where(sql`lower(${schema.organisationInvitations.email}) = lower(${email})`);
}

const accept = async (token: string, cookie?: string) => callRoute(acceptAction, formRequest(`/invitations/${token}`, {}, cookie), { token });

beforeAll(async () => {
  await seedDemo();
});

describe("inviting a person who has no account yet", () => {
  const email = "nadia.ferreira@ferrolith.example";
  let token = "";

  it("writes exactly one e-mail to the invited address, with the link, and lists the invitation as pending", async () => {
    token = await invite(OWNER, email, "member");
    const mails = await invitationMails(email);
    expect(mails).toHaveLength(1);
    expect(mails[0].to).toBe(email);
    expect(mails[0].userId).toBeNull();
    expect(mails[0].subject).toBe("Invitation to join Halvorsen Cathode Works on Diffractory");
    expect(mails[0].text).toContain(`/invitations/${token}`);
    expect(mails[0].html).toContain(`/invitations/${token}`);
    const [row] = await invitationByEmail(email);
    expect(row.tokenHash).not.toContain(token);
    expect(row.expiresAt.getTime() - row.createdAt.getTime()).toBeCloseTo(7 * 86_400_000, -4);
    const page = await callRoute(clientMembersLoader, getRequest("/client/members", await as(OWNER)));
    expect((page.body as { invitations: { email: string }[] }).invitations.map((i) => i.email)).toContain(email);
  });

  it("shows the organisation to someone signed out and asks them to sign in or create an account", async () => {
    const page = await callRoute(invitationLoader, getRequest(`/invitations/${token}`), { token });
    expect(page.status).toBe(200);
    const body = page.body as { organisation: { name: string }; status: string; signedInAs: string | null; createAccountPath: string };
    expect(body.organisation.name).toBe("Halvorsen Cathode Works");
    expect(body.status).toBe("pending");
    expect(body.signedInAs).toBeNull();
    expect(body.createAccountPath).toContain(encodeURIComponent(`/invitations/${token}`));
  });

  it("lets them create an account, come back and accept: a membership in the inviting organisation, once", async () => {
    const created = await callRoute(
      createAccountAction,
      formRequest("/create-account", {
        kind: "client",
        name: "Nadia Ferreira",
        email: "Nadia.Ferreira@Ferrolith.example",
        password: "a long enough password",
        organisationName: "Ferrolith Pigments",
        redirectTo: `/invitations/${token}`,
      }),
    );
    expect(created.status).toBe(302);
    expect(created.headers.get("location")).toBe(`/invitations/${token}`);
    const cookie = cookieFrom(created)!;

    const accepted = await accept(token, cookie);
    expect(accepted.status).toBe(302);
    expect(accepted.headers.get("location")).toBe("/client");

    const [user] = await db.select().from(schema.users).where(sql`lower(${schema.users.email}) = ${email}`);
    const memberships = await db
      .select({ organisationId: schema.memberships.organisationId, role: schema.memberships.role })
      .from(schema.memberships)
      .where(eq(schema.memberships.userId, user.id));
    expect(memberships).toHaveLength(2);
    expect(memberships).toContainEqual({ organisationId: await orgId("Halvorsen Cathode Works"), role: "member" });
    const [session] = await db.select().from(schema.sessions).where(eq(schema.sessions.userId, user.id));
    expect(session.activeOrganisationId).toBe(await orgId("Halvorsen Cathode Works"));

    const [row] = await invitationByEmail(email);
    expect(row.acceptedAt).not.toBeNull();
    const audits = await db
      .select()
      .from(schema.auditLog)
      .where(and(eq(schema.auditLog.action, "invitation_accepted"), eq(schema.auditLog.subjectId, row.id)));
    expect(audits).toHaveLength(1);

    // The same link a second time is refused and changes nothing.
    const again = await accept(token, cookie);
    expect(again.status).toBe(410);
    expect((again.body as { formErrors: string[] }).formErrors[0]).toMatch(/already been used/);
    const after = await db.select().from(schema.memberships).where(eq(schema.memberships.userId, user.id));
    expect(after).toHaveLength(2);
  });
});

describe("who may invite, and what", () => {
  it("refuses a member who is not an owner (403)", async () => {
    const answer = await callRoute(
      clientMembersAction,
      formRequest("/client/members", { intent: "invite", email: "someone@elsewhere.example", role: "member" }, await as(MEMBER)),
    );
    expect(answer.status).toBe(403);
    expect(await invitationByEmail("someone@elsewhere.example")).toHaveLength(0);
  });

  it("refuses a lab role on a client organisation, an unknown role and a bad e-mail (400), sending nothing", async () => {
    const cookie = await as(OWNER);
    const labRole = await callRoute(
      clientMembersAction,
      formRequest("/client/members", { intent: "invite", email: "wrong.kind@elsewhere.example", role: "operator" }, cookie),
    );
    expect(labRole.status).toBe(400);
    expect((labRole.body as { result: { error: Record<string, string[]> } }).result.error.role[0]).toMatch(/owner and member/);
    const unknown = await callRoute(
      clientMembersAction,
      formRequest("/client/members", { intent: "invite", email: "wrong.kind@elsewhere.example", role: "chief" }, cookie),
    );
    expect(unknown.status).toBe(400);
    const badEmail = await callRoute(
      clientMembersAction,
      formRequest("/client/members", { intent: "invite", email: "not an address", role: "member" }, cookie),
    );
    expect(badEmail.status).toBe(400);
    expect((badEmail.body as { result: { error: Record<string, string[]> } }).result.error.email[0]).toMatch(/valid e-mail/);
    expect(await invitationByEmail("wrong.kind@elsewhere.example")).toHaveLength(0);
    expect(await invitationMails("wrong.kind@elsewhere.example")).toHaveLength(0);
  });

  it("refuses to invite someone who already belongs", async () => {
    const answer = await callRoute(
      clientMembersAction,
      formRequest("/client/members", { intent: "invite", email: MEMBER.toUpperCase(), role: "member" }, await as(OWNER)),
    );
    expect(answer.status).toBe(400);
  });

  it("lets a lab manager invite an operator, but not a client role", async () => {
    const token = await invite(LAB_MANAGER, "new.operator@graniteridge.example", "operator", "/lab/members");
    expect(token).toBeTruthy();
    const wrong = await callRoute(
      labMembersAction,
      formRequest("/lab/members", { intent: "invite", email: "x@graniteridge.example", role: "member" }, await as(LAB_MANAGER)),
    );
    expect(wrong.status).toBe(400);
  });
});

describe("refused tokens", () => {
  it("refuses an expired invitation", async () => {
    const email = "late@elsewhere.example";
    const token = await invite(OWNER, email, "member");
    await db
      .update(schema.organisationInvitations)
      .set({ expiresAt: new Date(Date.now() - 1000) })
      .where(eq(schema.organisationInvitations.email, email));
    const signedUp = await callRoute(
      createAccountAction,
      formRequest("/create-account", { kind: "client", name: "Late Comer", email, password: "a long enough password", organisationName: "Late Labs Supply" }),
    );
    const answer = await accept(token, cookieFrom(signedUp));
    expect(answer.status).toBe(410);
    expect((answer.body as { formErrors: string[] }).formErrors[0]).toMatch(/expired/);
    const page = await callRoute(invitationLoader, getRequest(`/invitations/${token}`), { token });
    expect((page.body as { status: string }).status).toBe("expired");
  });

  it("refuses a withdrawn invitation, and its page says so", async () => {
    const email = MEMBER.replace("halvorsen", "pinecrest");
    const token = await invite(OWNER, email, "member");
    const [row] = await invitationByEmail(email);
    const revoked = await callRoute(clientMembersAction, formRequest("/client/members", { intent: "revoke", invitationId: row.id }, await as(OWNER)));
    expect(revoked.status).toBe(302);
    const answer = await accept(token, await as(email));
    expect(answer.status).toBe(410);
    expect((answer.body as { formErrors: string[] }).formErrors[0]).toMatch(/withdrawn/);
    const memberships = await db
      .select()
      .from(schema.memberships)
      .innerJoin(schema.users, eq(schema.users.id, schema.memberships.userId))
      .where(eq(schema.users.email, email));
    expect(memberships).toHaveLength(1);
  });

  it("refuses someone signed in with a different e-mail (403), nothing changed", async () => {
    const token = await invite(OWNER, "intended@elsewhere.example", "member");
    const answer = await accept(token, await as(OTHER_OWNER));
    expect(answer.status).toBe(403);
    expect((answer.body as { formErrors: string[] }).formErrors[0]).toMatch(/intended@elsewhere\.example/);
    const [row] = await invitationByEmail("intended@elsewhere.example");
    expect(row.acceptedAt).toBeNull();
    const page = await callRoute(invitationLoader, getRequest(`/invitations/${token}`, await as(OTHER_OWNER)), { token });
    expect((page.body as { emailMatches: boolean }).emailMatches).toBe(false);
  });

  it("answers 404 for an unknown token and sends a signed-out acceptance to sign in", async () => {
    expect((await callRoute(invitationLoader, getRequest("/invitations/nope"), { token: "nope" })).status).toBe(404);
    const signedOut = await accept("nope");
    expect(signedOut.status).toBe(302);
    expect(signedOut.headers.get("location")).toMatch(/^\/sign-in\?redirectTo=/);
    expect((await accept("nope", await as(OWNER))).status).toBe(404);
  });

  it("does not let another organisation revoke an invitation (404), which stays pending", async () => {
    await invite(OWNER, "keeps@elsewhere.example", "member");
    const [row] = await invitationByEmail("keeps@elsewhere.example");
    const answer = await callRoute(clientMembersAction, formRequest("/client/members", { intent: "revoke", invitationId: row.id }, await as(OTHER_OWNER)));
    expect(answer.status).toBe(404);
    const [still] = await invitationByEmail("keeps@elsewhere.example");
    expect(still.revokedAt).toBeNull();
  });
});
