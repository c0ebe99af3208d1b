// The check screen in a real browser: the client opens a demo check, reads the verdict, zooms the plot and
// resets it, downloads the peaks CSV; the other demo checks show review and inconsistent; outsiders get 404.
import { execFileSync } from "node:child_process";
import fs from "node:fs";
import { afterAll, afterEach, beforeAll, describe, expect, it } from "vitest";
import { root } from "../../services/paths";
import { databaseUrl } from "../../services/postgres";
import { openBrowser, screenshot, signIn, visit, type Browser } from "./harness";

interface DemoCheck {
  fileName: string;
  checkId: string | null;
  expected: string;
  verdict: string | null;
}

let b: Browser;
let checks: DemoCheck[] = [];
const checkOf = (verdict: string) => checks.find((c) => c.verdict === verdict)!.checkId!;

beforeAll(async () => {
  // The demo seed stores and checks these scans; running it again only reads them back (it is idempotent).
  const out = execFileSync(process.execPath, ["--import", "tsx", "scripts/seed-demo-scans.ts"], {
    cwd: root,
    env: { ...process.env, DATABASE_URL: databaseUrl("diffractory_browser"), DIFFRACTORY_LOCAL: "1" },
    encoding: "utf8",
  });
  checks = JSON.parse(out.trim().split("\n").pop()!);
  b = await openBrowser();
});
afterAll(async () => {
  await b?.close();
});
afterEach(async () => {
  expect(b.consoleErrors).toEqual([]);
  await b.context.clearCookies();
});

describe("the check screen", () => {
  it("shows the demo checks' verdicts in words", () => {
    expect(checks.map((c) => c.verdict).sort()).toEqual(["consistent", "inconsistent", "review"]);
  });

  it("the client reads a consistent check, zooms and resets the plot, and downloads the peaks", async () => {
    const page = b.page;
    await signIn(page, "owner@halvorsen.example");
    await page.waitForURL(/\/client$/);
    await visit(page, `/checks/${checkOf("consistent")}`);
    await page.getByRole("heading", { name: /Lattice check of HC-2398-1/ }).waitFor();
    await expect(page.getByTestId("verdict").textContent()).resolves.toContain("Consistent");
    await page.getByText("The scan confirms the declared cell.").waitFor();
    await page.locator('[data-testid="check-plot"][data-ready="true"] canvas').waitFor();
    // The peaks are folded under the summary and paged: open them, then show every peak.
    await page.getByTestId("peaks-details").locator("summary").click();
    const rows = page.getByRole("table", { name: "Fitted peaks with their Miller indices" }).locator("tbody tr");
    await page.getByRole("button", { name: /^Show all \d+$/ }).click();
    expect(await rows.count()).toBeGreaterThan(20);
    // Miller indices as the trade writes them: hkl, lower case, one heading.
    await expect(page.getByRole("columnheader", { name: "hkl", exact: true }).count()).resolves.toBe(1);
    await expect(page.getByTestId("m20").textContent()).resolves.toMatch(/^\d+\.\d/);
    await screenshot(page, "check-screen-consistent");

    // Drag across a quarter of the plot: the 2θ window narrows.
    const over = page.locator(".u-over");
    // The peaks opened below the plot scrolled the page: bring the plot back into view before dragging on it.
    await over.scrollIntoViewIfNeeded();
    const box = (await over.boundingBox())!;
    await page.mouse.move(box.x + box.width * 0.2, box.y + box.height * 0.4);
    await page.mouse.down();
    await page.mouse.move(box.x + box.width * 0.3, box.y + box.height * 0.4, { steps: 8 });
    await page.mouse.move(box.x + box.width * 0.45, box.y + box.height * 0.4, { steps: 8 });
    await page.mouse.up();
    await expect(page.getByTestId("plot-range").textContent()).resolves.toMatch(/^Showing 2θ/);
    await screenshot(page, "check-screen-zoomed");
    // Pan by a button, then double-click resets to the whole scan.
    await page.getByRole("button", { name: "Pan to higher 2θ" }).click();
    await over.dblclick({ position: { x: box.width * 0.5, y: box.height * 0.5 } });
    await page
      .getByTestId("plot-range")
      .getByText(/^Whole scan/)
      .waitFor();

    const [download] = await Promise.all([page.waitForEvent("download"), page.getByRole("link", { name: "Download peaks (CSV)" }).click()]);
    expect(download.suggestedFilename()).toBe("HC-2398-1_Co_15-110-v1-peaks.csv");
    const csv = fs.readFileSync((await download.path())!, "utf8");
    expect(csv.split("\r\n")[0]).toMatch(/^peak,h,k,l,d_angstrom,two_theta_obs_deg,/);
    expect(csv.trim().split("\r\n").length).toBeGreaterThan(20);
  });

  it("the client's review check names the impurity; another organisation gets 404", async () => {
    const page = b.page;
    await signIn(page, "owner@halvorsen.example");
    await page.waitForURL(/\/client$/);
    await visit(page, `/checks/${checkOf("review")}`);
    await expect(page.getByTestId("verdict").textContent()).resolves.toContain("Review");
    await page
      .getByText(/may belong to another phase/)
      .first()
      .waitFor();
    await page.locator('[data-testid="check-plot"][data-ready="true"] canvas').waitFor();
    await screenshot(page, "check-screen-review");
    await b.context.clearCookies();

    await signIn(page, "owner@pinecrest.example");
    await page.waitForURL(/\/client$/);
    const answer = await page.goto(`/checks/${checkOf("review")}`);
    expect(answer?.status()).toBe(404);
  });

  it("the lab opens the inconsistent check of the other client's order", async () => {
    const page = b.page;
    await signIn(page, "lab@graniteridge.example");
    await page.waitForURL(/\/lab$/);
    await visit(page, `/checks/${checkOf("inconsistent")}`);
    await expect(page.getByTestId("verdict").textContent()).resolves.toContain("Inconsistent");
    await page.getByText("The scan does not fit the declared cell.").waitFor();
    await page.locator('[data-testid="check-plot"][data-ready="true"] canvas').waitFor();
    await screenshot(page, "check-screen-inconsistent");
  });
});
