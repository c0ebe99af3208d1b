// Peak search and profile fits on simulated scans: positions, widths, areas, the tied Kα2 line, overlaps,
// backgrounds, and Bragg's law against hand values.
import { describe, expect, it } from "vitest";
import { dFromTwoTheta, twoThetaFromD } from "~/diffraction/cell";
import { estimateBackground } from "~/diffraction/background";
import { analysePeaks, intensityVariance, pseudoVoigtArea } from "~/diffraction/peaks";
import { instrumentFwhm, scherrerSize } from "~/diffraction/scherrer";
import { mulberry32, poissonSampler } from "~/diffraction/simulate";
import { ANODE_LINES } from "~/diffraction/wavelengths";

const CU = ANODE_LINES.Cu;
const DOUBLET = [
  { wavelength: CU.kAlpha1, weight: 1 },
  { wavelength: CU.kAlpha2, weight: 0.5 },
];
const RAD = Math.PI / 180;

interface Line {
  at: number;
  height: number;
  fwhm: number;
  eta: number;
}

// Pseudo-Voigt lines (height form), each with its Kα2 at Bragg's law position and half height, on a
// background, with seeded Poisson noise. Written here independently of the project's simulator.
function scan(lines: Line[], background: (x: number) => number, options: { step?: number; min?: number; max?: number; seed?: number; doublet?: boolean } = {}) {
  const { step = 0.01, min = 20, max = 80, seed = 1, doublet = true } = options;
  const n = Math.round((max - min) / step) + 1;
  const x = new Float64Array(n);
  const y = new Float64Array(n);
  const poisson = poissonSampler(mulberry32(seed));
  for (let i = 0; i < n; i++) {
    x[i] = min + i * step;
    let f = background(x[i]);
    for (const l of lines) {
      const positions = [[l.at, 1]];
      if (doublet) positions.push([(2 * Math.asin((CU.kAlpha2 / CU.kAlpha1) * Math.sin((l.at * RAD) / 2))) / RAD, 0.5]);
      for (const [pos, w] of positions) {
        const u = (x[i] - pos) / l.fwhm;
        f += w * l.height * (l.eta / (1 + 4 * u * u) + (1 - l.eta) * Math.exp(-4 * Math.LN2 * u * u));
      }
    }
    y[i] = poisson(f);
  }
  return { x, y };
}

describe("Bragg's law (hand calculation)", () => {
  it("d = λ / (2 sin θ): Si 111 at 28.442° with Cu Kα1 is 3.1356 Å (docs/reference-values.md#silicon-reflections)", () => {
    expect(dFromTwoTheta(28.442, 1.5405929)).toBeCloseTo(3.1356, 4);
    // 2θ = 2 asin(λ / 2d): d = 2 Å, λ = 1.540593 Å → sin θ = 0.38514825, θ = 22.6527°, 2θ = 45.3054°.
    expect(twoThetaFromD(2, 1.540593)).toBeCloseTo(45.3054, 3);
  });
});

describe("peak fits", () => {
  it("recovers positions, widths and areas of isolated doublets on a sloping background", () => {
    const truth: Line[] = [
      { at: 30.123, height: 8000, fwhm: 0.08, eta: 0.4 },
      { at: 45.5, height: 3000, fwhm: 0.09, eta: 0.6 },
      { at: 71.04, height: 1500, fwhm: 0.12, eta: 0.5 },
    ];
    const { x, y } = scan(truth, (t) => 400 - 3 * t);
    const result = analysePeaks(x, y, { lines: DOUBLET });
    expect(result.peaks).toHaveLength(3);
    result.peaks.forEach((p, i) => {
      const t = truth[i];
      expect(Math.abs(p.twoTheta - t.at)).toBeLessThan(Math.max(4 * p.twoThetaEsd, 1e-4));
      expect(Math.abs(p.fwhm - t.fwhm) / t.fwhm).toBeLessThan(0.05);
      expect(Math.abs(p.height - t.height) / t.height).toBeLessThan(0.05);
      expect(Math.abs(p.area - pseudoVoigtArea(t.height, t.fwhm, t.eta)) / p.area).toBeLessThan(0.05);
      // Bragg's law with Kα1.
      expect(p.d).toBeCloseTo(CU.kAlpha1 / (2 * Math.sin((p.twoTheta * RAD) / 2)), 12);
    });
  });

  it("does not report a resolved Kα2 line as a peak of its own", () => {
    const { x, y } = scan([{ at: 110, height: 5000, fwhm: 0.1, eta: 0.5 }], () => 100, { min: 100, max: 120 });
    const result = analysePeaks(x, y, { lines: DOUBLET });
    expect(result.peaks).toHaveLength(1);
    expect(result.peaks[0].twoTheta).toBeCloseTo(110, 3);
  });

  it("fits two overlapping peaks together", () => {
    const truth: Line[] = [
      { at: 50.0, height: 4000, fwhm: 0.1, eta: 0.5 },
      { at: 50.12, height: 2500, fwhm: 0.1, eta: 0.5 },
    ];
    const { x, y } = scan(truth, () => 150, { doublet: false, step: 0.005, min: 45, max: 55 });
    const result = analysePeaks(x, y, { lines: [DOUBLET[0]] });
    expect(result.peaks).toHaveLength(2);
    expect(Math.abs(result.peaks[0].twoTheta - 50.0)).toBeLessThan(0.005);
    expect(Math.abs(result.peaks[1].twoTheta - 50.12)).toBeLessThan(0.005);
  });

  it("finds nothing in pure noise over a humped background", () => {
    const { x, y } = scan([], (t) => 300 + 500 * Math.exp(-(((t - 30) / 8) ** 2)), { seed: 4 });
    expect(analysePeaks(x, y, { lines: DOUBLET }).peaks.length).toBeLessThanOrEqual(1);
  });

  it("finds weak peaks several standard deviations above a high background", () => {
    // Height 150 counts on 2000: about 3.4 σ per point, far more over a FWHM of 10 points.
    const { x, y } = scan([{ at: 40, height: 150, fwhm: 0.1, eta: 0.5 }], () => 2000, { seed: 9, doublet: false });
    const result = analysePeaks(x, y, { lines: [DOUBLET[0]] });
    expect(result.peaks.some((p) => Math.abs(p.twoTheta - 40) < 0.02)).toBe(true);
  });

  it("is independent of the step: a 0.002° scan gives the same position as a 0.02° one", () => {
    const line = [{ at: 60.321, height: 6000, fwhm: 0.1, eta: 0.5 }];
    const fine = analysePeaks(...(Object.values(scan(line, () => 100, { step: 0.002, seed: 2 })) as [Float64Array, Float64Array]), { lines: DOUBLET });
    const coarse = analysePeaks(...(Object.values(scan(line, () => 100, { step: 0.02, seed: 3 })) as [Float64Array, Float64Array]), { lines: DOUBLET });
    expect(Math.abs(fine.peaks[0].twoTheta - 60.321)).toBeLessThan(4 * fine.peaks[0].twoThetaEsd);
    expect(Math.abs(coarse.peaks[0].twoTheta - 60.321)).toBeLessThan(4 * coarse.peaks[0].twoThetaEsd);
  });
});

