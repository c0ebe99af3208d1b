// npm run screens -- <folder>: photographs the main screens of a running demo (APP_URL, default
// http://127.0.0.1:3000) at a desk width (1366 px) and a phone width (390 px), full page, as JPEG, and prints each
// page's height. Used to compare the look before and after a change (docs/design-system.md).
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import { chromium, type Page } from "playwright-core";
import { db } from "~/db/client.server";
import { DEMO_ADMIN_TOTP_SECRET } from "~/demo/demo-secrets";
import { agreementId, checkId, instrumentId, materialId, orderId, requestId } from "~/demo/tour.server";
import { TREND_DEMO_PRODUCT_CODE } from "~/demo/seed-trends.server";
import { timeStep, totpCodeAt } from "~/models/accounts/totp.server";

const base = process.env.APP_URL ?? `http://127.0.0.1:${process.env.PORT ?? 3000}`;
const out = path.resolve(process.argv[2] ?? "test-results/screens");
const only = process.argv[3] ? new RegExp(process.argv[3]) : null;
/** SCREENS_PNG=1: the first screen only, as PNG (for a quick look in an image viewer). */
const png = process.env.SCREENS_PNG === "1";
const WIDTHS = [
  { name: "desk", width: 1366, height: 900 },
  { name: "phone", width: 390, height: 844 },
] as const;
/** Pages are cut after three screens: what matters for comparing is the top, and the length is printed beside. */
const SCREENS_KEPT = 3;

const REVIEW_ORDER = "Lattice check of LFP production lot HC-2645";
const screens: { who: string | null; name: string; path: () => Promise<string> }[] = [];
const add = (who: string | null, name: string, p: string | (() => Promise<string>)) =>
  screens.push({ who, name, path: typeof p === "string" ? async () => p : p });

add(null, "public-home", "/");
add(null, "public-directory", "/labs");
add(null, "public-lab-profile", "/labs/granite-ridge-characterisation");
add(null, "public-how-it-works", "/how-it-works");
add(null, "public-safety", "/safety");
add(null, "public-sign-in", "/sign-in");
const CLIENT = "owner@halvorsen.example";
add(CLIENT, "client-home", "/client");
add(CLIENT, "client-requests", "/client/requests");
add(CLIENT, "client-request-quotes", async () => `/client/requests/${await requestId("Phase purity of NMC811 lot HC-2634")}`);
add(CLIENT, "client-request-new", "/client/requests/new");
add(CLIENT, "client-orders", "/client/orders");
add(CLIENT, "client-order-review", async () => `/client/orders/${await orderId(REVIEW_ORDER)}`);
add(CLIENT, "client-check-review", async () => `/checks/${await checkId("HC-2645-2_Co_15-110.xy")}`);
add(CLIENT, "client-check-mixture", async () => `/checks/${await checkId("HC-2681-A_Co_15-110.xy")}`);
add(CLIENT, "client-data-room", "/client/data-room");
add(CLIENT, "client-materials", "/client/materials");
add(CLIENT, "client-material-trend", async () => `/client/materials/${await materialId(TREND_DEMO_PRODUCT_CODE)}/trend?parameter=a`);
add(CLIENT, "client-agreement", async () => `/client/agreements/${await agreementId(TREND_DEMO_PRODUCT_CODE)}`);
add(CLIENT, "client-payments", "/client/payments");
add(CLIENT, "client-profile", "/client/profile");
const LAB = "lab@graniteridge.example";
add(LAB, "lab-home", "/lab");
add(LAB, "lab-inbox", "/lab/inbox");
add(LAB, "lab-work-queue", "/lab/work-queue");
add(LAB, "lab-order", async () => `/lab/orders/${await orderId(REVIEW_ORDER)}`);
add(LAB, "lab-order-files", async () => `/lab/orders/${await orderId("Form screen of salt candidates PSF-144")}/files`);
add(LAB, "lab-quotes", "/lab/quotes");
add(LAB, "lab-price-list", "/lab/price-list");
add(LAB, "lab-calibration", async () => `/lab/instruments/${await instrumentId("Reflection diffractometer B (Co)")}/calibration`);
add(LAB, "lab-statements", "/lab/statements");
add(LAB, "lab-payouts", "/lab/payouts");
const ADMIN = "admin@diffractory.example";
add(ADMIN, "admin-home", "/admin");
add(ADMIN, "admin-users", "/admin/users");
add(ADMIN, "admin-vetting-queue", "/admin/vetting-queue");
add(ADMIN, "admin-disputes", "/admin/disputes");
add(ADMIN, "admin-dispute", async () => `/admin/disputes/${await orderId("Impurity check of NMC lot HC-2655")}`);
add(ADMIN, "admin-ledger", "/admin/ledger");
add(ADMIN, "admin-audit-log", "/admin/audit-log");
add(ADMIN, "admin-invoices", "/admin/invoices");

let lastStep = -1;
async function signIn(page: Page, email: string) {
  await page.goto(`${base}/sign-in`);
  await page.waitForFunction(() => document.documentElement.dataset.hydrated === "true");
  await page.getByLabel("E-mail").fill(email);
  await page.getByLabel("Password").fill("diffractory-demo");
  await page.getByRole("button", { name: "Sign in" }).click();
  if (email === ADMIN) {
    await page.waitForURL(/\/sign-in\/code/);
    await page.waitForFunction(() => document.documentElement.dataset.hydrated === "true");
    // A code's time step is taken once: wait for the next one when this run used the current one already.
    while (timeStep() <= lastStep) await new Promise((r) => setTimeout(r, 500));
    lastStep = timeStep();
    await page.getByLabel("Code").fill(totpCodeAt(DEMO_ADMIN_TOTP_SECRET, lastStep));
    await page.getByRole("button", { name: "Verify and sign in" }).click();
  }
  await page.waitForURL((u) => !u.pathname.startsWith("/sign-in"));
}

fs.mkdirSync(out, { recursive: true });
const profile = fs.mkdtempSync(path.join(os.tmpdir(), "diffractory-screens-"));
const rows: string[] = [];
for (const size of WIDTHS) {
  const context = await chromium.launchPersistentContext(profile, {
    executablePath: "/usr/bin/chromium",
    viewport: { width: size.width, height: size.height },
    locale: "en-GB",
    args: ["--headless", "--no-sandbox", "--disable-gpu", "--no-first-run"],
  });
  const page = context.pages()[0] ?? (await context.newPage());
  let who: string | null | undefined;
  for (const s of screens) {
    if (only && !only.test(s.name)) continue;
    if (s.who !== who) {
      await context.clearCookies();
      if (s.who) await signIn(page, s.who);
      who = s.who;
    }
    await page.goto(`${base}${await s.path()}`);
    await page.waitForLoadState("networkidle");
    const height = await page.evaluate(() => document.documentElement.scrollHeight);
    const file = path.join(out, `${s.name}-${size.name}.${png ? "png" : "jpg"}`);
    if (png) await page.screenshot({ path: file });
    else
      await page.screenshot({
        path: file,
        type: "jpeg",
        quality: 50,
        fullPage: true,
        clip: { x: 0, y: 0, width: size.width, height: Math.min(height, SCREENS_KEPT * size.height) },
      });
    rows.push(`${s.name.padEnd(24)} ${size.name.padEnd(6)} ${String(height).padStart(6)} px`);
    console.log(rows.at(-1));
  }
  await context.close();
}
fs.rmSync(profile, { recursive: true, force: true });
fs.writeFileSync(path.join(out, "heights.txt"), `${rows.join("\n")}\n`);
await db.$client.end();
