// The scan simulator: peak positions by Bragg's law, the Kα2 line, zero shift and specimen displacement,
// profile widths, background, seeded noise, speed and the written formats.
import { describe, expect, it } from "vitest";
import { dSpacing, twoThetaFromD } from "~/diffraction/cell";
import { allowedReflections } from "~/diffraction/reflections";
import {
  type SimulationOptions,
  cagliotiFwhm,
  displacementShift,
  formatScanAsPdCif,
  formatScanAsXy,
  lorentzPolarisation,
  mulberry32,
  poissonSampler,
  simulatePattern,
} from "~/diffraction/simulate";
import { STRUCTURES } from "~/diffraction/structures";
import { ANODE_LINES, type Radiation } from "~/diffraction/wavelengths";

const RAD = Math.PI / 180;
const CU_ALPHA1: Radiation = { kind: "anode", anode: "Cu", monochromation: "k_alpha1_only" };
const CU_DOUBLET: Radiation = { kind: "anode", anode: "Cu", monochromation: "k_alpha_doublet" };
const silicon = (extra: Partial<SimulationOptions> = {}): SimulationOptions => ({
  structure: STRUCTURES.silicon,
  radiation: CU_ALPHA1,
  twoThetaMin: 20,
  twoThetaMax: 140,
  step: 0.002,
  ...extra,
});

// The top of the peak nearest `guess`: the highest point within ±0.15°, refined by a parabola through three points.
function peakTop(x: Float64Array, y: ArrayLike<number>, guess: number): number {
  let best = -1;
  for (let i = 1; i < x.length - 1; i++) if (Math.abs(x[i] - guess) < 0.15 && (best < 0 || y[i] > y[best])) best = i;
  const [a, b, c] = [y[best - 1], y[best], y[best + 1]];
  return x[best] + ((x[1] - x[0]) * (a - c)) / (2 * (a - 2 * b + c));
}

describe("formulas (hand calculation)", () => {
  it("Lorentz–polarisation (1 + cos²2θ)/(sin²θ cosθ), with a monochromator (1 + cos²2θm cos²2θ)", () => {
    // Hand calculation: 2θ = 90° → (1 + 0)/(0.5 · √½) = 2√2.
    expect(lorentzPolarisation(90)).toBeCloseTo(2 * Math.SQRT2, 12);
    // Hand calculation: 2θ = 60°, 2θm = 26.6° → (1 + cos²26.6° · ¼)/(¼ · cos 30°).
    const expected = (1 + Math.cos(26.6 * RAD) ** 2 * 0.25) / (0.25 * Math.cos(30 * RAD));
    expect(lorentzPolarisation(60, 26.6)).toBeCloseTo(expected, 12);
  });

  it("Caglioti FWHM² = U tan²θ + V tanθ + W", () => {
    expect(cagliotiFwhm({ U: 0, V: 0, W: 0.01, eta: 0 }, 50)).toBeCloseTo(0.1, 12); // hand calculation
    // Hand calculation at 2θ = 90°, tan θ = 1: √(0.004 − 0.002 + 0.002) = 0.0632.
    expect(cagliotiFwhm({ U: 0.004, V: -0.002, W: 0.002, eta: 0.5 }, 90)).toBeCloseTo(Math.sqrt(0.004), 12);
  });

  it("displacement Δ2θ = −2 s cosθ / R in radians, shown in degrees (docs/reference-values.md#peak-positions-and-widths, common practice)", () => {
    // Hand calculation: s = 0.1 mm, R = 240 mm, 2θ = 28.442° → −2 · 0.1 · cos 14.221° / 240 rad = −0.04630°.
    expect(displacementShift(28.442, 0.1, 240)).toBeCloseTo(-0.0463, 4);
    expect(displacementShift(180, 0.1, 240)).toBeCloseTo(0, 12);
  });
});