describe("background", () => {
  it("follows a sloping background and an amorphous hump under sharp peaks", () => {
    const bg = (t: number) => 200 + 2 * t + 800 * Math.exp(-(((t - 35) / 6) ** 2));
    const lines = [25, 33, 36.5, 48, 61].map((at) => ({ at, height: 5000, fwhm: 0.1, eta: 0.5 }));
    const { x, y } = scan(lines, bg, { seed: 6 });
    const b = estimateBackground(x, y, { peakFwhm: 0.1, variance: intensityVariance(y) });
    // Away from the peaks the estimate stays within a few per cent of the true background.
    for (const t of [22, 30, 35, 42, 55, 70]) {
      const i = Math.round((t - 20) / 0.01);
      expect(Math.abs(b[i] - bg(t)) / bg(t)).toBeLessThan(0.05);
    }
  });
});

describe("noise model", () => {
  it("uses counting statistics for counts and estimates the gain of scaled data", () => {
    const { y } = scan([], () => 1000, { seed: 12 });
    const counts = intensityVariance(y);
    expect(counts[10]).toBe(Math.max(y[10], 1));
    // The same counts divided by 4: variance per value is 1000 / 16 = 62.5 (gain 1/4 on a mean of 250).
    const scaled = intensityVariance(y.map((v) => v / 4 + 0.001));
    const mean = scaled.reduce((a, b) => a + b, 0) / scaled.length;
    expect(mean).toBeGreaterThan(62.5 * 0.85);
    expect(mean).toBeLessThan(62.5 * 1.15);
  });
});

describe("Scherrer size", () => {
  it("τ = Kλ/(β cos θ) (hand calculation): FWHM 0.2° at 40° with Cu Kα1, K = 0.9, is 42.2 nm", () => {
    // β = 0.2° = 3.4907e-3 rad; cos 20° = 0.93969; τ = 0.9 × 1.540593 / (3.4907e-3 × 0.93969) = 422.7 Å.
    const r = scherrerSize(0.2, 40, 1.540593);
    expect(r.sizeNm).toBeCloseTo(42.27, 1);
    expect(r.instrumentRemoved).toBe(false);
  });

  it("removes the instrument's width in quadrature (Gaussian-like) or linearly (Lorentzian-like)", () => {
    const instrument = { U: 0, V: 0, W: 0.01 }; // 0.1° everywhere
    expect(instrumentFwhm(instrument, 40)).toBeCloseTo(0.1, 12);
    const gaussian = scherrerSize(0.2, 40, 1.540593, { eta: 0.2, instrument });
    expect(gaussian.breadth).toBeCloseTo(Math.sqrt(0.04 - 0.01), 12);
    const lorentzian = scherrerSize(0.2, 40, 1.540593, { eta: 0.8, instrument });
    expect(lorentzian.breadth).toBeCloseTo(0.1, 12);
    expect(scherrerSize(0.09, 40, 1.540593, { eta: 0.8, instrument }).sizeNm).toBeNull();
  });
});
