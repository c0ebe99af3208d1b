// Accounts on the real PostgreSQL: creating, signing in, the failure limit, sessions, switching, /api/me.
import { eq } from "drizzle-orm";
import { beforeAll, describe, expect, it } from "vitest";
import { db, schema } from "~/db/client.server";
import { seedDemo } from "~/demo/seed.server";
import { action as createAccountAction } from "~/routes/public/create-account";
import { action as signInAction } from "~/routes/public/sign-in";
import { action as signOutAction } from "~/routes/account/sign-out";
import { action as switchAction } from "~/routes/account/switch-organisation";
import { loader as meLoader } from "~/routes/api/me";
import { startSession } from "~/utils/session.server";
import { callRoute, cookieFrom, formRequest, getRequest, signInAs } from "./route-call";

const PASSWORD = "diffractory-demo";

async function signIn(email: string, password = PASSWORD, address = "192.0.2.10") {
  return callRoute(signInAction, formRequest("/sign-in", { email, password }), {}, address);
}

beforeAll(async () => {
  await seedDemo();
});

describe("sign-in", () => {
  it("signs the client owner in, sets an httpOnly SameSite=Lax session cookie and lands in the client workspace", async () => {
    const answer = await signIn("owner@halvorsen.example");
    expect(answer.status).toBe(302);
    expect(answer.headers.get("location")).toBe("/client");
    const setCookie = answer.headers.getSetCookie().find((c) => c.startsWith("diffractory_session="))!;
    expect(setCookie).toMatch(/HttpOnly/i);
    expect(setCookie).toMatch(/SameSite=Lax/i);
    const me = await callRoute(meLoader, getRequest("/api/me", cookieFrom(answer)));
    expect(me.status).toBe(200);
    expect(me.body).toMatchObject({
      user: { email: "owner@halvorsen.example", isAdmin: false },
      organisations: [{ name: "Halvorsen Cathode Works", kind: "client", role: "owner" }],
    });
  });

  it("sends the lab manager to the lab workspace and the admin to admin", async () => {
    expect((await signIn("lab@graniteridge.example")).headers.get("location")).toBe("/lab");
    // The admin has a second factor: the password leads to the code screen, the code to admin.
    expect((await signIn("admin@diffractory.example")).headers.get("location")).toBe("/sign-in/code");
    expect((await signInAs("admin@diffractory.example")).answer.headers.get("location")).toBe("/admin");
  });

  it("answers a wrong password with a field error and no session", async () => {
    const answer = await signIn("owner@pinecrest.example", "not-the-password", "192.0.2.50");
    expect(answer.status).toBe(400);
    expect(cookieFrom(answer)).toBeUndefined();
    expect(JSON.stringify(answer.body)).toContain("The e-mail or password is not right.");
  });

  it("rejects a malformed e-mail with a field error, not a 500", async () => {
    const answer = await callRoute(signInAction, formRequest("/sign-in", { email: "not an e-mail", password: "x" }));
    expect(answer.status).toBe(400);
    expect(JSON.stringify(answer.body)).toContain("Enter a valid e-mail address.");
  });

  it("refuses the sixth failed attempt in ten minutes for one e-mail, even with the right password", async () => {
    const email = "member@pinecrest.example";
    for (let i = 1; i <= 5; i++) {
      const a = await signIn(email, `wrong-${i}`, `198.51.100.${i}`);
      expect(a.status, `attempt ${i}`).toBe(400);
    }
    const sixth = await signIn(email, PASSWORD, "198.51.100.99");
    expect(sixth.status).toBe(429);
    expect(JSON.stringify(sixth.body)).toContain("Too many failed sign-in attempts");
    expect(cookieFrom(sixth)).toBeUndefined();
  });

  it("checks at most five of 200 wrong passwords for one e-mail sent at once (the limit cannot be raced)", async () => {
    const email = "operator@graniteridge.example";
    const answers = await Promise.all(Array.from({ length: 200 }, (_, i) => signIn(email, `wrong-${i}`, `198.18.${i >> 8}.${i & 255}`)));
    // A "not right" answer is given only after the password was verified; every other answer is the 429.
    const checked = answers.filter((a) => JSON.stringify(a.body).includes("The e-mail or password is not right."));
    expect(checked.length).toBeLessThanOrEqual(5);
    expect(answers.filter((a) => a.status === 429)).toHaveLength(200 - checked.length);
    const rows = await db.select().from(schema.signInAttempts).where(eq(schema.signInAttempts.email, email));
    expect(rows.length).toBeLessThanOrEqual(5);
  });

  it("refuses further tries from one address after five failures there", async () => {
    const address = "203.0.113.7";
    for (let i = 0; i < 5; i++) await signIn(`nobody${i}@unknown.example`, "whatever-password", address);
    const next = await signIn("owner@halvorsen.example", PASSWORD, address);
    expect(next.status).toBe(429);
  });

  it("follows only local redirect targets", async () => {
    const evil = await callRoute(
      signInAction,
      formRequest("/sign-in", { email: "owner@halvorsen.example", password: PASSWORD, redirectTo: "//evil.example/x" }),
    );
    expect(evil.headers.get("location")).toBe("/client");
    const local = await callRoute(
      signInAction,
      formRequest("/sign-in", { email: "owner@halvorsen.example", password: PASSWORD, redirectTo: "/client/members" }),
    );
    expect(local.headers.get("location")).toBe("/client/members");
  });
});

