// The check screen's phases in a real browser: the verdict and the acceptance window side by side, the phases and
// candidate forms, the whole-pattern curve under the observed scan, the x axis in 2θ, d or Q, the freely fitted
// peaks as a separate layer, and a result stored before phases read as one main phase with its curve labelled as
// the free-peak sum. The demo's review and inconsistent checks get version-3 results made from their own
// (tests/browser/fixtures/phase-results.ts) for this file and get their stored results back afterwards.
import { execFileSync } from "node:child_process";
import pg from "pg";
import { afterAll, afterEach, beforeAll, describe, expect, it } from "vitest";
import { root } from "../../services/paths";
import { databaseUrl } from "../../services/postgres";
import { checkAccessibility } from "./a11y";
import { olivineWithRutile, polymorphCandidates, type StoredLike, storedBeforePhases } from "./fixtures/phase-results";
import { openBrowser, screenshot, signIn, visit, type Browser } from "./harness";

interface DemoCheck {
  fileName: string;
  checkId: string | null;
  verdict: string | null;
}

let b: Browser;
let db: pg.Client;
const originals = new Map<string, unknown>();
const ids: Record<"consistent" | "review" | "inconsistent", string> = { consistent: "", review: "", inconsistent: "" };

async function replaceResult(id: string, make: (r: StoredLike) => StoredLike) {
  const { rows } = await db.query("select result from scan_checks where id = $1", [id]);
  originals.set(id, rows[0].result);
  await db.query("update scan_checks set result = $1 where id = $2", [JSON.stringify(make(structuredClone(rows[0].result))), id]);
}

beforeAll(async () => {
  // The demo seed stores and checks the demo scans; running it again only reads them back (it is idempotent).
  const out = execFileSync(process.execPath, ["--import", "tsx", "scripts/seed-demo-scans.ts"], {
    cwd: root,
    env: { ...process.env, DATABASE_URL: databaseUrl("diffractory_browser"), DIFFRACTORY_LOCAL: "1" },
    encoding: "utf8",
  });
  const checks: DemoCheck[] = JSON.parse(out.trim().split("\n").pop()!);
  const of = (name: string) => checks.find((c) => c.fileName === name)!.checkId!;
  ids.consistent = of("HC-2398-1_Co_15-110.xy");
  ids.review = of("HC-2398-2_Co_15-110.xy");
  ids.inconsistent = of("PSF-118-B_Cu_5-60.xy");
  db = new pg.Client({ connectionString: databaseUrl("diffractory_browser") });
  await db.connect();
  await replaceResult(ids.review, olivineWithRutile);
  await replaceResult(ids.inconsistent, polymorphCandidates);
  await replaceResult(ids.consistent, storedBeforePhases);
  b = await openBrowser();
});
afterAll(async () => {
  for (const [id, result] of originals) await db?.query("update scan_checks set result = $1 where id = $2", [JSON.stringify(result), id]);
  await db?.end();
  await b?.close();
});
afterEach(async () => {
  expect(b.consoleErrors).toEqual([]);
});

const plotReady = (b: Browser) => b.page.locator('[data-testid="check-plot"][data-ready="true"] canvas').waitFor();

