// Several phases in one scan, candidate forms and the acceptance window, on simulated scans.
// Sources of the true cells (the simulations are made with them, the check must find them):
//   corundum a = 4.759091, c = 12.991779 Å — NIST SRM 676a; zincite a = 3.249897, c = 5.206530 Å and rutile
//   a = 4.593927, c = 2.958875 Å — NIST SRM 674b (docs/reference-values.md#certified-lattice-parameters);
//   LiFePO4 (olivine) a = 10.332, b = 6.010, c = 4.692 Å — from memory (common literature values);
//   anatase (TiO2, I 41/a m d) a = 3.7852, c = 9.5139 Å — from memory (Horn, Schwerdtfeger & Meagher 1972,
//   Z. Kristallogr. 136, 273); ceria a = 5.411651 Å — NIST SRM 674b.
// Tolerances (own choices, common practice for lab scans): a main phase to 5×10⁻⁴ Å, a minor phase to 2×10⁻³ Å.
import { describe, expect, it } from "vitest";
import type { Cell } from "~/diffraction/cell";
import { checkOptionsProblem, type LatticeCheckOptions, runLatticeCheck } from "~/diffraction/check";
import type { DeclaredPhase } from "~/diffraction/phases";
import { simulatePattern } from "~/diffraction/simulate";
import { type CrystalStructure, STRUCTURES } from "~/diffraction/structures";
import type { Radiation } from "~/diffraction/wavelengths";
import { judgeWindow, windowProblem } from "~/diffraction/window";

const CU: Radiation = { kind: "anode", anode: "Cu", monochromation: "k_alpha_doublet" };
const S = STRUCTURES;
const ANATASE: DeclaredPhase = {
  name: "anatase",
  system: "tetragonal",
  centering: "I",
  cell: { a: 3.7852, b: 3.7852, c: 9.5139, alpha: 90, beta: 90, gamma: 90 },
};

type Part = { structure?: CrystalStructure; bare?: DeclaredPhase; scale: number };

/** A mixture: the phases' simulated counts added on one background, then Poisson noise (seeded). */
function mixture(parts: Part[], seed = 7) {
  const common = { radiation: CU, twoThetaMin: 10, twoThetaMax: 130, step: 0.02, zeroShift: 0.03 };
  const sims = parts.map((p) =>
    simulatePattern({
      ...common,
      scale: p.scale,
      ...(p.structure ? { structure: p.structure } : { system: p.bare!.system, centering: p.bare!.centering, cell: p.bare!.cell }),
    }),
  );
  const n = sims[0].twoTheta.length;
  const y = new Float64Array(n);
  let state = seed;
  const uniform = () => {
    state = (state * 1103515245 + 12345) % 2147483648;
    return (state + 0.5) / 2147483648;
  };
  for (let i = 0; i < n; i++) {
    let mean = 150 - 0.4 * sims[0].twoTheta[i];
    for (const s of sims) mean += s.intensity[i];
    const gauss = Math.sqrt(-2 * Math.log(uniform())) * Math.cos(2 * Math.PI * uniform());
    y[i] = Math.max(0, Math.round(mean + gauss * Math.sqrt(mean)));
  }
  return { twoTheta: sims[0].twoTheta, intensity: y, format: "xy" as const, warnings: [] as string[] };
}

const phaseOf = (s: CrystalStructure, name: string): DeclaredPhase => ({ name, system: s.system, centering: s.centering, cell: s.cell });
const declare = (main: DeclaredPhase, extra: Partial<LatticeCheckOptions> = {}): LatticeCheckOptions => ({
  radiation: CU,
  system: main.system,
  centering: main.centering,
  cell: main.cell,
  mainName: main.name,
  ...extra,
});

const threePhase = mixture([
  { structure: S.corundum, scale: 10000 },
  { structure: S.zincite, scale: 6000 },
  { structure: S.rutile, scale: 4000 },
]);

