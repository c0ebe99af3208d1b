// Browser-test fixtures: Debian's Chromium through playwright-core, sign-in helpers, screenshots, console checks.
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import { chromium, type BrowserContext, type Page } from "playwright-core";
import { root } from "../../services/paths";

export const BASE_URL = `http://127.0.0.1:${process.env.TEST_APP_PORT ?? 3100}`;
export const SCREENSHOT_DIR = path.join(root, "test-results", "screenshots");
export const DEMO_PASSWORD = "diffractory-demo";

export interface Browser {
  context: BrowserContext;
  page: Page;
  consoleErrors: string[];
  close(): Promise<void>;
}

export async function openBrowser(): Promise<Browser> {
  const profile = fs.mkdtempSync(path.join(os.tmpdir(), "diffractory-chromium-"));
  const context = await chromium.launchPersistentContext(profile, {
    executablePath: "/usr/bin/chromium",
    baseURL: BASE_URL,
    viewport: { width: 1280, height: 860 },
    args: ["--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
      "--disable-background-networking", "--disable-component-update", "--disable-sync"],
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

export async function signIn(page: Page, email: string, password = DEMO_PASSWORD) {
  await visit(page, "/sign-in");
  await page.getByLabel("E-mail").fill(email);
  await page.getByLabel("Password").fill(password);
  await page.getByRole("button", { name: "Sign in" }).click();
}

export async function signOut(page: Page) {
  await page.getByRole("button", { name: "Sign out" }).first().click();
  await page.waitForURL(`${BASE_URL}/`);
}

export async function screenshot(page: Page, name: string) {
  fs.mkdirSync(SCREENSHOT_DIR, { recursive: true });
  await page.screenshot({ path: path.join(SCREENSHOT_DIR, `${name}.png`), fullPage: true });
}
