// The trend screen of a material in a real browser (docs/design.md#lots-and-trends): the control chart and the
// moving-range chart drawn, the flagged lot in the table with its rule in words (Western Electric Co., Statistical
// Quality Control Handbook, 1956: rule 1, one point beyond the 3σ limits), another parameter, the baseline saved
// and the CSV offered. The material and its 21 lots are written straight into the browser database.
import pg from "pg";
import { afterAll, afterEach, beforeAll, describe, expect, it } from "vitest";
import { databaseUrl } from "../../services/postgres";
import { checkAccessibility } from "./a11y";
import { type Browser, openBrowser, screenshot, signIn, visit } from "./harness";

const CODE = "HCW-BROWSER-T";
const WOBBLE = [
  0.0001, -0.0002, 0.0003, -0.0001, 0.0, 0.0002, -0.0003, 0.0001, -0.0002, 0.0002, -0.0001, 0.0, 0.0003, -0.0003, 0.0001, -0.0001, 0.0002, -0.0002, 0.0, 0.0001,
];
let b: Browser;
let db: pg.Client;
let materialId = "";

beforeAll(async () => {
  db = new pg.Client({ connectionString: databaseUrl("diffractory_browser") });
  await db.connect();
  await db.query("delete from materials where product_code = $1", [CODE]);
  const { rows } = await db.query(
    `insert into materials (organisation_id, product_code, name, formula, crystal_system, centering, cell_a, cell_b, cell_c, cell_alpha, cell_beta, cell_gamma, acceptance_window)
     select id, $1, 'Layered oxide for the browser', 'LiCoO2', 'hexagonal', 'R', 2.8156, 2.8156, 14.0542, 90, 90, 120, $2 from organisations where slug = 'halvorsen-cathode-works'
     returning id`,
    [CODE, JSON.stringify({ a: { plusMinus: 0.002, unit: "absolute" } })],
  );
  materialId = rows[0].id;
  const values = [...WOBBLE.map((d) => 2.8156 + d), 2.8206];
  for (const [i, a] of values.entries()) {
    await db.query(
      "insert into material_lots (material_id, lot_code, measured_at, cell, esd, verdict, within_window) values ($1, $2, $3, $4, $5, 'consistent', $6)",
      [
        materialId,
        `BT-${String(i + 1).padStart(3, "0")}`,
        new Date(Date.UTC(2026, 0, 5) + i * 7 * 86_400_000),
        JSON.stringify({ a, b: a, c: 14.0542, alpha: 90, beta: 90, gamma: 120 }),
        JSON.stringify({ a: 0.00008, c: 0.0004 }),
        Math.abs(a - 2.8156) <= 0.002,
      ],
    );
  }
  b = await openBrowser();
});
afterAll(async () => {
  await db?.query("delete from materials where product_code = $1", [CODE]);
  await db?.end();
  await b?.close();
});
afterEach(async () => {
  expect(b.consoleErrors).toEqual([]);
});

describe("a material's trend", () => {
  it("draws the chart, flags the lot beyond 3σ, switches parameter, saves the baseline and offers the CSV", async () => {
    const page = b.page;
    await signIn(page, "owner@halvorsen.example");
    await page.waitForURL(/\/client$/);
    await visit(page, `/client/materials/${materialId}/trend?parameter=a`);
    await page.locator('[data-testid="trend-chart"][data-ready="true"] canvas').waitFor();
    await page.locator('[data-testid="range-chart"][data-ready="true"] canvas').waitFor();
    await expect(page.getByTestId("trend-chart").getAttribute("role")).resolves.toBe("img");
    await expect(page.getByTestId("trend-chart").getAttribute("aria-label")).resolves.toMatch(/1 lot breaks a rule: BT-021 \(rule 1\)/);
    await expect(page.getByTestId("trend-summary").textContent()).resolves.toMatch(/from 20 baseline lots/);
    const flagged = page.locator('tr[data-rules="broken"]');
    await expect(flagged.count()).resolves.toBe(1);
    await expect(flagged.textContent()).resolves.toMatch(/BT-021.*outside.*a: rule 1 \(one point beyond the 3σ limits\)/);
    await checkAccessibility(page, "material-trend");
    await screenshot(page, "material-trend");

    await page.getByRole("link", { name: "c", exact: true }).click();
    await page.waitForURL(/parameter=c/);
    await page.locator('[data-testid="trend-chart"][data-ready="true"] canvas').waitFor();

    await page.getByLabel("First lot").fill("1");
    await page.getByLabel("Last lot").fill("10");
    await page.getByRole("button", { name: "Save the baseline" }).click();
    await page.getByText("The control limits come from lots 1 to 10 (chosen)").waitFor();

    const csv = page.getByRole("link", { name: "Download CSV" });
    await expect(csv.getAttribute("href")).resolves.toBe(`/client/materials/${materialId}/trend.csv`);
  });
});