describe("peak positions", () => {
  it("each silicon line peaks at its Bragg angle (Bragg's law, Kα1 only)", () => {
    const sim = simulatePattern(silicon());
    for (const r of sim.reflections) {
      const bragg = twoThetaFromD(dSpacing(STRUCTURES.silicon.cell, r), ANODE_LINES.Cu.kAlpha1);
      expect(r.twoTheta).toBeCloseTo(bragg, 10);
      expect(Math.abs(peakTop(sim.twoTheta, sim.intensity, bragg) - bragg), `${r.h}${r.k}${r.l}`).toBeLessThan(5e-4);
    }
  });

  it("Kα2 sits where Bragg's law puts λ(Kα2) and carries half the Kα1 area (docs/reference-values.md#x-ray-wavelengths, common practice)", () => {
    const alpha1 = simulatePattern(silicon());
    const doublet = simulatePattern(silicon({ radiation: CU_DOUBLET }));
    const kAlpha2 = doublet.intensity.map((v, i) => v - alpha1.intensity[i]);
    const d422 = dSpacing(STRUCTURES.silicon.cell, { h: 4, k: 2, l: 2 });
    const expected = twoThetaFromD(d422, ANODE_LINES.Cu.kAlpha2);
    expect(expected - twoThetaFromD(d422, ANODE_LINES.Cu.kAlpha1)).toBeGreaterThan(0.25);
    expect(Math.abs(peakTop(doublet.twoTheta, kAlpha2, expected) - expected)).toBeLessThan(5e-4);
    const area = (y: ArrayLike<number>) => Array.from(y).reduce((s, v) => s + v, 0);
    expect(area(kAlpha2) / area(alpha1.intensity)).toBeCloseTo(0.5, 3);
  });

  it("a zero shift moves every line by the same amount", () => {
    const sim = simulatePattern(silicon({ zeroShift: 0.05 }));
    for (const r of sim.reflections) {
      expect(r.twoTheta - r.twoThetaBragg).toBeCloseTo(0.05, 12);
      expect(Math.abs(peakTop(sim.twoTheta, sim.intensity, r.twoTheta) - (r.twoThetaBragg + 0.05))).toBeLessThan(5e-4);
    }
  });

  it("specimen displacement moves lines by −2 s cosθ / R (docs/reference-values.md#peak-positions-and-widths, common practice)", () => {
    const sim = simulatePattern(silicon({ specimenDisplacement: 0.2, goniometerRadius: 240 }));
    for (const r of sim.reflections) {
      const shift = (-2 * 0.2 * Math.cos((r.twoThetaBragg / 2) * RAD)) / 240 / RAD;
      expect(r.twoTheta - r.twoThetaBragg).toBeCloseTo(shift, 12);
      expect(Math.abs(peakTop(sim.twoTheta, sim.intensity, r.twoTheta) - (r.twoThetaBragg + shift))).toBeLessThan(5e-4);
    }
    // Larger at low angle, as cosθ says.
    expect(sim.reflections[0].twoTheta - sim.reflections[0].twoThetaBragg).toBeLessThan(-0.09);
  });
});

