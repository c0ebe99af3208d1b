#!/usr/bin/env python3
"""A plain numpy/scipy lattice check, the comparison of `npm run bench` (bench/run.ts).

What a practitioner would write for a quick cell check of a powder scan, nothing deliberately slow and nothing
clever: read the two-column xy text, subtract a background (a running minimum, then smoothed), find peaks
(scipy.signal.find_peaks on the net counts), fit each peak (scipy.optimize.curve_fit, a pseudo-Voigt with the
Kα2 line tied to Kα1 by Bragg's law when the radiation has one; peaks whose windows overlap are fitted together),
index against the reflections of the declared cell (every hkl up to the scan's d-range, lattice-centering
conditions only: no glide or screw extinctions, no space group), and refine the cell and a zero shift by least
squares (scipy.optimize.least_squares) on the fitted Kα1 positions, weighted by their uncertainties.

Protocol: one JSON object on stdin
  {"runs": N, "cases": [{"file", "lines": [{"wavelength", "weight"}], "system", "centering", "cell": {...}}]}
and one JSON line per case on stdout: {"ms", "cpuMs", "cell", "peaks", "indexed"} (ms: the median wall-clock
time of N analyses of the file's bytes, cpuMs the median process CPU time; the imports and the reading of the
file from disk are outside the timing, the text parsing inside it, as on our side).

Needs python3 with numpy and scipy (numpy 2.4 / scipy 1.17 measured; see docs/performance.md#the-check).
"""

import io
import json
import math
import statistics
import sys
import time

import numpy as np
from scipy.ndimage import minimum_filter1d, uniform_filter1d
from scipy.optimize import curve_fit, least_squares
from scipy.signal import find_peaks, peak_widths

RAD = math.pi / 180
LN2 = math.log(2)


# ——— Profile ———


def pseudo_voigt(x, x0, h, fwhm, eta):
    u2 = ((x - x0) / fwhm) ** 2
    return h * (eta / (1 + 4 * u2) + (1 - eta) * np.exp(-4 * LN2 * u2))


def satellite(two_theta, ratio):
    """The Kα2 position of a Kα1 peak at two_theta (Bragg's law at fixed d); ratio = λ2/λ1."""
    s = np.clip(ratio * np.sin(np.asarray(two_theta) * RAD / 2), -1, 1)
    return 2 * np.arcsin(s) / RAD


def group_model(lines):
    """Sum of pseudo-Voigts (x0, h, fwhm, eta per peak) plus a constant, each peak with its tied satellites."""
    ratios = [(l["wavelength"] / lines[0]["wavelength"], l["weight"]) for l in lines[1:]]

    def model(x, *p):
        y = np.full_like(x, p[-1])
        for i in range(0, len(p) - 1, 4):
            x0, h, fwhm, eta = p[i : i + 4]
            y += pseudo_voigt(x, x0, h, fwhm, eta)
            for ratio, weight in ratios:
                y += pseudo_voigt(x, satellite(x0, ratio), weight * h, fwhm, eta)
        return y

    return model


# ——— Peaks ———


def background(x, y):
    step = (x[-1] - x[0]) / (len(x) - 1)
    # A running minimum over about 1.5° (several peak widths), then a running mean over the same width.
    width = max(5, int(round(1.5 / step)))
    return uniform_filter1d(minimum_filter1d(y, width, mode="nearest"), width, mode="nearest")


