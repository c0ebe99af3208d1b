// Chemical formulas read into element symbols; the expected lists are worked out by hand from each formula.
// Sources: every expected element list is a hand check of the formula as written (hand calculation).
import { describe, expect, it } from "vitest";
import { parseFormula, formulaParts, formulaRuns, formulaUnicode } from "~/domain/formula";

describe("parseFormula", () => {
  const good: [string, string[]][] = [
    ["LiFePO4", ["Li", "Fe", "P", "O"]],
    ["Ca10(PO4)6(OH)2", ["Ca", "P", "O", "H"]],
    ["CuSO4·5H2O", ["Cu", "S", "O", "H"]],
    ["CuSO4*5H2O", ["Cu", "S", "O", "H"]],
    ["Li0.5CoO2", ["Li", "Co", "O"]],
    ["LiNi0.8Mn0.1Co0.1O2", ["Li", "Ni", "Mn", "Co", "O"]],
    ["Si", ["Si"]],
    ["CO", ["C", "O"]],
    ["Co", ["Co"]],
    ["K4[Fe(CN)6]", ["K", "Fe", "C", "N"]],
    ["  Al2 O3 ", ["Al", "O"]],
    ["2H2O", ["H", "O"]],
  ];
  for (const [formula, elements] of good) {
    it(`reads ${formula}`, () => expect(parseFormula(formula)).toEqual({ elements }));
  }

  const bad: [string, RegExp][] = [
    ["", /Enter the chemical formula/],
    ["LiXxO2", /“Xx” .* is not an element symbol/],
    ["Ca10(PO4", /do not balance/],
    ["Ca10PO4)6", /do not balance/],
    ["K4[Fe(CN)6)", /do not balance/],
    ["lifepo4", /capital letter/],
    ["LiFe$PO4", /not allowed/],
    ["Li1.2.3O", /not a valid count/],
    ["Fe0O", /not a valid count/],
    ["()", /no element symbols/],
  ];
  for (const [formula, message] of bad) {
    it(`refuses “${formula}”`, () => {
      const result = parseFormula(formula);
      expect("error" in result && result.error).toMatch(message);
    });
  }
});

// How formulas are written for display: IUPAC, Nomenclature of Inorganic Chemistry (Recommendations 2005, the "Red
// Book"), IR-3.4 and IR-4: counts of atoms as right subscripts, an ion's charge as a right superscript with the number
// before the sign (Fe³⁺, SO₄²⁻), and the parts of an adduct or hydrate joined by a centred dot with their multiplier
// on the line (CuSO₄·5H₂O).
describe("formulas for display (IUPAC Red Book IR-3.4, IR-4)", () => {
  const show = (t: string) =>
    formulaParts(t)
      ?.map((p) => (p.kind === "sub" ? `_{${p.text}}` : p.kind === "sup" ? `^{${p.text}}` : p.text))
      .join("");

  it("writes counts as subscripts, including decimal occupancies and counts after brackets", () => {
    expect(show("LiFePO4")).toBe("LiFePO_{4}");
    expect(show("LiNi0.8Mn0.1Co0.1O2")).toBe("LiNi_{0.8}Mn_{0.1}Co_{0.1}O_{2}");
    expect(show("Ca10(PO4)6(OH)2")).toBe("Ca_{10}(PO_{4})_{6}(OH)_{2}");
  });

  it("keeps a hydrate's multiplier on the line after the centred dot", () => {
    expect(show("CuSO4·5H2O")).toBe("CuSO_{4}·5H_{2}O");
    expect(show("Na2SO4*10H2O")).toBe("Na_{2}SO_{4}·10H_{2}O");
  });

  it("writes a charge as a superscript, number before sign, with a true minus", () => {
    expect(show("Fe3+")).toBe("Fe^{3+}");
    expect(show("SO4^2-")).toBe("SO_{4}^{2−}");
    expect(show("Cu+")).toBe("Cu^{+}");
  });

  it("leaves names that are not formulas as written", () => {
    for (const t of ["NMC811", "Form I", "HC-2645", "2θ", "C20-2523 lot", "powder, grade C20: lot C20-2523"]) expect(formulaUnicode(t)).toBe(t);
  });

  it("finds formulas inside running text and keeps the rest", () => {
    expect(formulaUnicode("LiFePO4 (olivine)")).toBe("LiFePO₄ (olivine)");
    expect(formulaUnicode("Li3PO4 residue beside (LiFePO4),")).toBe("Li₃PO₄ residue beside (LiFePO₄),");
    expect(
      formulaRuns("Fe2O3 and Fe3O4")
        .map((r) => r.kind)
        .join(" "),
    ).toBe("text sub text sub text sub text sub");
  });
});
