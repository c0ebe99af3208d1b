// Account security on the real PostgreSQL: password reset by e-mailed link, password change, the TOTP second
// factor (RFC 6238) at enrolment and sign-in, half signed-in sessions, and admins made to enrol.
import { and, eq, sql } from "drizzle-orm";
import * as OTPAuth from "otpauth";
import { beforeAll, describe, expect, it } from "vitest";
import { db, schema } from "~/db/client.server";
import { seedDemo } from "~/demo/seed.server";
import { acceptTotpCode } from "~/models/accounts/security.server";
import { RESET_REQUESTED } from "~/models/accounts/password-reset.server";
import { loader as adminHome } from "~/routes/admin/home";
import { loader as ledgerSummary } from "~/routes/api/admin/ledger-summary";
import { loader as meLoader } from "~/routes/api/me";
import { action as securityAction, loader as securityLoader } from "~/routes/account/security";
import { loader as clientHome } from "~/routes/client/home";
import { action as forgotAction } from "~/routes/public/forgot-password";
import { action as resetAction, loader as resetLoader } from "~/routes/public/reset-password";
import { action as codeAction, loader as codeLoader } from "~/routes/public/sign-in-code";
import { action as signInAction } from "~/routes/public/sign-in";
import { checkTotpCode, timeStep, totpCodeAt } from "~/models/accounts/totp.server";
import { callRoute, cookieFrom, formRequest, freshTotpCode, getRequest, sessionCookieFor, signInAs } from "./route-call";

const PASSWORD = "diffractory-demo";
let addressN = 0;
/** A fresh client address per call, so the per-address limits of one test do not touch another. */
const address = () => `192.0.2.${++addressN}`;

const userByEmail = async (email: string) => (await db.select().from(schema.users).where(sql`lower(${schema.users.email}) = ${email}`))[0];
const isSignedIn = async (cookie: string | undefined) => (await callRoute(meLoader, getRequest("/api/me", cookie))).status === 200;
const signInPassword = (email: string, password = PASSWORD, from = address()) =>
  callRoute(signInAction, formRequest("/sign-in", { email, password }), {}, from);
const mailsTo = (email: string, kind = "password_reset") =>
  db
    .select()
    .from(schema.outboxMessages)
    .where(and(eq(schema.outboxMessages.to, email), eq(schema.outboxMessages.kind, kind)))
    .orderBy(schema.outboxMessages.createdAt);
const linkIn = (text: string) => text.match(/\/reset-password\/([A-Za-z0-9_-]+)/)![1];
const forgot = (email: string, from = address()) => callRoute(forgotAction, formRequest("/forgot-password", { email }), {}, from);
const reset = (token: string, password: string, confirm = password) =>
  callRoute(resetAction, formRequest(`/reset-password/${token}`, { password, confirm }), { token }, address());

beforeAll(async () => {
  await seedDemo();
});

