// Browser-test fixtures: Debian's Chromium through playwright-core, sign-in helpers, screenshots, console checks.
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import pg from "pg";
import { chromium, type BrowserContext, type Page } from "playwright-core";
import { root } from "../../services/paths";
import { databaseUrl } from "../../services/postgres";
import { DEMO_ADMIN_TOTP_SECRET } from "../../app/demo/demo-secrets";
import { freshTotpCode } from "../integration/route-call";

export const BASE_URL = `http://127.0.0.1:${process.env.TEST_APP_PORT ?? 3100}`;
export const SCREENSHOT_DIR = path.join(root, "test-results", "screenshots");
export const DEMO_PASSWORD = "diffractory-demo";

export interface Browser {
  context: BrowserContext;
  page: Page;
  consoleErrors: string[];
  close(): Promise<void>;
}

/**
 * locale sets the browser's language (and so its Accept-Language); viewport defaults to a 1280 × 860 desktop;
 * args are further Chromium switches (the Lighthouse test opens a debugging port).
 */
export async function openBrowser(options: { locale?: string; viewport?: { width: number; height: number }; args?: string[] } = {}): Promise<Browser> {
  const profile = fs.mkdtempSync(path.join(os.tmpdir(), "diffractory-chromium-"));
  const context = await chromium.launchPersistentContext(profile, {
    executablePath: "/usr/bin/chromium",
    baseURL: BASE_URL,
    viewport: options.viewport ?? { width: 1280, height: 860 },
    ...(options.locale ? { locale: options.locale } : {}),
    args: [
      "--headless",
      "--no-sandbox",
      "--disable-gpu",
      "--disable-quic",
      "--no-first-run",
      "--disable-background-networking",
      "--disable-component-update",
      "--disable-sync",
      ...(options.args ?? []),
    ],
  });
  const page = context.pages()[0] ?? (await context.newPage());
  const consoleErrors: string[] = [];
  const watch = (p: Page) => {
    p.on("console", (msg) => {
      // A 4xx answer the test asked for is logged by Chromium as a resource error; that is expected, not a page fault.
      if (msg.type() === "error" && !/Failed to load resource: the server responded with a status of 4\d\d/.test(msg.text())) {
        consoleErrors.push(msg.text());
      }
    });
    p.on("pageerror", (err) => consoleErrors.push(`page error: ${err.message}`));
  };
  watch(page);
  context.on("page", watch);
  return {
    context,
    page,
    consoleErrors,
    async close() {
      await context.close();
      fs.rmSync(profile, { recursive: true, force: true });
    },
  };
}

/** Navigates and waits until React has hydrated, so clicks reach their handlers. */
export async function visit(page: Page, url: string) {
  await page.goto(url);
  await waitForHydration(page);
}

export async function waitForHydration(page: Page) {
  await page.waitForFunction(() => document.documentElement.dataset.hydrated === "true");
}

/** Second-factor keys of the seeded accounts that have one. */
const TOTP_KEYS: Record<string, string> = { "admin@diffractory.example": DEMO_ADMIN_TOTP_SECRET };
// The last time step each key's code was used in, across the browser test files (they share one database).
const STEPS_FILE = path.join(root, ".data", "browser-totp-steps.json");

/** A code the app has not accepted yet: a used time step is refused (RFC 6238 §5.2), so this waits when it must. */
export async function nextTotpCode(key: string) {
  const used: Record<string, number> = fs.existsSync(STEPS_FILE) ? JSON.parse(fs.readFileSync(STEPS_FILE, "utf8")) : {};
  const { step, code } = await freshTotpCode(key, used[key] ?? null);
  fs.mkdirSync(path.dirname(STEPS_FILE), { recursive: true });
  fs.writeFileSync(STEPS_FILE, JSON.stringify({ ...used, [key]: step }));
  return code;
}

/** Types the code of the key on the sign-in code screen. */
export async function enterTotpCode(page: Page, key: string) {
  await page.waitForURL(/\/sign-in\/code/);
  await waitForHydration(page);
  await page.getByLabel("Code").fill(await nextTotpCode(key));
  await page.getByRole("button", { name: "Verify and sign in" }).click();
}

/** Signs in on the sign-in screen; someone with a second factor also gets the code screen filled in. */
export async function signIn(page: Page, email: string, password = DEMO_PASSWORD, totpKey: string | undefined = TOTP_KEYS[email]) {
  await visit(page, "/sign-in");
  await page.getByLabel("E-mail").fill(email);
  await page.getByLabel("Password").fill(password);
  await page.getByRole("button", { name: "Sign in" }).click();
  if (totpKey) await enterTotpCode(page, totpKey);
}

export async function signOut(page: Page) {
  const button = page.getByRole("button", { name: "Sign out" }).first();
  // On a phone the workspace keeps the account items behind its Menu button.
  const menu = page.getByRole("button", { name: "Menu" });
  if (!(await button.isVisible()) && (await menu.isVisible())) await menu.click();
  await button.click();
  await page.waitForURL(`${BASE_URL}/`);
}

export async function screenshot(page: Page, name: string) {
  fs.mkdirSync(SCREENSHOT_DIR, { recursive: true });
  await page.screenshot({ path: path.join(SCREENSHOT_DIR, `${name}.png`), fullPage: true });
}

/** One query on the browser tests' database (the app under test reads the same), its rows. */
export async function query<T extends pg.QueryResultRow>(text: string, values: unknown[] = []) {
  const c = new pg.Client({ connectionString: databaseUrl("diffractory_browser") });
  await c.connect();
  try {
    return (await c.query<T>(text, values)).rows;
  } finally {
    await c.end();
  }
}

export const PAYMENTS_FAKE = `http://127.0.0.1:${process.env.PAYMENTS_FAKE_PORT ?? 54332}`;

/**
 * Has the payment provider's fake send its webhooks to the app under test, whichever port it runs on; answers what
 * undoes it (nothing when the address was already there).
 */
export async function sendPaymentWebhooksHere(): Promise<() => Promise<void>> {
  const url = `${BASE_URL}/api/webhooks/payments`;
  const { endpoints } = (await (await fetch(`${PAYMENTS_FAKE}/_fake/webhook-endpoints`)).json()) as { endpoints: string[] };
  if (endpoints.includes(url)) return async () => {};
  await fetch(`${PAYMENTS_FAKE}/_fake/webhook-endpoints`, { method: "POST", headers: { "Content-Type": "application/json" }, body: JSON.stringify({ url }) });
  return async () => {
    await fetch(`${PAYMENTS_FAKE}/_fake/webhook-endpoints?url=${encodeURIComponent(url)}`, { method: "DELETE" });
  };
}

/** Sign-in failures are counted per address and every browser test signs in from 127.0.0.1: a file leaves none behind. */
export async function clearSignInAttempts() {
  await query("delete from sign_in_attempts");
}
