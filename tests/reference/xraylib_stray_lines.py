"""Tungsten L line energies and Ni-filter transmissions from xraylib, as JSON (lines that are not the sample's).

Run with /usr/bin/python3 (Debian python3-xraylib 4.0.0).
Input (stdin, JSON): {"filter": {"element": "Ni", "density": 8.908, "thicknessUm": 20}, "energiesKeV": [...]}
Output (stdout, JSON): {"tungsten": {"L3M5": keV, "L3M4": keV, "L2M4": keV, "L3N5": keV, "L2N4": keV},
                        "transmission": [fraction per energy through the filter]}
Transmission = exp(−(μ/ρ) ρ t) with xraylib's CS_Total (cm²/g).
"""
import json
import math
import sys

import xraylib

LINES = {"L3M5": xraylib.L3M5_LINE, "L3M4": xraylib.L3M4_LINE, "L2M4": xraylib.L2M4_LINE, "L3N5": xraylib.L3N5_LINE, "L2N4": xraylib.L2N4_LINE}

if __name__ == "__main__":
    request = json.load(sys.stdin)
    out = {"tungsten": {name: xraylib.LineEnergy(74, line) for name, line in LINES.items()}, "transmission": []}
    f = request.get("filter")
    if f:
        z = xraylib.SymbolToAtomicNumber(f["element"])
        t_cm = f["thicknessUm"] * 1e-4
        out["transmission"] = [math.exp(-xraylib.CS_Total(z, e) * f["density"] * t_cm) for e in request.get("energiesKeV", [])]
    print(json.dumps(out))
