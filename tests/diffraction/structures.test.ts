// The shipped structures: unit-cell sites against gemmi's space-group expansion, cells against their systems.
import { describe, expect, it } from "vitest";
import { checkCellForSystem, checkCentering } from "~/diffraction/cell";
import { hasFormFactor } from "~/diffraction/form-factors";
import { STRUCTURES } from "~/diffraction/structures";
import { runReference } from "./python-reference";

const all = Object.values(STRUCTURES);

describe("structures", () => {
  it("every `atoms` list is the gemmi expansion of its `sites` (lib: gemmi space-group operators)", () => {
    const expanded = runReference<{ element: string; x: number; y: number; z: number }[][]>(
      "expand_sites.py",
      all.map((s) => ({ spaceGroup: s.spaceGroup, cell: [s.cell.a, s.cell.b, s.cell.c, s.cell.alpha, s.cell.beta, s.cell.gamma], sites: s.sites })),
    );
    all.forEach((s, i) => {
      const theirs = expanded[i];
      expect(s.atoms.length, s.name).toBe(theirs.length);
      // Same site up to a lattice translation, coordinates to 1e-5.
      const near = (u: number, v: number) => Math.abs(((((u - v + 0.5) % 1) + 1) % 1) - 0.5) < 1e-5;
      for (const atom of s.atoms) {
        const match = theirs.some((t) => t.element === atom.element && near(t.x, atom.x) && near(t.y, atom.y) && near(t.z, atom.z));
        expect(match, `${s.name} ${atom.element} ${atom.x} ${atom.y} ${atom.z}`).toBe(true);
      }
    });
  });

  it("cells obey their crystal system and centering, and every element has a form factor", () => {
    for (const s of all) {
      expect(checkCellForSystem(s.system, s.cell), s.name).toBeNull();
      expect(checkCentering(s.system, s.centering), s.name).toBeNull();
      for (const atom of s.atoms) expect(hasFormFactor(atom.element)).toBe(true);
    }
  });

  it("standards carry their certified cells (docs/reference-values.md#certified-lattice-parameters)", () => {
    expect(STRUCTURES.silicon.cell.a).toBe(5.4311946); // NIST SRM 640c certificate
    expect(STRUCTURES.lanthanumHexaboride.cell.a).toBe(4.156826); // NIST SRM 660c certificate
    expect(STRUCTURES.ceria.cell.a).toBe(5.411651); // SRM 674b (docs/reference-values.md#certified-lattice-parameters)
    expect(STRUCTURES.corundum.cell).toMatchObject({ a: 4.759091, c: 12.991779 }); // SRM 676a (docs/reference-values.md#certified-lattice-parameters)
  });
});