describe("several declared phases", () => {
  it("a corundum + zincite + rutile mixture: every declared phase found with its cell, consistent", () => {
    const r = runLatticeCheck(threePhase, declare(phaseOf(S.corundum, "corundum"), { phases: [phaseOf(S.zincite, "zincite"), phaseOf(S.rutile, "rutile")] }));
    expect(r.verdict).toBe("consistent");
    expect(r.phases.map((p) => [p.name, p.role, p.present])).toEqual([
      ["corundum", "main", true],
      ["zincite", "expected", true],
      ["rutile", "expected", true],
    ]);
    const [cor, zn, ru] = r.phases;
    expect(cor.cell!.a).toBeCloseTo(S.corundum.cell.a, 3);
    expect(Math.abs(cor.cell!.c - S.corundum.cell.c)).toBeLessThan(1e-3);
    expect(Math.abs(zn.cell!.a - S.zincite.cell.a)).toBeLessThan(2e-3);
    expect(Math.abs(zn.cell!.c - S.zincite.cell.c)).toBeLessThan(2e-3);
    expect(Math.abs(ru.cell!.a - S.rutile.cell.a)).toBeLessThan(2e-3);
    expect(Math.abs(ru.cell!.c - S.rutile.cell.c)).toBeLessThan(2e-3);
    for (const p of r.phases) {
      expect(p.esd).not.toBeNull();
      expect(p.reflections.length).toBeGreaterThan(3);
      expect(p.wholePatternCell).not.toBeNull();
    }
    // The whole-pattern fit of the three phases: counting noise only, so Rwp close to Rexp.
    expect(r.wholePattern!.GoF).toBeLessThan(1.5);
    expect(Math.abs(r.phases[2].wholePatternCell!.a - S.rutile.cell.a)).toBeLessThan(1e-3);
    // Fixed by symmetry, not refined: the angles of these systems, b of the hexagonal and tetragonal cells.
    expect(zn.fixed).toEqual(["b", "alpha", "beta", "gamma"]);
    // Every strong sample peak belongs to one of the three phases.
    expect(r.unindexed.filter((p) => p.relativeIntensity > 5)).toEqual([]);
    const byPhase = [0, 1, 2].map((j) => r.peaks.filter((p) => p.phase === j).length);
    expect(byPhase.every((n) => n >= 10)).toBe(true);
  });

  it("an undeclared phase's lines are left unexplained and named so; the verdict asks for review", () => {
    const r = runLatticeCheck(threePhase, declare(phaseOf(S.corundum, "corundum"), { phases: [phaseOf(S.zincite, "zincite")] }));
    expect(r.verdict).toBe("review");
    expect(r.phases[1].present).toBe(true);
    // Rutile's strongest line (110) at 27.45° 2θ with Cu Kα1 (from its SRM 674b cell by Bragg's law).
    expect(r.unindexed.some((p) => Math.abs(p.twoTheta - 27.45) < 0.1 && p.relativeIntensity > 20)).toBe(true);
    expect(r.reasons.some((s) => /match no declared phase/.test(s))).toBe(true);
  });

  it("declared phases that are not in the scan come out absent, with the reason", () => {
    const r = runLatticeCheck(
      threePhase,
      declare(phaseOf(S.corundum, "corundum"), {
        phases: [phaseOf(S.zincite, "zincite"), phaseOf(S.rutile, "rutile"), phaseOf(S.ceria, "ceria"), phaseOf(S.lithiumIronPhosphate, "LiFePO4")],
      }),
    );
    expect(r.phases.map((p) => p.present)).toEqual([true, true, true, false, false]);
    expect(r.phases[3].reasons.length).toBeGreaterThan(0);
    expect(r.phases[3].cell).toBeNull();
    // An absent phase's ticks sit where its declared cell puts them (ceria 111 at 28.55° 2θ, Cu Kα1, + the zero shift).
    expect(r.phases[3].reflections.some((t) => Math.abs(t.twoTheta - 28.55) < 0.1)).toBe(true);
    expect(r.verdict).toBe("consistent");
  });

  it("a cathode with a minor second phase (5 % of the counts): found, its cell refined", () => {
    const scan = mixture([
      { structure: S.lithiumIronPhosphate, scale: 10000 },
      { structure: S.zincite, scale: 600 },
    ]);
    const r = runLatticeCheck(scan, declare(phaseOf(S.lithiumIronPhosphate, "LiFePO4"), { phases: [phaseOf(S.zincite, "zincite")] }));
    expect(r.verdict).toBe("consistent");
    expect(r.phases[1].present).toBe(true);
    expect(Math.abs(r.phases[1].cell!.a - S.zincite.cell.a)).toBeLessThan(2e-3);
    expect(Math.abs(r.cell!.a - S.lithiumIronPhosphate.cell.a)).toBeLessThan(1e-3);
  });

  it("the main phase absent while a declared impurity explains the scan is inconsistent", () => {
    const scan = mixture([{ structure: S.zincite, scale: 10000 }]);
    const r = runLatticeCheck(scan, declare(phaseOf(S.lithiumIronPhosphate, "LiFePO4"), { phases: [phaseOf(S.zincite, "zincite")] }));
    expect(r.verdict).toBe("inconsistent");
  });
});