describe("TOTP codes (RFC 6238)", () => {
  // RFC 6238 Appendix B: the SHA-1 test key is the ASCII string "12345678901234567890"; at T = 59 s the
  // 8-digit TOTP is 94287082 and at T = 1111111109 s it is 07081804. A 6-digit code is the same truncated
  // value mod 10^6 (RFC 4226 §5.3), i.e. the last six digits: 287082 and 081804.
  const rfcKey = OTPAuth.Secret.fromLatin1("12345678901234567890").base32;

  it("matches the RFC 6238 Appendix B SHA-1 vectors", () => {
    const eight = new OTPAuth.TOTP({ algorithm: "SHA1", digits: 8, period: 30, secret: OTPAuth.Secret.fromBase32(rfcKey) });
    expect(eight.generate({ timestamp: 59_000 })).toBe("94287082");
    expect(eight.generate({ timestamp: 1_111_111_109_000 })).toBe("07081804");
    expect(totpCodeAt(rfcKey, 1)).toBe("287082");
    expect(checkTotpCode(rfcKey, "287082", null, 59_000)).toEqual({ ok: true, step: 1 });
    expect(checkTotpCode(rfcKey, "081804", null, 1_111_111_109_000)).toEqual({ ok: true, step: 37_037_036 });
  });

  it("accepts one step either side of the clock, not two, and refuses a used step (RFC 6238 §5.2)", () => {
    const now = 1_111_111_109_000;
    const step = timeStep(now);
    for (const d of [-1, 0, 1]) expect(checkTotpCode(rfcKey, totpCodeAt(rfcKey, step + d), null, now)).toEqual({ ok: true, step: step + d });
    for (const d of [-2, 2]) expect(checkTotpCode(rfcKey, totpCodeAt(rfcKey, step + d), null, now)).toEqual({ ok: false, reason: "wrong" });
    expect(checkTotpCode(rfcKey, totpCodeAt(rfcKey, step), step, now)).toEqual({ ok: false, reason: "replayed" });
    // An earlier step than the last one used is refused too, even inside the window.
    expect(checkTotpCode(rfcKey, totpCodeAt(rfcKey, step - 1), step, now)).toEqual({ ok: false, reason: "replayed" });
    expect(checkTotpCode(rfcKey, totpCodeAt(rfcKey, step + 1), step, now)).toEqual({ ok: true, step: step + 1 });
    for (const bad of ["", "12345", "1234567", "abcdef", "12 34 5x"]) expect(checkTotpCode(rfcKey, bad, null, now)).toEqual({ ok: false, reason: "malformed" });
  });

  it("lets only one of two simultaneous sign-ins with the same code through", async () => {
    const user = await userByEmail("admin@diffractory.example");
    const { code } = await freshTotpCode(user.totpSecret!, user.totpLastStep);
    const results = await Promise.all([acceptTotpCode(user, code), acceptTotpCode(user, code)]);
    expect(results.filter((r) => r.ok)).toHaveLength(1);
    expect(results.filter((r) => !r.ok)).toEqual([{ ok: false, reason: "replayed" }]);
  });
});

