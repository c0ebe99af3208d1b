"""Lattice reflection lists (centering absences, Laue-merged, with powder multiplicity) from gemmi.

Run with /usr/bin/python3 (Debian python3-gemmi). A symmorphic centrosymmetric space group stands for
each lattice (e.g. "C 1 2/m 1" for monoclinic C): its only absences are the centering's.
Input (stdin, JSON): a list of {"spaceGroup", "cell": [a, b, c, alpha, beta, gamma], "dMin": Å}.
Output (stdout, JSON): per input, a list of {"hkl": [h, k, l], "d": Å, "multiplicity": n}.
"""
import json
import sys

import gemmi


def reflections(spec):
    cell = gemmi.UnitCell(*spec["cell"])
    sg = gemmi.find_spacegroup_by_name(spec["spaceGroup"])
    ops = sg.operations()
    out = []
    for hkl in gemmi.make_miller_array(cell, sg, spec["dMin"], 0, True):
        hkl = [int(v) for v in hkl]
        images = set()
        for op in ops.sym_ops:
            image = tuple(op.apply_to_hkl(hkl))
            images.add(image)
            images.add(tuple(-v for v in image))
        out.append({"hkl": hkl, "d": cell.calculate_d(hkl), "multiplicity": len(images)})
    return out


if __name__ == "__main__":
    print(json.dumps([reflections(s) for s in json.load(sys.stdin)]))