def fit_peaks(x, y, bg, lines):
    net = y - bg
    step = (x[-1] - x[0]) / (len(x) - 1)
    sigma = np.sqrt(np.maximum(y, 1.0))
    noise = float(np.median(sigma))
    # A peak stands out by six standard deviations of its own counts (Poisson) above its surroundings.
    indices, _ = find_peaks(net, prominence=6 * sigma, width=2, height=6 * noise)
    if len(indices) == 0:
        return []
    widths = peak_widths(net, indices, rel_height=0.5)[0] * step

    # Drop detected peaks that are another peak's Kα2 (at its satellite position, about half its height).
    if len(lines) > 1:
        ratio = lines[1]["wavelength"] / lines[0]["wavelength"]
        keep = np.ones(len(indices), bool)
        for i, j in enumerate(indices):
            sat = satellite(x[j], ratio)
            k = np.searchsorted(x[indices], sat)
            for n in (k - 1, k):
                if 0 <= n < len(indices) and n != i and abs(x[indices[n]] - sat) < max(widths[i], 2 * step):
                    keep[n] = keep[n] and not (net[indices[n]] < 0.8 * net[j])
        indices, widths = indices[keep], widths[keep]

    # Windows of ±3 FWHM (plus the Kα2 side); overlapping windows are fitted as one group.
    ratio = lines[1]["wavelength"] / lines[0]["wavelength"] if len(lines) > 1 else 1.0
    lo = x[indices] - 3 * widths
    hi = np.maximum(x[indices] + 3 * widths, satellite(x[indices], ratio) + 3 * widths)
    groups = []
    for i in range(len(indices)):
        if groups and lo[i] <= groups[-1][-1][1]:
            groups[-1].append((i, hi[i]))
        else:
            groups.append([(i, hi[i])])
    model = group_model(lines)
    fitted = []
    for g in groups:
        members = [i for i, _ in g]
        a = np.searchsorted(x, lo[members[0]])
        b = np.searchsorted(x, max(h for _, h in g)) + 1
        xs, ys, ss = x[a:b], net[a:b], sigma[a:b]
        if len(xs) < 4 * len(members) + 2:
            continue
        p0, lower, upper = [], [], []
        for i in members:
            x0, h, w = x[indices[i]], net[indices[i]], widths[i]
            p0 += [x0, h, w, 0.5]
            lower += [x0 - w, 0, w / 5, 0]
            upper += [x0 + w, 3 * h + 10 * noise, 5 * w, 1]
        p0.append(0.0)
        lower.append(-np.inf)
        upper.append(np.inf)
        try:
            p, cov = curve_fit(model, xs, ys, p0=p0, sigma=ss, absolute_sigma=True, bounds=(lower, upper))
        except (RuntimeError, ValueError):
            continue
        esd = np.sqrt(np.abs(np.diag(cov)))
        for n in range(len(members)):
            x0, h, fwhm, eta = p[4 * n : 4 * n + 4]
            fitted.append((x0, float(esd[4 * n]) if np.isfinite(esd[4 * n]) else step, h, fwhm))
    fitted.sort()
    return fitted


# ——— Cell ———

# The free parameters of each crystal system and the full cell they give (monoclinic: unique axis b).
SYSTEMS = {
    "cubic": (lambda c: [c["a"]], lambda p: (p[0], p[0], p[0], 90, 90, 90)),
    "tetragonal": (lambda c: [c["a"], c["c"]], lambda p: (p[0], p[0], p[1], 90, 90, 90)),
    "hexagonal": (lambda c: [c["a"], c["c"]], lambda p: (p[0], p[0], p[1], 90, 90, 120)),
    "trigonal": (lambda c: [c["a"], c["c"]], lambda p: (p[0], p[0], p[1], 90, 90, 120)),
    "orthorhombic": (lambda c: [c["a"], c["b"], c["c"]], lambda p: (p[0], p[1], p[2], 90, 90, 90)),
    "monoclinic": (lambda c: [c["a"], c["b"], c["c"], c["beta"]], lambda p: (p[0], p[1], p[2], 90, p[3], 90)),
    "triclinic": (
        lambda c: [c["a"], c["b"], c["c"], c["alpha"], c["beta"], c["gamma"]],
        lambda p: tuple(p),
    ),
}


def reciprocal_metric(a, b, c, alpha, beta, gamma):
    ca, cb, cg = math.cos(alpha * RAD), math.cos(beta * RAD), math.cos(gamma * RAD)
    g = np.array([[a * a, a * b * cg, a * c * cb], [a * b * cg, b * b, b * c * ca], [a * c * cb, b * c * ca, c * c]])
    return np.linalg.inv(g)


def two_theta_of(hkl, cell, wavelength):
    q = np.einsum("ij,jk,ik->i", hkl, reciprocal_metric(*cell), hkl)
    return 2 * np.arcsin(np.clip(wavelength * np.sqrt(q) / 2, 0, 1)) / RAD


CENTERING = {
    "P": lambda h, k, l: np.ones_like(h, bool),
    "I": lambda h, k, l: (h + k + l) % 2 == 0,
    "F": lambda h, k, l: ((h + k) % 2 == 0) & ((k + l) % 2 == 0),
    "A": lambda h, k, l: (k + l) % 2 == 0,
    "B": lambda h, k, l: (h + l) % 2 == 0,
    "C": lambda h, k, l: (h + k) % 2 == 0,
    "R": lambda h, k, l: (-h + k + l) % 3 == 0,
}