describe("password reset", () => {
  it("answers an unknown e-mail with the same sentence as a known one, and sends nothing for it", async () => {
    const known = await forgot("member@halvorsen.example");
    const unknown = await forgot("nobody-here@halvorsen.example");
    expect(known.status).toBe(200);
    expect(unknown.status).toBe(known.status);
    expect(unknown.body).toEqual(known.body);
    expect((known.body as { sent: boolean }).sent).toBe(true);
    expect(RESET_REQUESTED).toMatch(/If an account uses this e-mail address/);
    expect(await mailsTo("nobody-here@halvorsen.example")).toHaveLength(0);
    const [mail] = await mailsTo("member@halvorsen.example");
    expect(mail.subject).toBe("Choose a new Diffractory password");
    expect(mail.text).toMatch(/\/reset-password\/[A-Za-z0-9_-]{40,}/);
    // The working link goes by e-mail only: no in-app notification keeps it.
    const user = await userByEmail("member@halvorsen.example");
    expect(await db.select().from(schema.notifications).where(eq(schema.notifications.userId, user.id))).toHaveLength(0);
    // Only the hash is stored.
    const [row] = await db.select().from(schema.passwordResetTokens).where(eq(schema.passwordResetTokens.userId, user.id));
    expect(row.tokenHash).not.toContain(linkIn(mail.text));
    expect(row.expiresAt.getTime() - row.createdAt.getTime()).toBe(3600_000);
  });

  it("sets the new password once: every session ends, other links die, passwordChangedAt moves, the link is then used", async () => {
    const email = "member@pinecrest.example";
    const phone = await sessionCookieFor(email, { address: address() });
    const laptop = await sessionCookieFor(email, { address: address() });
    expect(await isSignedIn(phone)).toBe(true);
    await forgot(email);
    await forgot(email);
    const [first, second] = (await mailsTo(email)).map((m) => linkIn(m.text));
    const before = await userByEmail(email);

    expect((await callRoute(resetLoader, getRequest(`/reset-password/${second}`), { token: second })).body).toMatchObject({ problem: null, email });
    // Same rules as account creation: a short password is refused and uses nothing.
    const short = await reset(second, "short");
    expect(short.status).toBe(400);
    expect(JSON.stringify(short.body)).toContain("Use at least 12 characters.");
    expect((await reset(second, "a-new-password-1", "a-new-password-2")).status).toBe(400);

    const done = await reset(second, "a-new-password-for-jonah");
    expect(done.status).toBe(302);
    expect(done.headers.get("location")).toBe("/sign-in");
    expect(await isSignedIn(phone)).toBe(false);
    expect(await isSignedIn(laptop)).toBe(false);
    const after = await userByEmail(email);
    expect(after.passwordChangedAt.getTime()).toBeGreaterThan(before.passwordChangedAt.getTime());
    expect((await signInPassword(email)).status).toBe(400);
    expect((await signInPassword(email, "a-new-password-for-jonah")).headers.get("location")).toBe("/client");

    // Used: a clear page, and the password stays what it was set to.
    const again = await reset(second, "yet-another-password");
    expect(again.status).toBe(410);
    expect(JSON.stringify(again.body)).toContain("already been used");
    // The other link sent before it stopped working with it.
    const other = await callRoute(resetLoader, getRequest(`/reset-password/${first}`), { token: first });
    expect(other.status).toBe(410);
    expect((await reset(first, "yet-another-password")).status).toBe(410);
    expect((await userByEmail(email)).passwordHash).toBe(after.passwordHash);
  });

  it("refuses an expired or unknown link with a clear page and changes nothing", async () => {
    const email = "lab@meridian.example";
    await forgot(email);
    const [mail] = await mailsTo(email);
    const token = linkIn(mail.text);
    const user = await userByEmail(email);
    await db
      .update(schema.passwordResetTokens)
      .set({ expiresAt: new Date(Date.now() - 1000) })
      .where(eq(schema.passwordResetTokens.userId, user.id));
    const page = await callRoute(resetLoader, getRequest(`/reset-password/${token}`), { token });
    expect(page.status).toBe(410);
    expect((page.body as { problem: string }).problem).toMatch(/expired/);
    expect((await reset(token, "a-password-too-late")).status).toBe(410);
    const unknown = await callRoute(resetLoader, getRequest("/reset-password/not-a-real-token"), { token: "not-a-real-token" });
    expect(unknown.status).toBe(404);
    expect((await reset("x".repeat(300), "a-password-from-nowhere")).status).toBe(404);
    const after = await userByEmail(email);
    expect(after.passwordHash).toBe(user.passwordHash);
    expect(after.passwordChangedAt).toEqual(user.passwordChangedAt);
    expect((await db.select().from(schema.passwordResetTokens).where(eq(schema.passwordResetTokens.userId, user.id)))[0].usedAt).toBeNull();
  });

  it("limits requests per e-mail whether or not the account exists, and per address", async () => {
    for (const email of ["lab@lakeside.example", "ghost@lakeside.example"]) {
      for (let i = 0; i < 3; i++) expect((await forgot(email)).status, `${email} #${i + 1}`).toBe(200);
      const limited = await forgot(email);
      expect(limited.status).toBe(429);
      expect(limited.headers.get("retry-after")).toMatch(/^\d+$/);
    }
    expect(await mailsTo("lab@lakeside.example")).toHaveLength(3);
    const from = "192.0.2.200";
    for (let i = 0; i < 10; i++) expect((await forgot(`someone-${i}@example.org`, from)).status).toBe(200);
    expect((await forgot("someone-else@example.org", from)).status).toBe(429);
  });

  it("signed-in people are sent to their workspace from the forgot-password form", async () => {
    const cookie = await sessionCookieFor("owner@halvorsen.example", { address: address() });
    const answer = await callRoute(forgotAction, formRequest("/forgot-password", { email: "owner@halvorsen.example" }, cookie));
    expect(answer.status).toBe(302);
    expect(await mailsTo("owner@halvorsen.example")).toHaveLength(0);
  });
});

