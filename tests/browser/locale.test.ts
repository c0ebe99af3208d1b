// Money and dates in the viewer's locale: the same order under a German and a US browser. The browser's language
// becomes its Accept-Language; the server renders in that locale and hydration renders the same text (a mismatch
// would be a console error, which fails the test). Times are shown in UTC.
import pg from "pg";
import { numberedOrderInsert } from "../setup/numbered-order";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { databaseUrl } from "../../services/postgres";
import { BASE_URL, openBrowser, screenshot, signIn, visit } from "./harness";

const TITLE = "Locale check of spinel lot LC-4";
let orderId = "";

/** An order of Halvorsen at Lakeside for 1,234.50 EUR, last changed 7 March 2026 at 09:15 UTC. */
beforeAll(async () => {
  const c = new pg.Client({ connectionString: databaseUrl("diffractory_browser") });
  await c.connect();
  try {
    const one = async (sql: string, values: unknown[] = []) => (await c.query(sql, values)).rows[0];
    const existing = await one("select o.id from orders o join requests r on r.id = o.request_id where r.title = $1", [TITLE]);
    if (existing) {
      orderId = existing.id;
      return;
    }
    const client = await one("select id from organisations where slug = 'halvorsen-cathode-works'");
    const lab = await one("select id from organisations where slug = 'lakeside-institute-x-ray-core'");
    const owner = await one("select id from users where email = 'owner@halvorsen.example'");
    const request = await one(
      "insert into requests (organisation_id, created_by, title, state, draft_step, range_min, range_max) values ($1, $2, $3, 'awarded', 'review', 10, 90) returning id",
      [client.id, owner.id, TITLE],
    );
    const quote = await one(
      "insert into quotes (request_id, lab_id, state, line_items, total_minor, currency, valid_until, turnaround_days) values ($1, $2, 'accepted', '[]', 123450, 'EUR', '2026-03-21T00:00:00Z', 5) returning id",
      [request.id, lab.id],
    );
    const order = await one(
      numberedOrderInsert(
        "request_id, quote_id, client_organisation_id, lab_id, state, amount_minor, currency, updated_at",
        "$1::uuid, $2::uuid, $3::uuid, $4::uuid, 'measuring', 123450, 'EUR', '2026-03-07T09:15:00Z'::timestamptz",
      ),
      [request.id, quote.id, client.id, lab.id],
    );
    await c.query(
      "insert into order_events (order_id, to_state, note, created_at) values ($1, 'measuring', 'Made by the locale browser test', '2026-03-07T09:15:00Z')",
      [order.id],
    );
    orderId = order.id;
  } finally {
    await c.end();
  }
});

// Expected text written from the conventions themselves (common practice, CLDR): German groups thousands with
// "." and writes decimals with ",", the euro sign after a no-break space, dates day.month.year; US English writes
// "€1,234.50", "Mar 7, 2026" and 12-hour times.
const CASES = [
  { locale: "de-DE", money: "1.234,50\u00a0€", day: "07.03.2026", moment: "7. März 2026, 09:15 UTC" },
  { locale: "en-US", money: "€1,234.50", day: "Mar 7, 2026", moment: "Mar 7, 2026, 9:15 AM UTC" },
  { locale: "en-GB", money: "€1,234.50", day: "7 Mar 2026", moment: "7 Mar 2026, 09:15 UTC" },
];

describe("money and dates in the viewer's locale", () => {
  for (const c of CASES) {
    it(`${c.locale}: the orders list and the order page`, async () => {
      const b = await openBrowser({ locale: c.locale });
      try {
        await signIn(b.page, "owner@halvorsen.example");
        await b.page.waitForURL(`${BASE_URL}/client`);
        await visit(b.page, "/client/orders");
        const row = b.page.getByRole("row").filter({ hasText: TITLE });
        // Intl output may carry U+202F or U+00A0 where a space is written; compare with spaces made plain.
        const plain = (s: string) => s.replace(/[\u00a0\u202f]/g, " ");
        const rowText = plain(await row.innerText());
        expect(rowText).toContain(plain(c.money));
        expect(rowText).toContain(c.day);
        await screenshot(b.page, `locale-${c.locale}-orders`);
        await visit(b.page, `/client/orders/${orderId}`);
        const text = plain(await b.page.locator("main").innerText());
        expect(text).toContain(plain(c.money));
        expect(text).toContain(plain(c.moment));
        await screenshot(b.page, `locale-${c.locale}-order`);
        expect(b.consoleErrors).toEqual([]);
      } finally {
        await b.close();
      }
    });
  }
});

// Diffractory's own date field (app/components/date-field.tsx): it shows and takes a day in the page's locale, not
// the browser interface's, and sends ISO 8601 (YYYY-MM-DD) under the field's name. Orders as CLDR writes the numeric
// day (common practice): day/month/year in Britain, month/day/year in the United States, day.month.year in German.
const FIELD_CASES = [
  { locale: "en-GB", pattern: "DD/MM/YYYY", typed: "30/06/2099", shown: (y: string, m: string, d: string) => `${d}/${m}/${y}` },
  { locale: "en-US", pattern: "MM/DD/YYYY", typed: "06/30/2099", shown: (y: string, m: string, d: string) => `${m}/${d}/${y}` },
  { locale: "de-DE", pattern: "DD.MM.YYYY", typed: "30.06.2099", shown: (y: string, m: string, d: string) => `${d}.${m}.${y}` },
];

describe("dates in one style per locale, the date field included", () => {
  for (const c of FIELD_CASES) {
    it(`${c.locale}: the agreement form's first day, and no ISO day on the order screens`, async () => {
      const b = await openBrowser({ locale: c.locale });
      try {
        await signIn(b.page, "owner@halvorsen.example");
        await b.page.waitForURL(`${BASE_URL}/client`);
        for (const path of ["/client/orders", `/client/orders/${orderId}`]) {
          await visit(b.page, path);
          expect(await b.page.locator("main").textContent(), path).not.toMatch(/\b\d{4}-\d{2}-\d{2}\b/);
        }
        await visit(b.page, `/client/orders/${orderId}/agreement`);
        const field = b.page.getByLabel("First day");
        expect(await field.getAttribute("placeholder")).toBe(c.pattern);
        expect(await field.getAttribute("type")).toBe("text");
        // The loader's default (today, in UTC) shows in the locale's order; the form would send it as ISO.
        const sent = b.page.locator('input[type="hidden"][name="startsOn"]');
        const iso = await sent.inputValue();
        expect(iso).toMatch(/^\d{4}-\d{2}-\d{2}$/);
        const [y, m, d] = iso.split("-");
        expect(await field.inputValue()).toBe(c.shown(y, m, d));
        await field.fill(c.typed);
        expect(await sent.inputValue()).toBe("2099-06-30");
        // A day that is not on the calendar is named in one sentence, in the locale's pattern.
        await field.fill("31/31/2099");
        await field.blur();
        await b.page.getByText(`Write the day as ${c.pattern}`).waitFor();
        await screenshot(b.page, `locale-${c.locale}-date-field`);
        expect(b.consoleErrors).toEqual([]);
      } finally {
        await b.close();
      }
    });
  }
});
