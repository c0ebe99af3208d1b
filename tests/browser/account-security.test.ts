// Account security in a real browser: the Content-Security-Policy nonce on the page's scripts, a password
// reset through the e-mailed link (read from the mail fake), and a second factor set up and used at sign-in.
import { afterAll, afterEach, beforeAll, describe, expect, it } from "vitest";
import { BASE_URL, enterTotpCode, openBrowser, screenshot, signIn, signOut, visit, waitForHydration, type Browser } from "./harness";

const MAIL_FAKE = `http://127.0.0.1:${process.env.MAIL_FAKE_PORT ?? 54331}`;

let b: Browser;
beforeAll(async () => {
  b = await openBrowser();
});
afterAll(async () => {
  await b?.close();
});
afterEach(async () => {
  // A CSP violation is a console error, so this also says the policy blocked nothing on these screens.
  expect(b.consoleErrors, "console errors in the browser").toEqual([]);
  await b.context.clearCookies();
});

/** The reset link of the newest letter to `to` received after `since`, waiting for the mail worker to send it. */
async function resetLinkFor(to: string, since: number) {
  for (let i = 0; i < 100; i++) {
    const { messages } = (await (await fetch(`${MAIL_FAKE}/_fake/messages`)).json()) as {
      messages: { to: string[]; subject: string; text?: string; receivedAt: string }[];
    };
    const mail = messages.filter((m) => m.to.includes(to) && m.subject === "Choose a new Diffractory password" && Date.parse(m.receivedAt) >= since).at(-1);
    const link = mail?.text?.match(/https?:\/\/[^\s)]+\/reset-password\/[A-Za-z0-9_-]+/)?.[0];
    if (link) return link;
    await new Promise((r) => setTimeout(r, 200));
  }
  throw new Error(`no reset e-mail to ${to}`);
}

describe("account security", () => {
  it("serves every page with a per-response script nonce that the page's scripts carry", async () => {
    const response = await b.page.goto("/sign-in");
    await waitForHydration(b.page);
    const policy = response!.headers()["content-security-policy"];
    expect(policy).toContain("frame-ancestors 'none'");
    const nonce = policy.match(/'nonce-([^']+)'/)![1];
    // Browsers hide the nonce attribute from the DOM once applied; the property keeps it.
    const nonces = await b.page.evaluate(() => [...document.querySelectorAll("script")].map((s) => s.nonce));
    expect(nonces.length).toBeGreaterThan(0);
    expect(new Set(nonces)).toEqual(new Set([nonce]));
    const again = await b.page.goto("/sign-in");
    expect(again!.headers()["content-security-policy"]).not.toContain(nonce);
  });

  it("resets a forgotten password through the e-mailed link, which then works no more", async () => {
    const email = "member@pinecrest.example";
    const since = Date.now() - 1000;
    await visit(b.page, "/sign-in");
    await b.page.getByRole("link", { name: "Forgot your password?" }).click();
    await b.page.waitForURL(`${BASE_URL}/forgot-password`);
    await waitForHydration(b.page);
    await b.page.getByLabel("E-mail").fill(email);
    await b.page.getByRole("button", { name: "Send the reset link" }).click();
    await b.page.getByText("If an account uses this e-mail address, we have sent it a link").waitFor();
    await screenshot(b.page, "forgot-password-sent");

    const link = await resetLinkFor(email, since);
    expect(new URL(link).origin).toBe(BASE_URL);
    await visit(b.page, link);
    await b.page.getByText(`For ${email}.`).waitFor();
    await b.page.getByLabel("New password", { exact: true }).fill("pinecrest-fresh-password");
    await b.page.getByLabel("New password again").fill("pinecrest-fresh-password");
    await screenshot(b.page, "reset-password-form");
    await b.page.getByRole("button", { name: "Set the new password" }).click();
    await b.page.waitForURL(`${BASE_URL}/sign-in`);
    await b.page.getByText("Your password is changed and every device was signed out.").waitFor();

    await signIn(b.page, email, "pinecrest-fresh-password");
    await b.page.waitForURL(`${BASE_URL}/client`);
    await signOut(b.page);

    await visit(b.page, link);
    await b.page.getByText("This reset link has already been used.").waitFor();
    await screenshot(b.page, "reset-password-used");
  });

  it("sets up a second factor from the header's Security link, then signs in with a code", async () => {
    const email = "consultant@fieldnotes.example";
    await signIn(b.page, email);
    await b.page.waitForURL(`${BASE_URL}/client`);
    await waitForHydration(b.page);
    await b.page.getByRole("link", { name: "Security", exact: true }).click();
    await b.page.waitForURL(`${BASE_URL}/account/security`);
    await waitForHydration(b.page);
    await b.page.getByRole("button", { name: "Set up a second factor" }).click();
    const qr = b.page.getByRole("img", { name: "QR code of the authenticator set-up key" });
    await qr.waitFor();
    // The QR code is an SVG data URL drawn on the server; the policy's img-src lets it load.
    expect(await qr.evaluate((img: HTMLImageElement) => img.complete && img.naturalWidth > 0)).toBe(true);
    const key = (await b.page.getByTestId("totp-secret").innerText()).replace(/\s/g, "");
    expect(key).toMatch(/^[A-Z2-7]{32}$/);
    await screenshot(b.page, "security-enrolment");
    const { nextTotpCode } = await import("./harness");
    await b.page.getByLabel("Code from the app").fill(await nextTotpCode(key));
    await b.page.getByRole("button", { name: "Turn on the second factor" }).click();
    await b.page.getByText("The second factor is on.").waitFor();
    await screenshot(b.page, "security-second-factor-on");
    await b.page.getByRole("link", { name: "← Back to your workspace" }).click();
    await b.page.waitForURL(`${BASE_URL}/client`);
    await signOut(b.page);

    await visit(b.page, "/sign-in");
    await b.page.getByLabel("E-mail").fill(email);
    await b.page.getByLabel("Password").fill("diffractory-demo");
    await b.page.getByRole("button", { name: "Sign in" }).click();
    await b.page.waitForURL(/\/sign-in\/code/);
    await waitForHydration(b.page);
    await screenshot(b.page, "sign-in-code");
    // Half signed in: the workspace still sends the browser to sign in.
    await visit(b.page, "/client");
    await b.page.waitForURL(/\/sign-in\?redirectTo=/);
    await visit(b.page, "/sign-in/code");
    await enterTotpCode(b.page, key);
    await b.page.waitForURL(`${BASE_URL}/client`);
    await b.page.getByTestId("signed-in-as").waitFor();
  });
});
