// Chemical formulas read into element symbols; the expected lists are worked out by hand from each formula.
// Sources: every expected element list is a hand check of the formula as written (hand calculation).
import { describe, expect, it } from "vitest";
import { parseFormula } from "~/domain/formula";

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