describe("candidate forms", () => {
  const rutileScan = mixture([{ structure: S.rutile, scale: 10000 }]);
  const anataseScan = mixture([{ bare: ANATASE, scale: 10000 }], 11);

  it("of two TiO2 polymorphs, the one the scan is made of is chosen, with figures for each", () => {
    const r = runLatticeCheck(rutileScan, declare(ANATASE, { candidates: [phaseOf(S.rutile, "rutile")] }));
    expect(r.candidates!.map((c) => [c.name, c.chosen])).toEqual([
      ["anatase", false],
      ["rutile", true],
    ]);
    expect(r.candidates![1].verdict).toBe("consistent");
    expect(r.candidates![0].verdict).toBe("inconsistent");
    expect(r.verdict).toBe("consistent");
    expect(r.phases[0].name).toBe("rutile");
    expect(Math.abs(r.cell!.a - S.rutile.cell.a)).toBeLessThan(5e-4);
    expect(r.reasons.some((s) => /rutile explains the scan best/.test(s))).toBe(true);

    const other = runLatticeCheck(anataseScan, declare(phaseOf(S.rutile, "rutile"), { candidates: [ANATASE] }));
    expect(other.candidates!.find((c) => c.chosen)!.name).toBe("anatase");
    expect(Math.abs(other.cell!.c - ANATASE.cell.c)).toBeLessThan(2e-3);
  });

  it("the wrong candidate declared alone is inconsistent", () => {
    expect(runLatticeCheck(rutileScan, declare(ANATASE)).verdict).toBe("inconsistent");
    expect(runLatticeCheck(anataseScan, declare(phaseOf(S.rutile, "rutile"))).verdict).toBe("inconsistent");
  });

  it("the whole-pattern fit shows the misfit: the wrong form's calculated curve misses, the right one's fits", () => {
    const wrong = runLatticeCheck(rutileScan, declare(ANATASE));
    const right = runLatticeCheck(rutileScan, declare(phaseOf(S.rutile, "rutile")));
    // Counting noise only: Rwp near Rexp for the right cell (GoF about 1); the wrong lattice leaves most counts unexplained.
    expect(right.wholePattern!.GoF).toBeLessThan(2);
    expect(wrong.wholePattern!.Rwp).toBeGreaterThan(3 * right.wholePattern!.Rwp);
    // The plot's calculated curve is the fit, on every point of the scan; the free peaks stay a separate layer.
    expect(wrong.calculatedProfile!.length).toBe(rutileScan.twoTheta.length);
    expect(right.fittedProfile.length).toBe(rutileScan.twoTheta.length);
    // Each candidate carries its Rwp; the chosen one fits best.
    const both = runLatticeCheck(rutileScan, declare(ANATASE, { candidates: [phaseOf(S.rutile, "rutile")] }));
    const [anatase, rutile] = both.candidates!;
    expect(rutile.Rwp!).toBeLessThan(anatase.Rwp!);
  });
});