describe("profile, scale and background", () => {
  it("the strongest line peaks at `scale` counts and has the Caglioti width", () => {
    const shape = { U: 0.004, V: -0.002, W: 0.002, eta: 0.4 };
    const sim = simulatePattern(silicon({ peakShape: shape, scale: 5000, step: 0.001 }));
    const i111 = sim.reflections[0];
    const top = sim.twoTheta.findIndex((x) => Math.abs(x - i111.twoTheta) < 0.0005);
    expect(sim.intensity[top] / 5000).toBeCloseTo(1, 2);
    // Width at half height measured on the scan.
    const above = Array.from(sim.twoTheta).filter((x, i) => Math.abs(x - i111.twoTheta) < 0.5 && sim.intensity[i] >= 2500);
    expect(above[above.length - 1] - above[0]).toBeCloseTo(cagliotiFwhm(shape, i111.twoThetaBragg), 2);
  });

  it("crystallite size adds Scherrer broadening Kλ/(τ cosθ): in quadrature for η < 0.5, linearly above (common practice)", () => {
    const d220 = dSpacing(STRUCTURES.silicon.cell, { h: 2, k: 2, l: 0 });
    const bragg = twoThetaFromD(d220, ANODE_LINES.Cu.kAlpha1);
    // Hand calculation: τ = 40 nm, 2θ = 47.30° → β = 0.9 · 1.540593 Å / (400 Å · cos 23.65°) rad = 0.2168°.
    const beta = (0.9 * 1.540593) / (400 * Math.cos((bragg / 2) * RAD)) / RAD;
    expect(beta).toBeCloseTo(0.2168, 4);
    for (const eta of [0.2, 0.7]) {
      const shape = { U: 0.004, V: -0.002, W: 0.002, eta };
      const sim = simulatePattern(silicon({ peakShape: shape, crystalliteSizeNm: 40, twoThetaMin: 44, twoThetaMax: 51 }));
      const line = sim.reflections.find((r) => r.h === 2 && r.k === 2 && r.l === 0);
      const instrument = cagliotiFwhm(shape, bragg);
      const expected = eta < 0.5 ? Math.hypot(instrument, beta) : instrument + beta;
      expect(line?.fwhm).toBeCloseTo(expected, 12);
      const top = Math.max(...sim.intensity);
      const above = Array.from(sim.twoTheta).filter((_, i) => sim.intensity[i] >= top / 2);
      expect(above[above.length - 1] - above[0]).toBeCloseTo(expected, 2);
    }
  });

  it("background is constant + slope + Gaussian hump where there are no peaks", () => {
    const background = { constant: 200, slope: -0.5, hump: { center: 25, fwhm: 10, height: 300 } };
    const sim = simulatePattern(silicon({ background, scale: 0 }));
    let worst = 0;
    sim.twoTheta.forEach((x, i) => {
      const expected = 200 - 0.5 * (x - 20) + 300 * Math.exp((-4 * Math.LN2 * (x - 25) ** 2) / 100);
      worst = Math.max(worst, Math.abs(sim.intensity[i] - expected));
    });
    expect(worst).toBeLessThan(1e-9);
  });

  it("a bare cell gives the allowed reflections of its centering with equal |F|² and a fall-off", () => {
    const cell = { a: 10, b: 12, c: 15, alpha: 90, beta: 105, gamma: 90 };
    const sim = simulatePattern({ cell, system: "monoclinic", centering: "C", radiation: CU_ALPHA1, twoThetaMin: 5, twoThetaMax: 60, step: 0.01 });
    const dMin = ANODE_LINES.Cu.kAlpha1 / (2 * Math.sin(30 * RAD));
    const expected = allowedReflections(cell, "monoclinic", "C", { dMin }).filter((r) => twoThetaFromD(r.d, ANODE_LINES.Cu.kAlpha1) >= 5);
    expect(sim.reflections.map((r) => `${r.h} ${r.k} ${r.l}`)).toEqual(expected.map((r) => `${r.h} ${r.k} ${r.l}`));
    expect(Math.max(...sim.reflections.map((r) => r.intensity))).toBeCloseTo(100, 9);
  });
});

