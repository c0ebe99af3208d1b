"""X-ray line wavelengths, K absorption edges and atomic form factors from xraylib, as JSON.

Run with /usr/bin/python3 (Debian python3-xraylib 4.0.0).
Input (stdin, JSON): {"anodes": ["Cu", ...], "edges": ["Fe", ...], "formFactors": {"Si": [s, ...], ...}}
Output (stdout, JSON): {"lines": {anode: {"kAlpha1", "kAlpha2", "kBeta"} in Å},
                        "kAlpha2Ratio": {anode: radiative-rate ratio KL2/KL3},
                        "edges": {element: keV}, "formFactors": {element: [f0, ...]}}
Kα1 = KL3, Kα2 = KL2, Kβ = KM3 (Kβ1); λ = 12.39841857 keV·Å / E. Form factors are xraylib's FF_Rayl
at momentum transfer s = sin θ / λ (Å⁻¹).
"""
import json
import sys

import xraylib

HC_KEV_ANGSTROM = 12.39841857


def z_of(symbol):
    return xraylib.SymbolToAtomicNumber(symbol)


if __name__ == "__main__":
    request = json.load(sys.stdin)
    lines, ratios = {}, {}
    for anode in request.get("anodes", []):
        z = z_of(anode)
        lines[anode] = {
            "kAlpha1": HC_KEV_ANGSTROM / xraylib.LineEnergy(z, xraylib.KL3_LINE),
            "kAlpha2": HC_KEV_ANGSTROM / xraylib.LineEnergy(z, xraylib.KL2_LINE),
            "kBeta": HC_KEV_ANGSTROM / xraylib.LineEnergy(z, xraylib.KM3_LINE),
        }
        ratios[anode] = xraylib.RadRate(z, xraylib.KL2_LINE) / xraylib.RadRate(z, xraylib.KL3_LINE)
    edges = {e: xraylib.EdgeEnergy(z_of(e), xraylib.K_SHELL) for e in request.get("edges", [])}
    form = {e: [xraylib.FF_Rayl(z_of(e), s) for s in ss] for e, ss in request.get("formFactors", {}).items()}
    print(json.dumps({"lines": lines, "kAlpha2Ratio": ratios, "edges": edges, "formFactors": form}))
