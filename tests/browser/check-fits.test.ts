// The check page's first screen in a real browser: at a desk (1366 × 900) the demo's review scan shows its verdict,
// the acceptance window's answer, the refined cell and the plot's canvas without scrolling; the peaks are folded
// and paged; the plot's key and readout are the product's own (the plotting library's legend is off); the page
// prints its summary, key and plot. Screenshots for docs/design-system.md ("The check page and plots").
import fs from "node:fs";
import path from "node:path";
import { afterAll, afterEach, beforeAll, describe, expect, it } from "vitest";
import { root } from "../../services/paths";
import { openBrowser, query, signIn, visit, type Browser } from "./harness";

const DESK = { width: 1366, height: 900 };
const PHONE = { width: 390, height: 844 };
const IMAGES = path.join(root, "docs", "images");

let b: Browser;
let reviewCheck = "";

beforeAll(async () => {
  // The demo scenario's review scan (app/demo/seed-scenario.server.ts), the one a demo reviewer opens first.
  const rows = await query<{ id: string }>("select c.id from scan_checks c join order_files f on f.id = c.file_id where f.name = $1 and f.version = 1", [
    "HC-2645-2_Co_15-110.xy",
  ]);
  reviewCheck = rows[0]?.id ?? "";
  b = await openBrowser({ viewport: DESK });
});
afterAll(async () => {
  await b?.close();
});
afterEach(() => {
  expect(b.consoleErrors).toEqual([]);
});

