// A quote judged by the instrument it names, not by the lab's best one. Wavelengths: docs/reference-values.md#x-ray-wavelengths;
// K edges: docs/reference-values.md#k-absorption-edges; d coverage by Bragg's law (hand calculation in the comments).
import { describe, expect, it } from "vitest";
import { judgeQuote, matchLab, type MatchInstrument, type MatchLab } from "~/domain/matching";
import { cuAndCo, IRON_RICH } from "./match-fixtures";

const { cu, co } = cuAndCo({ cu: "Reflection A (Cu)", co: "Reflection B (Co)" });
const lab: MatchLab = {
  id: "lab",
  name: "Test Lab",
  slug: "test-lab",
  instruments: [cu, co],
  acceptance: { pictograms: ["GHS07"], specialCategories: [] },
  priceList: null,
};
/** An iron-rich sample (LiFePO4) over 10–90° 2θ, read for Cu Kα1 as the source is "any". */
const ironRich = IRON_RICH;
const texts = (reasons: { ok: boolean; text: string }[]) => reasons.map((r) => `${r.ok ? "ok" : "no"}: ${r.text}`);

describe("fluorescence of the quoted instrument", () => {
  it("warns on the Cu quote and names the lab's Co instrument; the Co quote carries no warning", () => {
    // Fe K edge 7.112 keV lies 0.94 keV below Cu Kα1 (8.048 keV) and above Co Kα1 (6.930 keV): docs/reference-values.md#k-absorption-edges.
    const onCu = judgeQuote(ironRich, lab, cu);
    expect(onCu.fits).toBe(true);
    expect(onCu.warnings[0]).toMatch(/^Fluorescence: Fe has its K edge just below the Cu Kα energy \(8\.048 keV\)/);
    expect(onCu.warnings[1]).toBe("Better: Test Lab's Reflection B (Co) (Co Kα) avoids the fluorescence of Fe.");
    const onCo = judgeQuote(ironRich, lab, co);
    expect(onCo.fits).toBe(true);
    expect(onCo.warnings).toEqual([]);
    // The lab as a whole still carries the Cu instrument's warning (the directory and inbox view).
    expect(matchLab(ironRich, lab).warnings.some((w) => w.startsWith("Reflection A (Cu): Fluorescence"))).toBe(true);
  });

  it("a detector with energy discrimination takes the warning away from that quote only", () => {
    const cuDiscriminating = { ...cu, energyDiscrimination: true };
    expect(judgeQuote(ironRich, { ...lab, instruments: [cuDiscriminating, co] }, cuDiscriminating).warnings).toEqual([]);
  });
});

describe("coverage and stages of the quoted instrument", () => {
  it("says the quoted instrument does not cover the asked range although the lab's other instrument does", () => {
    // Asked: 10–90° 2θ under Cu Kα1 → d from 1.540593 / (2 sin 45°) = 1.0894 Å to 1.540593 / (2 sin 5°) = 8.838 Å.
    // Co Kα1 (1.788996 Å) over 20–100° reaches d from 1.788996 / (2 sin 50°) = 1.168 Å up to 1.788996 / (2 sin 10°) = 5.151 Å only.
    const narrowCo: MatchInstrument = { ...co, twoThetaMin: 20, twoThetaMax: 100 };
    const both = { ...lab, instruments: [cu, narrowCo] };
    const onCo = judgeQuote(ironRich, both, narrowCo);
    expect(onCo.fits).toBe(false);
    expect(texts(onCo.reasons)).toContain("no: Does not cover d 1.089–8.84 Å (instrument reaches 1.168–5.15 Å)");
    const onCu = judgeQuote(ironRich, both, cu);
    expect(texts(onCu.reasons)).toContain("ok: Covers d 1.089–8.84 Å (instrument reaches 0.797–17.66 Å)");
    // The lab-level match fits on its Cu instrument: only the quote's own judgement shows the gap.
    expect(matchLab(ironRich, both).fits).toBe(true);
  });

  it("judges temperatures against the quoted instrument's stages and source against the preferred one", () => {
    const hot = { ...ironRich, temperaturePointsK: [298, 873] };
    expect(judgeQuote(hot, lab, cu).fits).toBe(true);
    const onCo = judgeQuote(hot, lab, co);
    expect(onCo.fits).toBe(false);
    expect(texts(onCo.reasons)).toContain("no: No stage reaches 298, 873 K in air (no sample stages)");
    const wantsCo = judgeQuote({ ...ironRich, preferredSource: "Co" }, lab, cu);
    expect(texts(wantsCo.reasons)).toContain("no: Source is Cu Kα, not the preferred Co");
  });

  it("adds the lab's hazard acceptance to the quote's reasons", () => {
    const toxic = { ...ironRich, samples: [{ ...ironRich.samples[0], ghsPictograms: ["GHS06"] }] };
    const judged = judgeQuote(toxic, lab, co);
    expect(judged.fits).toBe(false);
    expect(judged.reasons.at(-1)).toEqual({ ok: false, text: "Does not accept GHS06" });
  });

  it("judges an instrument since taken out of service, and says so when a quote names none", () => {
    const retired: MatchInstrument = { ...cu, id: "retired", name: "Old Cu tube" };
    const judged = judgeQuote(ironRich, lab, retired);
    expect(judged.warnings[0]).toMatch(/^Fluorescence: Fe/);
    expect(judged.warnings[1]).toMatch(/^Better: Test Lab's Reflection B \(Co\)/);
    const none = judgeQuote(ironRich, lab, null);
    expect(none.fits).toBe(false);
    expect(none.reasons[0].text).toMatch(/names no instrument/);
  });
});