describe("seeded counting noise", () => {
  const clean = simulatePattern(silicon({ radiation: CU_DOUBLET, background: { constant: 50, slope: 0.2 } }));
  const noisy = (seed: number) => simulatePattern(silicon({ radiation: CU_DOUBLET, background: { constant: 50, slope: 0.2 }, noise: { seed } }));

  it("is reproducible for a seed and differs between seeds", () => {
    expect(noisy(7).intensity).toEqual(noisy(7).intensity);
    expect(noisy(7).intensity).not.toEqual(noisy(8).intensity);
  });

  it("gives whole counts with Poisson statistics around the noiseless scan", () => {
    const sim = noisy(42);
    expect(sim.intensity.every((v) => Number.isInteger(v) && v >= 0)).toBe(true);
    expect(sim.esd).toEqual(sim.intensity.map((v) => Math.sqrt(Math.max(v, 1))));
    const total = clean.intensity.reduce((s, v) => s + v, 0);
    const noisyTotal = sim.intensity.reduce((s, v) => s + v, 0);
    expect(Math.abs(noisyTotal - total)).toBeLessThan(4 * Math.sqrt(total));
    // Poisson variance equals the mean: the mean of (n − μ)²/μ is 1.
    let chi = 0;
    clean.intensity.forEach((mu, i) => (chi += (sim.intensity[i] - mu) ** 2 / mu));
    expect(chi / clean.intensity.length).toBeCloseTo(1, 1);
  });

  it("the sampler has mean and variance λ for small and large means (Poisson statistics)", () => {
    const draw = poissonSampler(mulberry32(1));
    for (const mean of [0.5, 3, 20, 49, 51, 200, 5000]) {
      const n = 20_000;
      let s = 0;
      let s2 = 0;
      for (let i = 0; i < n; i++) {
        const k = draw(mean);
        s += k;
        s2 += k * k;
      }
      const m = s / n;
      expect(Math.abs(m / mean - 1), `mean ${mean}`).toBeLessThan(4 * Math.sqrt(1 / (mean * n)) + 1e-3);
      expect(Math.abs((s2 / n - m * m) / mean - 1), `variance ${mean}`).toBeLessThan(0.05);
    }
  });
});

describe("a long scan", () => {
  it("5–145° at 0.002° is 70,001 points (its speed is measured in bench/kernels.ts, not here)", () => {
    const common = { radiation: CU_DOUBLET, twoThetaMin: 5, twoThetaMax: 145, step: 0.002, noise: { seed: 3 }, background: { constant: 100 } };
    expect(simulatePattern({ structure: STRUCTURES.lithiumIronPhosphate, ...common }).twoTheta.length).toBe(70_001);
  });
});

describe("written scans", () => {
  const sim = simulatePattern(silicon({ radiation: CU_DOUBLET, twoThetaMin: 20, twoThetaMax: 30, step: 0.01, noise: { seed: 1 } }));

  it("two-column text: one point a line, 2θ then counts, optional # comments", () => {
    const text = formatScanAsXy(sim, "Silicon, Cu Kα\nsimulated");
    const lines = text.trimEnd().split("\n");
    expect(lines.slice(0, 2)).toEqual(["# Silicon, Cu Kα", "# simulated"]);
    const rows = lines.slice(2).map((l) => l.split(" ").map(Number));
    expect(rows).toHaveLength(sim.twoTheta.length);
    rows.forEach(([x, y], i) => {
      expect(x).toBeCloseTo(sim.twoTheta[i], 6);
      expect(y).toBe(sim.intensity[i]);
    });
  });

  it("pdCIF: the pdCIF dictionary data names, a wavelength loop for the doublet, counts in order", () => {
    const cif = formatScanAsPdCif(sim, CU_DOUBLET, "si demo");
    expect(cif.startsWith("data_si_demo\n")).toBe(true);
    for (const name of [
      "_diffrn_radiation_wavelength",
      "_pd_meas_2theta_range_min",
      "_pd_meas_2theta_range_max",
      "_pd_meas_2theta_range_inc",
      "_pd_meas_counts_total",
    ])
      expect(cif).toContain(name);
    expect(cif).toMatch(/\n1 1\.540593 1\n2 1\.544427 0\.5\n/);
    expect(cif).toMatch(/_pd_meas_2theta_range_min 20\.0000\n_pd_meas_2theta_range_max 30\.0000\n_pd_meas_2theta_range_inc 0\.0100\n/);
    const counts = cif
      .slice(cif.indexOf("_pd_meas_counts_total") + 22)
      .trim()
      .split("\n")
      .map(Number);
    expect(counts).toEqual(Array.from(sim.intensity));
    const single = formatScanAsPdCif(sim, { kind: "custom", wavelength: 0.7093 });
    expect(single).toContain("_diffrn_radiation_wavelength 0.7093\n");
  });
});
