// Every main screen of each role at 375 × 812 (a small phone): the page body never scrolls sideways (wide
// tables scroll inside their own card), the workspace menu collapses behind a button, and a screenshot of each
// screen is kept under test-results/screenshots/narrow/.
import pg from "pg";
import { afterAll, afterEach, beforeAll, describe, expect, it } from "vitest";
import { databaseUrl } from "../../services/postgres";
import { BASE_URL, openBrowser, screenshot, signIn, visit, type Browser } from "./harness";

const WIDTH = 375;
let b: Browser;
const ids: Record<string, string> = {};

beforeAll(async () => {
  b = await openBrowser({ viewport: { width: WIDTH, height: 812 } });
  const c = new pg.Client({ connectionString: databaseUrl("diffractory_browser") });
  await c.connect();
  try {
    const one = async (sql: string) => (await c.query(sql)).rows[0]?.id as string | undefined;
    const halvorsen = "(select id from organisations where slug = 'halvorsen-cathode-works')";
    ids.clientOrder = (await one(`select id from orders where client_organisation_id = ${halvorsen} order by updated_at desc limit 1`)) ?? "";
    ids.clientRequest = (await one(`select id from requests where organisation_id = ${halvorsen} and state = 'open' limit 1`)) ?? "";
    ids.check =
      (await one(
        `select sc.id from scan_checks sc join order_files f on f.id = sc.file_id join orders o on o.id = f.order_id where o.client_organisation_id = ${halvorsen} and sc.status = 'done' limit 1`,
      )) ?? "";
    ids.labOrder =
      (await one(
        `select id from orders where lab_id = (select id from organisations where slug = 'granite-ridge-characterisation') order by updated_at desc limit 1`,
      )) ?? "";
    ids.lab = (await one(`select id from organisations where slug = 'lakeside-institute-x-ray-core'`)) ?? "";
  } finally {
    await c.end();
  }
});
afterEach(async () => {
  await b.context.clearCookies();
});
afterAll(async () => {
  await b?.close();
});

/** Visits each screen, keeps a screenshot, and returns the screens whose body is wider than the viewport. */
async function tour(role: string, paths: string[]) {
  const tooWide: string[] = [];
  for (const p of paths) {
    await visit(b.page, p);
    const width = await b.page.evaluate(() => document.scrollingElement!.scrollWidth);
    // "/client/orders/<uuid>" → "client-orders-id"; the role's own home is "<role>-home".
    const rest = p
      .replace(new RegExp(`^/${role}(?=/|$)`), "")
      .replace(/[0-9a-f]{8}-[0-9a-f-]{27}/g, "id")
      .replace(/[^a-z0-9]+/gi, "-")
      .replace(/^-|-$/g, "");
    const name = `${role}-${rest || "home"}`;
    await screenshot(b.page, `narrow/${name}`);
    if (width > WIDTH) tooWide.push(`${p}: ${width} px`);
  }
  return tooWide;
}

/** The workspace menu is one button on a phone; it opens the section links and closes again. */
async function checkMenu(section: string) {
  const toggle = b.page.getByRole("button", { name: "Menu" });
  await toggle.waitFor();
  expect(await toggle.getAttribute("aria-expanded")).toBe("false");
  expect(await b.page.getByRole("link", { name: section, exact: true }).isVisible()).toBe(false);
  await toggle.click();
  expect(await toggle.getAttribute("aria-expanded")).toBe("true");
  await b.page.getByRole("link", { name: section, exact: true }).click();
  await b.page.waitForURL(new RegExp(`/${section.toLowerCase().replace(/ /g, "-")}$`));
  await expect.poll(() => b.page.getByRole("button", { name: "Menu" }).getAttribute("aria-expanded")).toBe("false");
}