describe("sessions", () => {
  it("issues a new session token at every sign-in and ends the one the request carried", async () => {
    const first = cookieFrom(await signIn("owner@halvorsen.example"))!;
    const second = cookieFrom(await signIn("owner@halvorsen.example"))!;
    expect(second).not.toBe(first);
    const [user] = await db.select().from(schema.users).where(eq(schema.users.email, "owner@halvorsen.example"));
    // A sign-in arriving with an old cookie (e.g. a shared computer) replaces it.
    const third = (await startSession(getRequest("/sign-in", first), user.id, null)).split(";")[0];
    expect((await callRoute(meLoader, getRequest("/api/me", first))).status).toBe(401);
    expect((await callRoute(meLoader, getRequest("/api/me", third))).status).toBe(200);
    // Signing out ends that session only.
    expect((await callRoute(signOutAction, formRequest("/sign-out", {}, second))).status).toBe(302);
    expect((await callRoute(meLoader, getRequest("/api/me", second))).status).toBe(401);
    expect((await callRoute(meLoader, getRequest("/api/me", third))).status).toBe(200);
  });

  it("answers /api/me with 401 when signed out", async () => {
    expect((await callRoute(meLoader, getRequest("/api/me"))).status).toBe(401);
  });

  it("lets a person in two organisations switch, and refuses someone else's organisation", async () => {
    const cookie = cookieFrom(await signIn("consultant@fieldnotes.example"))!;
    const me = (await callRoute(meLoader, getRequest("/api/me", cookie))).body as {
      organisations: { id: string; name: string }[];
      activeOrganisationId: string;
    };
    expect(me.organisations.map((o) => o.name).sort()).toEqual(["Halvorsen Cathode Works", "Pinecrest Solid Forms"]);
    const other = me.organisations.find((o) => o.id !== me.activeOrganisationId)!;
    const switched = await callRoute(switchAction, formRequest("/switch-organisation", { organisationId: other.id }, cookie));
    expect(switched.status).toBe(302);
    const after = (await callRoute(meLoader, getRequest("/api/me", cookie))).body as { activeOrganisationId: string };
    expect(after.activeOrganisationId).toBe(other.id);

    const [lab] = await db.select().from(schema.organisations).where(eq(schema.organisations.kind, "lab")).limit(1);
    const refused = await callRoute(switchAction, formRequest("/switch-organisation", { organisationId: lab.id }, cookie));
    expect(refused.status).toBe(404);
    const bad = await callRoute(switchAction, formRequest("/switch-organisation", { organisationId: "'; drop table users; --" }, cookie));
    expect(bad.status).toBe(400);
  });
});

describe("create account", () => {
  it("creates a client organisation with its owner and signs them in", async () => {
    const answer = await callRoute(
      createAccountAction,
      formRequest("/create-account", {
        kind: "client",
        name: "Edda Quill",
        email: "Edda@Northwind-Ceramics.example",
        password: "a-long-enough-password",
        organisationName: "Northwind Ceramics",
      }),
    );
    expect(answer.status).toBe(302);
    expect(answer.headers.get("location")).toBe("/client");
    const [user] = await db.select().from(schema.users).where(eq(schema.users.email, "edda@northwind-ceramics.example"));
    expect(user.passwordHash).toMatch(/^\$argon2id\$/);
    const me = (await callRoute(meLoader, getRequest("/api/me", cookieFrom(answer)))).body as { organisations: { role: string; kind: string }[] };
    expect(me.organisations).toMatchObject([{ role: "owner", kind: "client" }]);
  });

  it("lets a lab apply: its manager lands in the lab workspace", async () => {
    const answer = await callRoute(
      createAccountAction,
      formRequest("/create-account", {
        kind: "lab",
        name: "Oskar Veld",
        email: "oskar@veldlab.example",
        password: "another-long-password",
        organisationName: "Veld Diffraction Lab",
        city: "Veldhaven",
        country: "Netherlands",
      }),
    );
    expect(answer.headers.get("location")).toBe("/lab");
  });

  it("gives field errors for every bad field and creates nothing", async () => {
    const before = (await db.select().from(schema.users)).length;
    const answer = await callRoute(
      createAccountAction,
      formRequest("/create-account", { kind: "lab", name: "", email: "nope", password: "short", organisationName: "x" }),
    );
    expect(answer.status).toBe(400);
    const errors = (answer.body as { result: { error: Record<string, string[]> } }).result.error;
    expect(Object.keys(errors).sort()).toEqual(["city", "country", "email", "name", "organisationName", "password"]);
    expect((await db.select().from(schema.users)).length).toBe(before);
  });

  it("refuses an e-mail that already has an account, whatever its case", async () => {
    const answer = await callRoute(
      createAccountAction,
      formRequest("/create-account", {
        kind: "client",
        name: "Someone Else",
        email: "OWNER@halvorsen.example",
        password: "a-long-enough-password",
        organisationName: "Copycat Ltd",
      }),
    );
    expect(answer.status).toBe(400);
    expect(JSON.stringify(answer.body)).toContain("already exists");
  });

  it("refuses an unknown account kind", async () => {
    const answer = await callRoute(
      createAccountAction,
      formRequest("/create-account", {
        kind: "vendor",
        name: "Some One",
        email: "some@one.example",
        password: "a-long-enough-password",
        organisationName: "Some Org",
      }),
    );
    expect(answer.status).toBe(400);
  });
});