describe("verdict and window are two answers", () => {
  const ceria = mixture([{ structure: S.ceria, scale: 10000 }], 3);
  const declared = (a: number): DeclaredPhase => ({ name: "ceria", system: "cubic", centering: "F", cell: { a, b: a, c: a, alpha: 90, beta: 90, gamma: 90 } });

  it("a cell 0.6 % from its declaration (a reference at another composition) is still consistent", () => {
    const r = runLatticeCheck(ceria, declare(declared(5.411651 * 1.006)));
    expect(r.verdict).toBe("consistent");
    expect(r.reasons.some((s) => /acceptance window judges/.test(s))).toBe(true);
    expect(r.withinWindow).toBeNull();
  });

  it("a tight window the scan fails: consistent, but outside the window, with the margin", () => {
    // Declared 5.4166 ± 0.002 Å; the scan is SRM 674b ceria, 5.41165 Å: 0.003 Å below the lower limit.
    const r = runLatticeCheck(ceria, declare(declared(5.4166), { window: { a: { plusMinus: 0.002, unit: "absolute" } } }));
    expect(r.verdict).toBe("consistent");
    expect(r.withinWindow).toBe(false);
    const [a] = r.window.parameters;
    expect(a.lower).toBeCloseTo(5.4146, 9);
    expect(a.margin!).toBeCloseTo(5.411651 - 5.4146, 3);
    expect(a.inside).toBe(false);
    const inside = runLatticeCheck(ceria, declare(declared(5.4125), { window: { a: { plusMinus: 0.03, unit: "percent" } } }));
    expect(inside.withinWindow).toBe(true);
    expect(inside.window.parameters[0].margin!).toBeGreaterThan(0);
  });

  it("inside, outside and on the limit, in Å and in % (a value on a limit is inside)", () => {
    const cell: Cell = { a: 5.411, b: 5.411, c: 5.411, alpha: 90, beta: 90, gamma: 90 };
    const at = (a: number) => ({ ...cell, a });
    const abs = { a: { plusMinus: 0.002, unit: "absolute" as const } };
    expect(judgeWindow(abs, cell, at(5.412), null).withinWindow).toBe(true);
    expect(judgeWindow(abs, cell, at(5.413), null).withinWindow).toBe(true);
    expect(judgeWindow(abs, cell, at(5.409), null).withinWindow).toBe(true);
    expect(judgeWindow(abs, cell, at(5.4131), null).withinWindow).toBe(false);
    expect(judgeWindow(abs, cell, at(5.4089), null).parameters[0].margin).toBeCloseTo(-0.0001, 9);
    // 0.1 % of 5.411 Å is 0.005411 Å.
    const pct = { a: { plusMinus: 0.1, unit: "percent" as const } };
    expect(judgeWindow(pct, cell, at(5.411 + 0.005411), null).withinWindow).toBe(true);
    expect(judgeWindow(pct, cell, at(5.411 - 0.005411), null).withinWindow).toBe(true);
    expect(judgeWindow(pct, cell, at(5.4165), null).withinWindow).toBe(false);
    // Angles: ± degrees.
    const mono: Cell = { a: 5.15, b: 5.2, c: 5.3, alpha: 90, beta: 99.2, gamma: 90 };
    const beta = { beta: { plusMinus: 0.05, unit: "absolute" as const } };
    expect(judgeWindow(beta, mono, { ...mono, beta: 99.25 }, null).withinWindow).toBe(true);
    expect(judgeWindow(beta, mono, { ...mono, beta: 99.26 }, null).withinWindow).toBe(false);
    // None set, or no refined cell.
    expect(judgeWindow(undefined, cell, cell, null).withinWindow).toBeNull();
    expect(judgeWindow(abs, cell, null, null).withinWindow).toBeNull();
  });

  it("a window on a parameter the symmetry fixes, or a bad value, is one sentence", () => {
    expect(windowProblem({ c: { plusMinus: 0.01, unit: "absolute" } }, "cubic")).toMatch(/fixed by its symmetry/);
    expect(windowProblem({ a: { plusMinus: -1, unit: "absolute" } }, "cubic")).toMatch(/positive number/);
    expect(checkOptionsProblem(declare(declared(5.41), { window: { beta: { plusMinus: 1, unit: "absolute" } } }))).toMatch(/fixed by its symmetry/);
    expect(
      checkOptionsProblem(
        declare(declared(5.41), { phases: [{ name: "odd", system: "cubic", centering: "F", cell: { a: 4, b: 5, c: 4, alpha: 90, beta: 90, gamma: 90 } }] }),
      ),
    ).toMatch(/expected phase "odd"/);
  });
});