def reflections(cell, centering, wavelength, two_theta_max):
    """Every hkl allowed by the lattice centering with 2θ up to the scan's end, one per distinct d."""
    d_min = wavelength / (2 * math.sin(min(two_theta_max + 2, 179) * RAD / 2))
    a, b, c = cell[:3]
    # Generous index limits (a slanted cell's d is at most the edge length).
    n = [int(math.ceil(edge / d_min)) + 1 for edge in (a, b, c)]
    h, k, l = np.meshgrid(*(np.arange(-m, m + 1) for m in n), indexing="ij")
    hkl = np.stack([h.ravel(), k.ravel(), l.ravel()], axis=1)
    hkl = hkl[np.any(hkl != 0, axis=1) & CENTERING[centering](hkl[:, 0], hkl[:, 1], hkl[:, 2])]
    q = np.einsum("ij,jk,ik->i", hkl, reciprocal_metric(*cell), hkl)
    hkl = hkl[q <= 1 / d_min**2]
    tt = two_theta_of(hkl.astype(float), cell, wavelength)
    order = np.argsort(tt)
    tt, hkl = tt[order], hkl[order]
    distinct = np.concatenate([[True], np.diff(tt) > 1e-7])
    return hkl[distinct].astype(float)


def refine(peaks, cell0, system, centering, wavelength, two_theta_max):
    to_params, to_cell = SYSTEMS[system]
    params = np.array(to_params(cell0), float)
    obs = np.array([p[0] for p in peaks])
    esd = np.maximum(np.array([p[1] for p in peaks]), 1e-4)
    tolerance = np.maximum(0.1, 0.5 * np.array([p[3] for p in peaks]))
    hkl_all = reflections(to_cell(params), centering, wavelength, two_theta_max)
    zero = 0.0
    result = None
    for _ in range(3):  # index with the current cell, refine, index again
        calc = two_theta_of(hkl_all, to_cell(params), wavelength) + zero
        k = np.clip(np.searchsorted(calc, obs), 1, len(calc) - 1)
        nearest = np.where(np.abs(calc[k - 1] - obs) < np.abs(calc[k] - obs), k - 1, k)
        used = np.abs(calc[nearest] - obs) < tolerance
        if used.sum() < len(params) + 2:
            return None
        hkl, o, s = hkl_all[nearest[used]], obs[used], esd[used]

        def residuals(p, hkl=hkl, o=o, s=s):
            return (two_theta_of(hkl, to_cell(p[:-1]), wavelength) + p[-1] - o) / s

        result = least_squares(residuals, np.append(params, zero), method="lm", x_scale="jac")
        params, zero = result.x[:-1], result.x[-1]
    jac = result.jac
    dof = max(1, len(result.fun) - len(result.x))
    cov = np.linalg.pinv(jac.T @ jac) * (2 * result.cost / dof)
    cell = to_cell(params)
    return {
        "cell": dict(zip(["a", "b", "c", "alpha", "beta", "gamma"], map(float, cell))),
        "esd": [float(v) for v in np.sqrt(np.abs(np.diag(cov)))[:-1]],
        "zero": float(zero),
        "indexed": int(used.sum()),
    }


def analyse(data, case):
    xy = np.loadtxt(io.BytesIO(data), comments="#")
    x, y = xy[:, 0], xy[:, 1]
    lines = case["lines"]
    bg = background(x, y)
    peaks = fit_peaks(x, y, bg, lines)
    cell = case["cell"]
    refined = refine(
        peaks,
        cell,
        case["system"],
        case.get("centering") or "P",
        lines[0]["wavelength"],
        float(x[-1]),
    )
    return len(peaks), refined


def main():
    request = json.load(sys.stdin)
    runs = max(1, int(request.get("runs", 3)))
    for case in request["cases"]:
        with open(case["file"], "rb") as f:
            data = f.read()
        walls, cpus = [], []
        peaks, refined = 0, None
        for _ in range(runs):
            c0, t0 = time.process_time(), time.perf_counter()
            peaks, refined = analyse(data, case)
            walls.append((time.perf_counter() - t0) * 1000)
            cpus.append((time.process_time() - c0) * 1000)
        out = {"ms": statistics.median(walls), "cpuMs": statistics.median(cpus), "peaks": peaks}
        out.update(refined or {"cell": None, "indexed": 0})
        print(json.dumps(out), flush=True)


if __name__ == "__main__":
    main()
