"""Independent powder reflection lists for the simulator's reference tests.

Run with /usr/bin/python3 (Debian python3-gemmi and python3-pymatgen).
Input (stdin, JSON): a list of {"name", "spaceGroup", "cell": [a, b, c, alpha, beta, gamma],
  "atoms": [{"element", "x", "y", "z"}, ... every unit-cell site], "wavelength": Å, "twoThetaMax": degrees}.
Output (stdout, JSON): {name: {"gemmi": [...], "pymatgen": [...]}} where each entry is
  {"hkl": [h, k, l], "d": Å, "twoTheta": degrees, "multiplicity": n, "intensity": relative to 100}.

gemmi: reflections from its space-group machinery (space-group absences only), multiplicity from its
point-group operators with Friedel pairs, |F|² summed over all unit-cell sites with its IT92 form factors
(its small-structure structure-factor helper overstates |F| in 0.5.7, so it is not used), no thermal factor,
intensity = |F|² · multiplicity · (1 + cos² 2θ)/(sin² θ cos θ).
pymatgen: XRDCalculator with the wavelength given as a number (its "CuKa" is the weighted mean) and no
Debye–Waller factors; it uses its own form-factor fit and merges lines at equal 2θ.
"""
import cmath
import json
import math
import sys

import gemmi
from pymatgen.analysis.diffraction.xrd import XRDCalculator
from pymatgen.core import Lattice, Structure


def lp(two_theta):
    t = math.radians(two_theta / 2)
    return (1 + math.cos(2 * t) ** 2) / (math.sin(t) ** 2 * math.cos(t))


def gemmi_list(spec):
    cell = gemmi.UnitCell(*spec["cell"])
    sg = gemmi.find_spacegroup_by_name(spec["spaceGroup"])
    ops = sg.operations()
    lam = spec["wavelength"]
    d_min = lam / (2 * math.sin(math.radians(spec["twoThetaMax"] / 2)))
    form = {a["element"]: gemmi.Element(a["element"]).it92 for a in spec["atoms"]}
    out = []
    for hkl in gemmi.make_miller_array(cell, sg, d_min, 0, True):
        hkl = [int(v) for v in hkl]
        d = cell.calculate_d(hkl)
        s2 = 1 / (4 * d * d)
        f = sum(
            form[a["element"]].calculate_sf(s2) * cmath.exp(2j * math.pi * (hkl[0] * a["x"] + hkl[1] * a["y"] + hkl[2] * a["z"]))
            for a in spec["atoms"]
        )
        images = set()
        for op in ops.sym_ops:
            image = tuple(op.apply_to_hkl(hkl))
            images.add(image)
            images.add(tuple(-v for v in image))
        tt = 2 * math.degrees(math.asin(lam / (2 * d)))
        out.append({"hkl": hkl, "d": d, "twoTheta": tt, "multiplicity": len(images), "f2": abs(f) ** 2})
    top = max(r["f2"] * r["multiplicity"] * lp(r["twoTheta"]) for r in out)
    listed = []
    for r in out:
        i = r["f2"] * r["multiplicity"] * lp(r["twoTheta"])
        if i > top * 1e-9:
            listed.append({"hkl": r["hkl"], "d": r["d"], "twoTheta": r["twoTheta"], "multiplicity": r["multiplicity"], "intensity": 100 * i / top})
    return sorted(listed, key=lambda r: -r["d"])


def pymatgen_list(spec):
    a, b, c, al, be, ga = spec["cell"]
    structure = Structure(
        Lattice.from_parameters(a, b, c, al, be, ga),
        [s["element"] for s in spec["atoms"]],
        [[s["x"], s["y"], s["z"]] for s in spec["atoms"]],
    )
    pattern = XRDCalculator(wavelength=spec["wavelength"]).get_pattern(structure, scaled=True, two_theta_range=(0, spec["twoThetaMax"]))
    out = []
    for tt, y, hkls, d in zip(pattern.x, pattern.y, pattern.hkls, pattern.d_hkls):
        first = hkls[0]["hkl"]
        # Hexagonal families come as (h, k, i, l).
        hkl = [first[0], first[1], first[-1]]
        out.append({"hkl": [int(v) for v in hkl], "d": float(d), "twoTheta": float(tt), "multiplicity": int(sum(h["multiplicity"] for h in hkls)), "intensity": float(y)})
    return out


if __name__ == "__main__":
    specs = json.load(sys.stdin)
    print(json.dumps({s["name"]: {"gemmi": gemmi_list(s), "pymatgen": pymatgen_list(s)} for s in specs}))