describe("the check screen with phases", () => {
  it("names the candidate form the scan shows, the absent expected phase, and draws the whole-pattern fit", async () => {
    const page = b.page;
    await signIn(page, "lab@graniteridge.example");
    await page.waitForURL(/\/lab$/);
    await visit(page, `/checks/${ids.inconsistent}`);
    await expect(page.getByTestId("verdict").textContent()).resolves.toContain("Inconsistent");
    await expect(page.getByTestId("window-answer").textContent()).resolves.toBe("No window set");
    await plotReady(b);

    // Phases: the chosen form as the main phase, present; the hydrate expected and absent, with its reason.
    const phases = page.getByRole("table", { name: "Declared phases and what the scan shows of each" }).locator("tbody tr");
    await expect(phases.count()).resolves.toBe(2);
    await expect(phases.nth(0).textContent()).resolves.toMatch(/Main.*PSF-118 form I.*monoclinic P.*Present/);
    // A monoclinic cell's α and γ are fixed by the system, shown as fixed rather than as refined values.
    await expect(phases.nth(0).getByText("fixed (90°)").count()).resolves.toBe(2);
    await expect(phases.nth(1).textContent()).resolves.toMatch(/Expected.*PSF-118 hydrate.*Absent.*is in the scan/);

    // Candidates: one sentence on top, the main declaration first, the chosen form marked.
    await expect(page.getByTestId("candidate-headline").textContent()).resolves.toMatch(/^PSF-118 form I explains the scan best: 20 of the 20 strongest peaks/);
    const candidates = page.getByRole("table", { name: /Candidate forms of the main phase/ }).locator("tbody tr");
    await expect(candidates.count()).resolves.toBe(2);
    await expect(candidates.nth(0).textContent()).resolves.toMatch(/PSF-118 form II.*the main declaration.*Inconsistent/);
    await expect(candidates.nth(1).getAttribute("data-chosen")).resolves.toBe("true");
    await expect(candidates.nth(1).textContent()).resolves.toMatch(/Consistent.*20 of 20.*Chosen/);

    // Whole-pattern figures beside M20 and F_N; the plot's calculated curve is the whole-pattern fit.
    await expect(page.getByTestId("whole-pattern").textContent()).resolves.toMatch(/^Rwp \d+\.\d\d % · Rexp \d+\.\d\d % · GoF \d+\.\d\d/);
    const plot = page.getByTestId("check-plot");
    await expect(plot.getAttribute("data-calculated")).resolves.toBe("whole-pattern");
    const key = page.getByTestId("plot-key");
    await key.getByText("PSF-118 form I — main").waitFor();
    await key.getByText("PSF-118 hydrate — expected, absent (declared cell)").waitFor();
    // Peaks carry the phase that indexes them (the table is folded and paged: open it, show every peak).
    await page.getByTestId("peaks-details").locator("summary").click();
    const showAll = page.getByRole("button", { name: /^Show all \d+$/ });
    if (await showAll.count()) await showAll.click();
    const peaks = page.getByRole("table", { name: "Fitted peaks with their Miller indices" });
    await expect(peaks.getByRole("columnheader", { name: "Phase", exact: true }).count()).resolves.toBe(1);
    await expect(peaks.locator('tr[data-phase="0"]').first().textContent()).resolves.toContain("PSF-118 form I");
    await checkAccessibility(page, "check-screen-phases");
    await screenshot(page, "check-screen-candidates");

    // The freely fitted peaks: a separate layer, off until asked for.
    const free = page.getByRole("checkbox", { name: /Show the freely fitted peaks/ });
    await expect(free.isChecked()).resolves.toBe(false);
    // The plot's own key (the plotting library's legend is off) says whether the layer is shown.
    await expect(page.locator(".u-legend").count()).resolves.toBe(0);
    const freeKey = key.locator('[data-series="free"]');
    await expect(freeKey.getAttribute("data-shown")).resolves.toBe("false");
    await free.check();
    await expect(freeKey.getAttribute("data-shown")).resolves.toBe("true");
    await checkAccessibility(page, "check-screen-free-peaks");

    // The x axis: d-spacing and Q relabel the same 2θ points; a zoom is kept across the change.
    const range = page.getByTestId("plot-range");
    await page.getByRole("radio", { name: "d-spacing (Å)" }).check();
    await page.locator('[data-testid="check-plot"][data-axis="d"][data-ready="true"] canvas').waitFor();
    // Cu Kα1 at 2θ 5° and 60°: d = λ / (2 sin θ) = 17.659 and 1.541 Å (Bragg's law; λ in docs/reference-values.md).
    await expect(range.textContent()).resolves.toMatch(/^Whole scan, d 17\.659–1\.541 Å \(2θ 5\.00°–60\.00°\)/);
    await page.getByRole("radio", { name: "Q (Å⁻¹)" }).check();
    await page.locator('[data-testid="check-plot"][data-axis="q"][data-ready="true"] canvas').waitFor();
    // Q = 2π / d: 0.356 and 4.078 Å⁻¹.
    await expect(range.textContent()).resolves.toMatch(/^Whole scan, Q 0\.356–4\.078 Å⁻¹/);
    const over = page.locator(".u-over");
    const box = (await over.boundingBox())!;
    await page.mouse.move(box.x + box.width * 0.2, box.y + box.height * 0.3);
    await page.mouse.down();
    await page.mouse.move(box.x + box.width * 0.4, box.y + box.height * 0.3, { steps: 8 });
    await page.mouse.up();
    await expect(range.textContent()).resolves.toMatch(/^Showing Q /);
    await page.getByRole("radio", { name: "2θ (°)" }).check();
    await page.locator('[data-testid="check-plot"][data-axis="twoTheta"][data-ready="true"] canvas').waitFor();
    await expect(range.textContent()).resolves.toMatch(/^Showing 2θ /);
    await screenshot(page, "check-screen-candidates-zoomed");
  });

  it("shows two present phases and the acceptance window with each parameter's margin", async () => {
    const page = b.page;
    await visit(page, `/checks/${ids.review}`);
    await plotReady(b);
    await expect(page.getByTestId("window-answer").textContent()).resolves.toBe("Outside the window");
    const window = page.getByRole("table", { name: /Acceptance window of the main phase/ }).locator("tbody tr");
    await expect(window.count()).resolves.toBe(3);
    // The fixture's window: a ± 0.005 Å and b ± 0.1 % hold the refined cell, c ± 0.003 Å does not.
    await expect(window.nth(0).getAttribute("data-inside")).resolves.toBe("true");
    await expect(window.nth(0).textContent()).resolves.toMatch(/^a10\.3300 Å ± 0\.005 Å10\.3250–10\.3350 Å.*\+0\.\d+ ÅYes$/);
    await expect(window.nth(1).textContent()).resolves.toMatch(/± 0\.1 %/);
    await expect(window.nth(2).getAttribute("data-inside")).resolves.toBe("false");
    await expect(window.nth(2).textContent()).resolves.toMatch(/−0\.\d+ ÅNo$/);

    const phases = page.getByRole("table", { name: "Declared phases and what the scan shows of each" }).locator("tbody tr");
    await expect(phases.count()).resolves.toBe(2);
    await expect(phases.nth(1).textContent()).resolves.toMatch(/Expected.*TiO2, rutile \(coating\).*tetragonal P.*Present/);
    await page.getByTestId("peaks-details").locator("summary").click();
    const showAll = page.getByRole("button", { name: /^Show all \d+$/ });
    if (await showAll.count()) await showAll.click();
    await expect(page.locator('tr[data-phase="1"]').first().textContent()).resolves.toContain("TiO2, rutile (coating)");
    await page.getByTestId("plot-key").getByText("TiO2, rutile (coating) — expected").waitFor();
    await checkAccessibility(page, "check-screen-window");
    await screenshot(page, "check-screen-window");
  });

  it("reads a check stored before phases as one main phase, its curve labelled as the sum of freely fitted peaks", async () => {
    const page = b.page;
    await visit(page, `/checks/${ids.consistent}`);
    await plotReady(b);
    await expect(page.getByTestId("check-plot").getAttribute("data-calculated")).resolves.toBe("free-peaks");
    await page.getByText("The copper curve is the sum of freely fitted peaks — not a whole-pattern fit").waitFor();
    await expect(page.getByTestId("plot-key").getByText("Sum of freely fitted peaks — not a whole-pattern fit").count()).resolves.toBe(1);
    await expect(page.getByRole("checkbox", { name: /Show the freely fitted peaks/ }).count()).resolves.toBe(0);
    await expect(page.getByTestId("whole-pattern").textContent()).resolves.toBe("not available (checked before the whole-pattern fit)");
    await expect(page.getByTestId("window-answer").textContent()).resolves.toBe("No window set");
    const phases = page.getByRole("table", { name: "Declared phases and what the scan shows of each" }).locator("tbody tr");
    await expect(phases.count()).resolves.toBe(1);
    await expect(phases.nth(0).textContent()).resolves.toMatch(/Main.*LiFePO4, olivine \(triphylite\).*orthorhombic P.*Present/);
    await expect(page.getByRole("region", { name: "Candidate forms" }).count()).resolves.toBe(0);
    await checkAccessibility(page, "check-screen-before-phases");
  });
});
