// The design page (/design-system) at a desk (1366 px) and a phone (390 px): every badge tone shows its word and its
// shape, no symbol is transformed, the page never scrolls sideways, it passes the accessibility rules, and its picture
// is kept in docs/images/ for docs/design-system.md.
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { root } from "../../services/paths";
import { checkAccessibility } from "./a11y";
import { openBrowser, visit, type Browser } from "./harness";

const SIZES = [
  { name: "desk", width: 1366, height: 900 },
  { name: "phone", width: 390, height: 844 },
] as const;
const TONES = ["neutral", "brand", "ok", "caution", "danger"];

for (const size of SIZES) {
  describe(`the design page at ${size.width} px`, () => {
    let b: Browser;
    beforeAll(async () => {
      b = await openBrowser({ viewport: { width: size.width, height: size.height } });
    });
    afterAll(async () => {
      await b?.close();
    });

    it("shows each badge tone with a word and a shape, symbols untransformed, no sideways scroll", async () => {
      await visit(b.page, "/design-system");
      await b.page.getByRole("heading", { name: "Design system", level: 1 }).waitFor();
      // Fonts decide the widths: wait for them before measuring and photographing.
      await b.page.evaluate(() => document.fonts.ready);

      const badges = await b.page.locator("#badges ~ div [data-badge]").evaluateAll((els) =>
        els.map((el) => {
          const shape = el.querySelector("svg[data-shape]");
          const box = shape?.getBoundingClientRect();
          const style = getComputedStyle(el);
          return {
            tone: el.getAttribute("data-badge"),
            word: (el.textContent ?? "").trim(),
            shape: shape?.getAttribute("data-shape") ?? null,
            shapeDrawn: !!box && box.width >= 10 && box.height >= 10 && shape?.getAttribute("aria-hidden") === "true",
            visible: el.getBoundingClientRect().width > 0,
            transform: style.textTransform,
            // A squared tag, not a pill: the corner radius stays small against the tag's height.
            radius: Number.parseFloat(style.borderTopLeftRadius),
            height: el.getBoundingClientRect().height,
          };
        }),
      );
      expect(badges.map((x) => x.tone)).toEqual(TONES);
      for (const badge of badges) {
        expect(badge.word).toMatch(/^[A-Z][a-z]+$/);
        expect(badge.shape).toBe(badge.tone);
        expect(badge.shapeDrawn).toBe(true);
        expect(badge.visible).toBe(true);
        expect(badge.transform).toBe("none");
        expect(badge.radius).toBeLessThan(badge.height / 4);
      }

      // Cell symbols, hkl, 2θ and formulas keep their letters: no text-transform on them or any ancestor.
      const symbols = await b.page.locator("[data-symbol]").evaluateAll((els) =>
        els.map((el) => {
          let transformed = false;
          for (let n: Element | null = el; n; n = n.parentElement) if (getComputedStyle(n).textTransform !== "none") transformed = true;
          return { text: el.textContent ?? "", kind: el.getAttribute("data-symbol"), transformed };
        }),
      );
      expect(symbols.filter((s) => s.transformed)).toEqual([]);
      const texts = symbols.map((s) => s.text);
      for (const expected of ["α", "β", "γ", "hkl", "111", "2θ"]) expect(texts).toContain(expected);
      expect(texts).toContain("LiNi0.8Mn0.1Co0.1O2");
      expect(texts).toContain("CuSO4·5H2O");
      expect(await b.page.locator("[data-symbol=formula] sub").count()).toBeGreaterThan(8);

      expect(await b.page.evaluate(() => document.scrollingElement!.scrollWidth)).toBeLessThanOrEqual(size.width);
      await checkAccessibility(b.page, `design-system-${size.name}`);
      expect(b.consoleErrors).toEqual([]);

      // Three screens from the top: enough to show the system, small enough to keep in the repository.
      await b.page.screenshot({
        path: path.join(root, "docs", "images", `design-system-${size.name}.png`),
        clip: { x: 0, y: 0, width: size.width, height: Math.min(size.height * 3, await b.page.evaluate(() => document.body.scrollHeight)) },
        fullPage: true,
      });
    });
  });
}
