"""Expands asymmetric units to the full list of unit-cell sites with gemmi's space-group operators.

Run once with /usr/bin/python3 (Debian python3-gemmi); the printed TypeScript atom lists are pasted
into app/diffraction/structures.ts, and tests/diffraction/structures.test.ts repeats the expansion
to check the shipped lists.

Input (stdin, JSON): {"spaceGroup": "R -3 c:H", "cell": [a, b, c, alpha, beta, gamma],
                      "sites": [{"element": "Al", "x": 0, "y": 0, "z": 0.35216}, ...]}
Output (stdout, JSON): the full list [{"element", "x", "y", "z"}, ...] with coordinates in [0, 1).
"""
import json
import sys

import gemmi


def expand(spec):
    st = gemmi.SmallStructure()
    st.spacegroup_hm = spec["spaceGroup"]
    st.cell = gemmi.UnitCell(*spec["cell"])
    for i, s in enumerate(spec["sites"]):
        site = gemmi.SmallStructure.Site()
        site.label = f"{s['element']}{i + 1}"
        site.type_symbol = s["element"]
        site.element = gemmi.Element(s["element"])
        site.fract = gemmi.Fractional(s["x"], s["y"], s["z"])
        site.occ = 1.0
        st.add_site(site)
    st.setup_cell_images()
    out = []
    for site in st.get_all_unit_cell_sites():
        f = site.fract.wrap_to_unit()
        out.append({"element": site.element.name, "x": round(f.x % 1.0, 6), "y": round(f.y % 1.0, 6), "z": round(f.z % 1.0, 6)})
    return out


if __name__ == "__main__":
    specs = json.load(sys.stdin)
    print(json.dumps([expand(s) for s in specs]))