describe("password change on the security screen", () => {
  it("needs the current password, ends every other session and gives this one a fresh token", async () => {
    const email = "consultant@fieldnotes.example";
    const here = await sessionCookieFor(email, { address: address() });
    const elsewhere = await sessionCookieFor(email, { address: address() });
    const wrong = await callRoute(
      securityAction,
      formRequest(
        "/account/security",
        { intent: "change-password", currentPassword: "not-it", password: "consultant-new-pass", confirm: "consultant-new-pass" },
        here,
      ),
    );
    expect(wrong.status).toBe(400);
    expect(JSON.stringify(wrong.body)).toContain("The current password is not right.");
    expect(await isSignedIn(elsewhere)).toBe(true);

    const changed = await callRoute(
      securityAction,
      formRequest(
        "/account/security",
        { intent: "change-password", currentPassword: PASSWORD, password: "consultant-new-pass", confirm: "consultant-new-pass" },
        here,
      ),
    );
    expect(changed.status).toBe(302);
    const fresh = cookieFrom(changed);
    expect(fresh).toBeTruthy();
    expect(fresh).not.toBe(here);
    expect(await isSignedIn(fresh)).toBe(true);
    expect(await isSignedIn(here)).toBe(false);
    expect(await isSignedIn(elsewhere)).toBe(false);
    expect((await signInPassword(email, "consultant-new-pass")).status).toBe(302);
    const [entry] = await db.select().from(schema.auditLog).where(eq(schema.auditLog.action, "password_changed"));
    expect(entry.details).toEqual({ otherSessionsEnded: 1 });
  });
});

