// Symbols as the trade writes them, in a real browser, on the demo's pages that show them (docs/design-system.md,
// "Symbols"): the client's request with a declared further phase, an order, a check, a material's trend, a lab's
// order and calibration record, an admin's view of a calibration check, the public directory and a lab's profile.
// On each page every element whose text holds α, β, γ, θ or Å, and every marked symbol ([data-symbol]), is read
// with getComputedStyle:
// - no text-transform on it or any ancestor: an upper-cased α is a different letter, Α (common practice);
// - cell parameter symbols in italics: IUCr Notes for Authors (symbols of variables such as a, b, c, α, β, γ, V in
//   italic type; units and Miller-index brackets upright);
// - a formula with a count has it as a subscript: IUPAC Red Book (Nomenclature of Inorganic Chemistry, 2005),
//   IR-3.4 / IR-4.3 (numbers of atoms as right subscripts);
// - Miller indices in lower case "hkl", never "H K L" (common practice; IUCr Notes for Authors);
// and no visible text shows "Α", "Β", "Γ", "Θ" (a transformed α, β, γ, θ) or a formula typed flat ("Li3PO4").
import type { Page } from "playwright-core";
import { afterAll, afterEach, beforeAll, describe, expect, it } from "vitest";
import { ELEMENT_SYMBOLS } from "../../app/domain/formula";
import { type Browser, openBrowser, query, signIn, visit } from "./harness";

let b: Browser;

beforeAll(async () => {
  b = await openBrowser();
});
afterAll(async () => {
  await b?.close();
});
afterEach(async () => {
  expect(b.consoleErrors).toEqual([]);
  await b.context.clearCookies();
});

const one = async (sql: string, values: unknown[]) => {
  const rows = await query<{ id: string }>(sql, values);
  expect(rows.length, `${sql} ${values.join(", ")}`).toBeGreaterThan(0);
  return rows[0].id;
};
const requestId = (title: string) => one("select id from requests where title = $1", [title]);
const orderId = (title: string) => one("select o.id from orders o join requests r on r.id = o.request_id where r.title = $1", [title]);
const materialId = (code: string) => one("select id from materials where product_code = $1", [code]);
const instrumentId = (name: string) => one("select id from instruments where name = $1", [name]);
const labId = (slug: string) => one("select id from organisations where slug = $1", [slug]);
/** The demo check of an order's scan (the seed checks it; the worker may still be at it, so this waits a little). */
async function checkId(fileName: string) {
  for (let i = 0; i < 60; i++) {
    const rows = await query<{ id: string }>(
      "select c.id from scan_checks c join order_files f on f.id = c.file_id where f.name = $1 and f.version = 1 and c.status = 'done'",
      [fileName],
    );
    if (rows[0]) return rows[0].id;
    await new Promise((r) => setTimeout(r, 1000));
  }
  throw new Error(`No finished check of ${fileName}`);
}

interface Finding {
  problem: string;
  text: string;
}

/**
 * Walks the page in the browser and returns what breaks the rules above. `flatFormulas`: also report a formula
 * written without subscripts anywhere in the visible text (off for pages another part of the product draws).
 */