describe("at 375 px wide", () => {
  it("the public screens", async () => {
    const slug = "lakeside-institute-x-ray-core";
    expect(await tour("public", ["/", "/labs", `/labs/${slug}`, "/how-it-works", "/safety", "/sign-in", "/create-account", "/forgot-password"])).toEqual([]);
    expect(b.consoleErrors).toEqual([]);
  });

  it("the client's screens", async () => {
    await signIn(b.page, "owner@halvorsen.example");
    await b.page.waitForURL(`${BASE_URL}/client`);
    await checkMenu("Requests");
    const paths = [
      "/client",
      "/client/requests",
      "/client/requests/new",
      "/client/orders",
      "/client/payments",
      "/client/data-room",
      "/client/members",
      "/account/security",
      "/account/notifications",
    ];
    if (ids.clientRequest) paths.push(`/client/requests/${ids.clientRequest}`);
    if (ids.clientOrder) paths.push(`/client/orders/${ids.clientOrder}`, `/client/data-room/${ids.clientOrder}`);
    if (ids.check) paths.push(`/checks/${ids.check}`);
    expect(await tour("client", paths)).toEqual([]);
    expect(b.consoleErrors).toEqual([]);
  });

  it("the lab's screens", async () => {
    await signIn(b.page, "lab@graniteridge.example");
    await b.page.waitForURL(`${BASE_URL}/lab`);
    const paths = [
      "/lab",
      "/lab/inbox",
      "/lab/quotes",
      "/lab/work-queue",
      "/lab/capabilities",
      "/lab/price-list",
      "/lab/payouts",
      "/lab/vetting",
      "/lab/members",
      "/lab/api-tokens",
    ];
    if (ids.labOrder) paths.push(`/lab/orders/${ids.labOrder}`, `/lab/orders/${ids.labOrder}/files`);
    expect(await tour("lab", paths)).toEqual([]);
    expect(b.consoleErrors).toEqual([]);
  });

  it("the admin's screens", async () => {
    await signIn(b.page, "admin@diffractory.example");
    await b.page.waitForURL(`${BASE_URL}/admin`);
    const paths = ["/admin", "/admin/vetting-queue", "/admin/ledger", "/admin/disputes", "/admin/audit-log", "/admin/users", "/admin/outbox"];
    if (ids.lab) paths.push(`/admin/labs/${ids.lab}`);
    expect(await tour("admin", paths)).toEqual([]);
    expect(b.consoleErrors).toEqual([]);
  });
});

// A phone of 390 px (common practice for a current mid-size phone): the long lists stack their rows as small cards
// (docs/design-system.md, "Phones, tables, dates and the safety caution"), so neither the page nor any table is
// wider than the screen, and a row's cells carry their column's heading.
describe("long lists at 390 px wide", () => {
  const PHONE = 390;
  let p: Browser;
  beforeAll(async () => {
    p = await openBrowser({ viewport: { width: PHONE, height: 844 } });
  });
  afterAll(async () => {
    await p?.close();
  });

  /** Screens whose page or tables are wider than the phone, and tables whose cells lack their heading. */
  async function lists(paths: string[]) {
    const faults: string[] = [];
    for (const path of paths) {
      await visit(p.page, path);
      const m = await p.page.evaluate(() => ({
        page: document.documentElement.scrollWidth,
        tables: [...document.querySelectorAll("main table")].map((t) => ({
          right: Math.ceil(t.getBoundingClientRect().right),
          width: Math.ceil(t.getBoundingClientRect().width),
          unlabelled: [...t.querySelectorAll("tbody tr")].filter(
            (tr) => tr.children.length > 1 && ![...tr.children].slice(1).some((td) => td.hasAttribute("data-label")),
          ).length,
        })),
      }));
      if (m.page > PHONE) faults.push(`${path}: page ${m.page} px`);
      for (const t of m.tables) {
        if (t.width > PHONE || t.right > PHONE) faults.push(`${path}: a table ${t.width} px wide reaching ${t.right} px`);
        if (t.unlabelled) faults.push(`${path}: ${t.unlabelled} rows without headings on their cells`);
      }
      await screenshot(
        p.page,
        `narrow/390-${path
          .replace(/[0-9a-f]{8}-[0-9a-f-]{27}/g, "id")
          .replace(/[^a-z0-9]+/gi, "-")
          .replace(/^-|-$/g, "")}`,
      );
    }
    return faults;
  }

  it("the client's orders, requests, payments and data room", async () => {
    await signIn(p.page, "owner@halvorsen.example");
    await p.page.waitForURL(`${BASE_URL}/client`);
    const paths = ["/client/orders", "/client/requests", "/client/payments", "/client/data-room"];
    if (ids.clientOrder) paths.push(`/client/data-room/${ids.clientOrder}`);
    expect(await lists(paths)).toEqual([]);
    // The orders list is a list of small cards: the first row's state stands under its heading.
    await visit(p.page, "/client/orders");
    expect(await p.page.locator("main tbody tr").first().locator('td[data-label="State"]').count()).toBe(1);
    expect(
      await p.page
        .locator("main thead")
        .first()
        .evaluate((e) => e.getBoundingClientRect().height),
    ).toBeLessThanOrEqual(1);
    expect(p.consoleErrors).toEqual([]);
    await p.context.clearCookies();
  });

  it("the lab's work queue, quotes and payouts", async () => {
    await signIn(p.page, "lab@graniteridge.example");
    await p.page.waitForURL(`${BASE_URL}/lab`);
    expect(await lists(["/lab/work-queue", "/lab/quotes", "/lab/payouts"])).toEqual([]);
    expect(p.consoleErrors).toEqual([]);
    await p.context.clearCookies();
  });

  it("the admin's ledger, audit log and invoices", async () => {
    await signIn(p.page, "admin@diffractory.example");
    await p.page.waitForURL(`${BASE_URL}/admin`);
    expect(await lists(["/admin/ledger", "/admin/audit-log", "/admin/invoices"])).toEqual([]);
    expect(p.consoleErrors).toEqual([]);
    await p.context.clearCookies();
  });
});
