// Accessibility checks for the browser tests: axe-core (the registry's reference engine, WCAG 2.1 A/AA rules)
// run inside the page, plus small keyboard checks. A screen fails on any serious or critical violation.
import fs from "node:fs";
import { createRequire } from "node:module";
import path from "node:path";
import type { Page } from "playwright-core";
import { root } from "../../services/paths";

const require = createRequire(import.meta.url);
const AXE_SOURCE = fs.readFileSync(require.resolve("axe-core/axe.min.js"), "utf8");
export const A11Y_DIR = path.join(root, "test-results", "a11y");

interface AxeNode {
  target: string[];
  html: string;
  failureSummary?: string;
}
interface AxeViolation {
  id: string;
  impact: string | null;
  help: string;
  helpUrl: string;
  nodes: AxeNode[];
}

/** Every screen checked in this run, with its count of violations by impact (written for the issue note). */
const checked: { screen: string; url: string; serious: number; moderate: number; minor: number }[] = [];

/**
 * Runs axe-core on the current page. The source is evaluated through the DevTools protocol, which the page's
 * content security policy does not govern, so no inline script is needed. Throws with a readable list when a
 * serious or critical violation is found; the full report goes to test-results/a11y/<screen>.json.
 */
export async function checkAccessibility(page: Page, screen: string) {
  await page.evaluate(AXE_SOURCE);
  const violations = (await page.evaluate(async () => {
    const axe = (window as unknown as { axe: { run: (ctx: Document, opts: object) => Promise<{ violations: unknown[] }> } }).axe;
    const result = await axe.run(document, { runOnly: { type: "tag", values: ["wcag2a", "wcag2aa", "wcag21a", "wcag21aa"] }, resultTypes: ["violations"] });
    return result.violations;
  })) as AxeViolation[];
  fs.mkdirSync(A11Y_DIR, { recursive: true });
  fs.writeFileSync(path.join(A11Y_DIR, `${screen}.json`), JSON.stringify({ url: page.url(), violations }, null, 2));
  const count = (impacts: string[]) => violations.filter((v) => impacts.includes(v.impact ?? "")).length;
  checked.push({ screen, url: page.url(), serious: count(["serious", "critical"]), moderate: count(["moderate"]), minor: count(["minor"]) });
  fs.writeFileSync(path.join(A11Y_DIR, "screens.json"), JSON.stringify(checked, null, 2));
  const blocking = violations.filter((v) => v.impact === "serious" || v.impact === "critical");
  if (blocking.length > 0) {
    const lines = blocking.map(
      (v) =>
        `- ${v.id} (${v.impact}): ${v.help}\n${v.nodes
          .slice(0, 5)
          .map((n) => `    ${n.target.join(" ")}  ${n.html.slice(0, 160)}`)
          .join("\n")}`,
    );
    throw new Error(`Accessibility: ${blocking.length} serious or critical violation(s) on "${screen}" (${page.url()}):\n${lines.join("\n")}`);
  }
  return violations;
}

/** The element that has keyboard focus, described for assertions (tag, accessible text, and whether a focus ring shows). */
export async function focusedElement(page: Page) {
  return page.evaluate(() => {
    const el = document.activeElement as HTMLElement | null;
    if (!el || el === document.body) return null;
    const style = getComputedStyle(el);
    const ring = (style.outlineStyle !== "none" && parseFloat(style.outlineWidth) > 0) || (style.boxShadow !== "none" && style.boxShadow !== "");
    return {
      tag: el.tagName.toLowerCase(),
      text: (el.getAttribute("aria-label") || el.textContent || (el as HTMLInputElement).value || "").trim().slice(0, 80),
      name: el.getAttribute("name"),
      visibleFocus: ring,
    };
  });
}

/** Presses Tab until an element matching `predicate` has focus (at most `limit` presses); returns what was passed. */
export async function tabTo(page: Page, predicate: (f: NonNullable<Awaited<ReturnType<typeof focusedElement>>>) => boolean, limit = 60) {
  const passed: Awaited<ReturnType<typeof focusedElement>>[] = [];
  for (let i = 0; i < limit; i++) {
    await page.keyboard.press("Tab");
    const f = await focusedElement(page);
    passed.push(f);
    if (f && predicate(f)) return { found: f, passed };
  }
  throw new Error(`Tab did not reach the element within ${limit} presses; passed: ${passed.map((p) => p?.text ?? "(none)").join(" | ")}`);
}