async function symbolFindings(page: Page, flatFormulas: boolean): Promise<Finding[]> {
  return page.evaluate(
    ({ elements, flatFormulas }) => {
      const known = new Set(elements);
      const findings: { problem: string; text: string }[] = [];
      const short = (el: Element) => (el.textContent ?? "").trim().replace(/\s+/g, " ").slice(0, 80);
      // A word that is a formula of two or more elements with at least one count: "LiFePO4", "Li3PO4", "CuSO4·5H2O".
      const isFlatFormula = (raw: string) => {
        const word = raw.replace(/^[([{"“‘']+|[)\]}"”’'.,;:]+$/g, "");
        if (!/^(?:[A-Z][a-z]?|\d+(?:\.\d+)?|[()[\]·])+$/.test(word)) return false;
        const tokens = word.match(/[A-Z][a-z]?|\d+(?:\.\d+)?|[()[\]·]/g) ?? [];
        const symbols = tokens.filter((t) => /^[A-Z]/.test(t));
        if (symbols.length < 2 || !symbols.every((t) => known.has(t))) return false;
        return tokens.some((t, i) => /^\d/.test(t) && i > 0 && /^[A-Z)\]]/.test(tokens[i - 1]));
      };
      const visible = (el: Element) => {
        const r = el.getBoundingClientRect();
        const style = getComputedStyle(el);
        return (r.width > 0 || r.height > 0) && style.visibility !== "hidden" && style.display !== "none";
      };
      const ownText = (el: Element) =>
        [...el.childNodes]
          .filter((n) => n.nodeType === Node.TEXT_NODE)
          .map((n) => n.textContent ?? "")
          .join("");
      const checked = new Set<Element>();
      const noTransformUp = (el: Element) => {
        for (let e: Element | null = el; e && !checked.has(e); e = e.parentElement) {
          const t = getComputedStyle(e).textTransform;
          if (t !== "none") findings.push({ problem: `text-transform ${t} on <${e.tagName.toLowerCase()} class="${e.className}">`, text: short(el) });
          checked.add(e);
        }
      };
      for (const el of document.body.querySelectorAll("*")) {
        if (["SCRIPT", "STYLE", "TEMPLATE"].includes(el.tagName)) continue;
        const symbol = el.getAttribute("data-symbol");
        if (symbol || /[αβγθÅ]/.test(ownText(el))) noTransformUp(el);
        if (symbol === "cell" && getComputedStyle(el).fontStyle !== "italic") findings.push({ problem: "cell symbol not italic", text: short(el) });
        // textContent joins the <sub> runs back, so "Li3PO4" here is a formula with a count: it needs its <sub>.
        if (symbol === "formula" && (el.textContent ?? "").split(/\s+/).some(isFlatFormula) && !el.querySelector("sub"))
          findings.push({ problem: "formula with a count but no <sub>", text: short(el) });
      }
      // What a reader sees: innerText applies text-transform, so a transformed α shows here as Α.
      // biome-ignore lint/performance/useDomNodeTextContent: the transformed text is what is checked
      const seen = document.body.innerText;
      for (const bad of ["Α", "Β", "Γ", "Θ", "H K L"]) {
        if (seen.includes(bad))
          findings.push({ problem: `rendered text holds “${bad}”`, text: seen.slice(Math.max(0, seen.indexOf(bad) - 40), seen.indexOf(bad) + 40) });
      }
      if (flatFormulas) {
        const walker = document.createTreeWalker(document.body, NodeFilter.SHOW_TEXT);
        for (let n = walker.nextNode(); n; n = walker.nextNode()) {
          const parent = n.parentElement;
          if (!parent || parent.closest("script, style, textarea, select, option, code, [data-symbol]") || !visible(parent)) continue;
          // A field's example of what to type ("e.g. LiFePO4") shows it as it is typed, without subscripts.
          if (/^e\.g\. /.test((n.textContent ?? "").trim())) continue;
          for (const word of (n.textContent ?? "").split(/\s+/)) {
            if (isFlatFormula(word)) findings.push({ problem: "formula written flat", text: `${word} in “${(n.textContent ?? "").trim().slice(0, 80)}”` });
          }
        }
      }
      return findings;
    },
    { elements: [...ELEMENT_SYMBOLS], flatFormulas },
  );
}

/** Opens the page and asserts the rules; returns how many symbols it read, so a page that shows none is noticed. */
async function expectSymbolsAsWritten(path: string, { flatFormulas = true } = {}) {
  const page = b.page;
  await visit(page, path);
  await page.waitForLoadState("networkidle");
  const findings = await symbolFindings(page, flatFormulas);
  expect(findings, path).toEqual([]);
  return page.evaluate(() => document.querySelectorAll("[data-symbol]").length);
}

describe("symbols as the trade writes them", () => {
  it("on the client's request, order, check, materials and trend", async () => {
    const request = await requestId("Olivine with Li3PO4 residue in LFP batch HC-2681");
    const order = await orderId("Lattice check of LFP production lot HC-2645");
    const material = await materialId("HCW-LFP-C20");
    const check = await checkId("HC-2645-2_Co_15-110.xy");
    await signIn(b.page, "owner@halvorsen.example");
    await b.page.waitForURL(/\/client$/);

    expect(await expectSymbolsAsWritten(`/client/requests/${request}`)).toBeGreaterThan(0);
    // The declared further phase: Li₃PO₄ with its subscripts, and the cell with italic a and Greek β, γ.
    const phase = b.page.locator('[data-symbol="formula"]', { hasText: "Li3PO4" }).first();
    expect(await phase.locator("sub").allTextContents()).toEqual(["3", "4"]);
    expect(await b.page.locator('[data-symbol="cell"]', { hasText: "γ" }).count()).toBeGreaterThan(0);

    await expectSymbolsAsWritten(`/client/orders/${order}`);
    // The check page is drawn by another part of the product; the no-transform and italic rules hold there too.
    expect(await expectSymbolsAsWritten(`/checks/${check}`, { flatFormulas: false })).toBeGreaterThan(0);
    await expectSymbolsAsWritten("/client/materials");
    await expectSymbolsAsWritten(`/client/materials/${material}`);
    expect(await expectSymbolsAsWritten(`/client/materials/${material}/trend?parameter=a`)).toBeGreaterThan(0);
    await b.page.getByTestId("trend-chart").and(b.page.locator("[data-ready]")).waitFor();
  });

  it("on the lab's order and calibration record", async () => {
    const order = await orderId("Olivine with Li3PO4 residue in LFP batch HC-2681");
    const instrument = await instrumentId("Reflection diffractometer B (Co)");
    await signIn(b.page, "lab@graniteridge.example");
    await b.page.waitForURL(/\/lab$/);
    expect(await expectSymbolsAsWritten(`/lab/orders/${order}`)).toBeGreaterThan(0);
    expect(await expectSymbolsAsWritten(`/lab/instruments/${instrument}/calibration`)).toBeGreaterThan(0);
  });

  it("on an admin's review of a lab's calibration check", async () => {
    const lab = await labId("meridian-analytical");
    await signIn(b.page, "admin@diffractory.example");
    await b.page.waitForURL(/\/admin/);
    await expectSymbolsAsWritten(`/admin/labs/${lab}`);
  });

  it("on the public directory, a lab's profile and the design page", async () => {
    await expectSymbolsAsWritten("/labs");
    expect(await expectSymbolsAsWritten("/labs/granite-ridge-characterisation")).toBeGreaterThan(0);
    const design = await b.page.goto("/design-system");
    if (design?.ok()) await expectSymbolsAsWritten("/design-system");
  });
});
