"""Prints app/diffraction/form-factors table entries from gemmi's IT92 Cromer–Mann coefficients.

Run once with /usr/bin/python3 (Debian python3-gemmi); the output is pasted into the TypeScript table
and tests/diffraction/form-factors.test.ts checks the shipped table against gemmi again.
"""
import json
import sys

import gemmi

ELEMENTS = (
    "H He Li Be B C N O F Ne Na Mg Al Si P S Cl Ar K Ca Sc Ti V Cr Mn Fe Co Ni Cu Zn Ga Ge As Se Br Kr "
    "Rb Sr Y Zr Nb Mo Ru Rh Pd Ag Cd In Sn Sb Te I Xe Cs Ba La Ce Pr Nd Sm Eu Gd Tb Dy Ho Er Yb Lu "
    "Hf Ta W Re Os Ir Pt Au Hg Tl Pb Bi U"
).split()


def coefficients(symbol):
    c = gemmi.Element(symbol).it92
    return {"a": list(c.a), "b": list(c.b), "c": c.c}


if __name__ == "__main__":
    if len(sys.argv) > 1 and sys.argv[1] == "--json":
        print(json.dumps({e: coefficients(e) for e in ELEMENTS}))
    else:
        for e in ELEMENTS:
            k = coefficients(e)
            fmt = lambda xs: ", ".join(repr(x) for x in xs)
            print(f"  {e}: {{ a: [{fmt(k['a'])}], b: [{fmt(k['b'])}], c: {k['c']!r} }},")