describe("the check page's first screen", () => {
  it("holds the verdict, the window answer, the cell and the plot at 1366 × 900", async () => {
    expect(reviewCheck).not.toBe("");
    const page = b.page;
    await signIn(page, "owner@halvorsen.example");
    await page.waitForURL(/\/client$/);
    await visit(page, `/checks/${reviewCheck}`);
    await page.locator('[data-testid="check-plot"][data-ready="true"] canvas').waitFor();
    await expect(page.getByTestId("verdict").textContent()).resolves.toContain("Review");

    // Each one's bottom edge within the first viewport, the page not scrolled.
    const firstScreen = {
      verdict: page.getByTestId("verdict"),
      window: page.getByTestId("window-answer"),
      cell: page.getByRole("table", { name: "Declared and refined cell" }),
      plot: page.locator('[data-testid="check-plot"] canvas').first(),
      key: page.getByTestId("plot-key"),
    };
    await expect(page.evaluate(() => window.scrollY)).resolves.toBe(0);
    for (const [name, locator] of Object.entries(firstScreen)) {
      const box = await locator.boundingBox();
      expect(box, name).not.toBeNull();
      expect(box!.y + box!.height, name).toBeLessThanOrEqual(DESK.height);
    }
    // The cell table's six rows, each symbol italic (Source Serif's italic, no text-transform).
    const cell = page.getByRole("table", { name: "Declared and refined cell" });
    await expect(cell.locator("tbody tr").count()).resolves.toBe(6);
    const alpha = cell.locator('[data-symbol="cell"]', { hasText: "α" });
    await expect(alpha.evaluate((el) => [getComputedStyle(el).fontStyle, getComputedStyle(el).textTransform].join(" "))).resolves.toBe("italic none");

    // The key is the product's own, drawn with the plot's styles; the library's legend is not on the page.
    await expect(page.locator(".u-legend").count()).resolves.toBe(0);
    const key = page.getByTestId("plot-key");
    await key.getByText("Observed scan").waitFor();
    await key.getByText("Calculated — whole-pattern fit").waitFor();
    await key.getByText(/^Difference, observed − calculated/).waitFor();
    await expect(key.locator('[data-series="phase-0"] [data-symbol="formula"] sub').first().textContent()).resolves.toBe("4");
    // The readout names the cursor's place and counts in words.
    const over = page.locator(".u-over");
    const box = (await over.boundingBox())!;
    await page.mouse.move(box.x + box.width * 0.4, box.y + box.height * 0.3);
    await expect(page.getByTestId("plot-readout").textContent()).resolves.toMatch(
      /^2θ \d+\.\d{3}° · [\d,]+ counts · calculated [\d,]+ · difference [+−]?[\d,]+/,
    );

    fs.mkdirSync(IMAGES, { recursive: true });
    await page.mouse.move(0, 0);
    await page.screenshot({ path: path.join(IMAGES, "check-page-desk.png") });
  });

  it("folds the peaks and pages them 25 at a time, by keyboard too", async () => {
    const page = b.page;
    const peaks = page.getByRole("table", { name: "Fitted peaks with their Miller indices" });
    await expect(peaks.count()).resolves.toBe(0);
    await expect(page.getByTestId("peaks-details").getAttribute("open")).resolves.toBeNull();
    await page.getByTestId("peaks-details").locator("summary").click();
    const rows = peaks.locator("tbody tr");
    await expect(rows.count()).resolves.toBe(25);
    await expect(peaks.getByRole("columnheader", { name: "hkl", exact: true }).count()).resolves.toBe(1);
    const shown = page.getByTestId("peaks-shown");
    const total = Number((await shown.textContent())!.match(/of (\d+)/)![1]);
    expect(total).toBeGreaterThan(25);
    await expect(shown.textContent()).resolves.toBe(`Peaks 1–25 of ${total} · page 1 of ${Math.ceil(total / 25)}`);
    await expect(rows.first().locator("td").first().textContent()).resolves.toBe("1");
    // Next page by keyboard: focus the button and press Enter.
    await page.getByRole("button", { name: "Next →" }).focus();
    await page.keyboard.press("Enter");
    await expect(shown.textContent()).resolves.toMatch(/^Peaks 26–50 of /);
    await expect(rows.first().locator("td").first().textContent()).resolves.toBe("26");
    await page.getByRole("button", { name: "← Previous" }).click();
    await expect(rows.first().locator("td").first().textContent()).resolves.toBe("1");
    await page.getByRole("button", { name: `Show all ${total}` }).click();
    await expect(rows.count()).resolves.toBe(total);
  });

  it("prints the summary, the key and the plot, without buttons or navigation", async () => {
    const page = b.page;
    await page.emulateMedia({ media: "print" });
    try {
      await expect(page.getByRole("link", { name: "Download peaks (CSV)" }).isVisible()).resolves.toBe(false);
      await expect(page.getByRole("link", { name: /Back to the order/ }).isVisible()).resolves.toBe(false);
      await expect(page.getByRole("button", { name: "Reset zoom" }).isVisible()).resolves.toBe(false);
      await expect(page.getByTestId("plot-key").isVisible()).resolves.toBe(true);
      await expect(page.locator('[data-testid="check-plot"] canvas').isVisible()).resolves.toBe(true);
      // The canvas fits the paper's width (A4 at 96 px per inch is about 794 px wide).
      await page.setViewportSize({ width: 794, height: 1123 });
      const canvas = (await page.locator('[data-testid="check-plot"] canvas').boundingBox())!;
      expect(canvas.x + canvas.width).toBeLessThanOrEqual(794);
      await page.screenshot({ path: path.join(IMAGES, "check-page-print.png"), fullPage: true });
      const pdf = await page.pdf({ format: "A4", printBackground: true });
      expect(pdf.subarray(0, 5).toString()).toBe("%PDF-");
    } finally {
      await page.emulateMedia({ media: "screen" });
      await page.setViewportSize(DESK);
    }
  });

  it("reads on a phone, the summary stacked and nothing wider than the screen", async () => {
    const page = b.page;
    await page.setViewportSize(PHONE);
    await visit(page, `/checks/${reviewCheck}`);
    await page.locator('[data-testid="check-plot"][data-ready="true"] canvas').waitFor();
    await expect(page.evaluate(() => document.documentElement.scrollWidth)).resolves.toBeLessThanOrEqual(PHONE.width);
    await page.screenshot({ path: path.join(IMAGES, "check-page-phone.png") });
    await page.setViewportSize(DESK);
  });
});