describe("second factor", () => {
  const email = "owner@pinecrest.example";
  const post = (cookie: string, fields: Record<string, string>) => callRoute(securityAction, formRequest("/account/security", fields, cookie), {}, address());

  it("enrols with a server-drawn QR code and a confirming code, then asks for a code at sign-in", async () => {
    let cookie = await sessionCookieFor(email, { address: address() });
    expect((await callRoute(securityLoader, getRequest("/account/security", cookie))).body).toMatchObject({ totp: { state: "off" } });
    expect((await post(cookie, { intent: "enrol-start" })).status).toBe(302);
    const page = (await callRoute(securityLoader, getRequest("/account/security", cookie))).body as {
      totp: { state: string; qr: string; secret: string; uri: string };
    };
    expect(page.totp.state).toBe("enrolling");
    expect(page.totp.qr).toMatch(/^data:image\/svg\+xml;base64,/);
    expect(Buffer.from(page.totp.qr.split(",")[1], "base64").toString()).toContain("<svg");
    expect(page.totp.uri).toMatch(/^otpauth:\/\/totp\/Diffractory:owner%40pinecrest\.example\?/);
    const secret = page.totp.secret.replace(/ /g, "");
    expect((await userByEmail(email)).totpSecret).toBe(secret);
    // Not yet in force: sign-in still takes the password alone.
    expect((await signInPassword(email)).headers.get("location")).toBe("/client");

    const wrongCode = await post(cookie, { intent: "enrol-confirm", code: totpCodeAt(secret, timeStep() + 5) });
    expect(wrongCode.status).toBe(400);
    expect(JSON.stringify(wrongCode.body)).toContain("That code is not right.");
    const confirmCode = totpCodeAt(secret, timeStep());
    expect((await post(cookie, { intent: "enrol-confirm", code: confirmCode })).status).toBe(302);
    expect((await userByEmail(email)).totpEnabledAt).toBeInstanceOf(Date);

    // Sign-in: the password gives a half session that nothing accepts but the code screen.
    const first = await signInPassword(email);
    expect(first.headers.get("location")).toBe("/sign-in/code");
    const half = cookieFrom(first)!;
    expect(await isSignedIn(half)).toBe(false);
    const client = await callRoute(clientHome, getRequest("/client", half));
    expect(client.status).toBe(302);
    expect(client.headers.get("location")).toMatch(/^\/sign-in\?redirectTo=/);
    expect((await callRoute(securityLoader, getRequest("/account/security", half))).status).toBe(302);
    expect((await callRoute(codeLoader, getRequest("/sign-in/code", half))).body).toEqual({ email });

    // The confirming code's step is used: the same code is refused at sign-in.
    const replay = await callRoute(codeAction, formRequest("/sign-in/code", { intent: "verify", code: confirmCode }, half), {}, address());
    expect(replay.status).toBe(400);
    expect(JSON.stringify(replay.body)).toContain("already used");
    const user = await userByEmail(email);
    const { code } = await freshTotpCode(secret, user.totpLastStep);
    const done = await callRoute(codeAction, formRequest("/sign-in/code", { intent: "verify", code }, half), {}, address());
    expect(done.status).toBe(302);
    expect(done.headers.get("location")).toBe("/client");
    const full = cookieFrom(done)!;
    expect(full).not.toBe(half);
    expect(await isSignedIn(full)).toBe(true);
    expect(await isSignedIn(half)).toBe(false);
    cookie = full;

    // Turning it off needs the password and a fresh code.
    const noPassword = await post(cookie, { intent: "disable", password: "wrong", code: "000000" });
    expect(noPassword.status).toBe(400);
    expect(JSON.stringify(noPassword.body)).toContain("The password is not right.");
    const usedCode = await post(cookie, { intent: "disable", password: PASSWORD, code });
    expect(JSON.stringify(usedCode.body)).toContain("already used");
    const next = await freshTotpCode(secret, (await userByEmail(email)).totpLastStep);
    expect((await post(cookie, { intent: "disable", password: PASSWORD, code: next.code })).status).toBe(302);
    expect(await userByEmail(email)).toMatchObject({ totpSecret: null, totpEnabledAt: null, totpLastStep: null });
    expect((await signInPassword(email)).headers.get("location")).toBe("/client");
  });

  it("ends a waiting session after five wrong codes, and counts them against the e-mail's sign-in limit", async () => {
    const email = "operator@graniteridge.example";
    const user = await userByEmail(email);
    const secret = "JBSWY3DPEHPK3PXPJBSWY3DPEHPK3PXP";
    await db.update(schema.users).set({ totpSecret: secret, totpEnabledAt: new Date() }).where(eq(schema.users.id, user.id));
    const half = cookieFrom(await signInPassword(email))!;
    const wrong = totpCodeAt(secret, timeStep() + 10);
    for (let i = 1; i <= 4; i++)
      expect((await callRoute(codeAction, formRequest("/sign-in/code", { intent: "verify", code: wrong }, half), {}, address())).status).toBe(400);
    const fifth = await callRoute(codeAction, formRequest("/sign-in/code", { intent: "verify", code: wrong }, half), {}, address());
    expect(fifth.status).toBe(302);
    expect(fifth.headers.get("location")).toBe("/sign-in");
    // The waiting session is gone: the right code no longer helps.
    const late = await callRoute(codeAction, formRequest("/sign-in/code", { intent: "verify", code: totpCodeAt(secret, timeStep()) }, half), {}, address());
    expect(late.headers.get("location")).toBe("/sign-in");
    expect(await db.select().from(schema.sessions).where(eq(schema.sessions.userId, user.id))).toHaveLength(0);
    // Five failures for the e-mail: even the right password is refused for the window.
    expect((await signInPassword(email)).status).toBe(429);
  });

  it("keeps the admin's second factor on, and sends an admin without one to enrolment first", async () => {
    const admin = await signInAs("admin@diffractory.example", { address: address() });
    expect(admin.answer.headers.get("location")).toBe("/admin");
    const cookie = admin.cookie!;
    const user = await userByEmail("admin@diffractory.example");
    const { code } = await freshTotpCode(user.totpSecret!, user.totpLastStep);
    const refused = await post(cookie, { intent: "disable", password: PASSWORD, code });
    expect(refused.status).toBe(400);
    expect(JSON.stringify(refused.body)).toContain("Platform admins must keep a second factor.");
    expect((await userByEmail("admin@diffractory.example")).totpEnabledAt).toBeInstanceOf(Date);

    // An admin without a second factor (made so directly here) opens no admin screen or API until enrolled.
    await db.update(schema.users).set({ totpSecret: null, totpEnabledAt: null, totpLastStep: null }).where(eq(schema.users.id, user.id));
    const home = await callRoute(adminHome, getRequest("/admin", cookie));
    expect(home.status).toBe(302);
    expect(home.headers.get("location")).toBe("/account/security?enrol=required");
    expect((await callRoute(ledgerSummary, getRequest("/api/admin/ledger/summary", cookie))).status).toBe(403);
    expect((await callRoute(securityLoader, getRequest("/account/security", cookie))).body).toMatchObject({ isAdmin: true, totp: { state: "off" } });
    await post(cookie, { intent: "enrol-start" });
    const secret = (await userByEmail("admin@diffractory.example")).totpSecret!;
    expect((await post(cookie, { intent: "enrol-confirm", code: totpCodeAt(secret, timeStep()) })).status).toBe(302);
    expect((await callRoute(adminHome, getRequest("/admin", cookie))).status).toBe(200);
  });
});
