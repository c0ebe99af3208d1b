// The check plot's x axis in 2θ, d-spacing or Q: the data stay on their 2θ points, and only the axis's splits
// and labels are placed at round values of d (Å) or Q (Å⁻¹) by Bragg's law, λ = 2d sin θ, Q = 4π sin θ / λ = 2π / d.
import { dFromTwoTheta, twoThetaFromD } from "~/diffraction/cell";

export type PlotAxis = "twoTheta" | "d" | "q";

/** d-spacing (Å) of a 2θ (degrees), and back (NaN beyond the Bragg limit). */
export const dOf = (twoTheta: number, wavelength: number) => dFromTwoTheta(twoTheta, wavelength);
/** Q (Å⁻¹) of a 2θ (degrees), and back. */
export const qOf = (twoTheta: number, wavelength: number) => (2 * Math.PI) / dFromTwoTheta(twoTheta, wavelength);
const twoThetaOfQ = (q: number, wavelength: number) => twoThetaFromD((2 * Math.PI) / q, wavelength);

/** The converters of an axis: 2θ → its unit, and the unit → 2θ. */
export function axisUnit(axis: Exclude<PlotAxis, "twoTheta">, wavelength: number): [(twoTheta: number) => number, (value: number) => number] {
  return axis === "d" ? [(x) => dOf(x, wavelength), (d) => twoThetaFromD(d, wavelength)] : [(x) => qOf(x, wavelength), (q) => twoThetaOfQ(q, wavelength)];
}

const STEPS = [100, 50, 20, 10, 5, 2, 1, 0.5, 0.2, 0.1, 0.05, 0.02, 0.01, 0.005, 0.002, 0.001];

/**
 * Axis splits (as 2θ positions between min and max) at round values of the unit: the roundest steps first
 * (multiples of 100, 50, 20, 10, 5, 2, 1, 0.5, …). A value is kept when its step's neighbours on both sides lie
 * at least `minGapPx` away (so each stretch of the axis is evenly labelled in its own step) and no kept value is
 * nearer than that: coarse steps where d changes fast (low angles), finer ones where it changes slowly.
 */
export function roundSplits(
  min: number,
  max: number,
  toUnit: (twoTheta: number) => number,
  fromUnit: (value: number) => number,
  widthPx: number,
  minGapPx = 56,
): number[] {
  const u0 = toUnit(min);
  const u1 = toUnit(max);
  const lo = Math.min(u0, u1);
  const hi = Math.max(u0, u1);
  if (!(max > min) || !(widthPx > 0) || !Number.isFinite(lo) || !Number.isFinite(hi) || !(hi > lo)) return [];
  const px = (x: number) => ((x - min) / (max - min)) * widthPx;
  const kept: { x: number; px: number }[] = [];
  for (const step of STEPS) {
    const first = Math.ceil(lo / step - 1e-9);
    const last = Math.floor(hi / step + 1e-9);
    if (last - first > 600) break;
    for (let k = first; k <= last; k++) {
      const value = k * step;
      if (value <= 0) continue;
      const x = fromUnit(value);
      if (!Number.isFinite(x) || x < min || x > max) continue;
      const p = px(x);
      const roomy = [value - step, value + step].every((v) => {
        const n = v > 0 ? fromUnit(v) : Number.NaN;
        return !Number.isFinite(n) || Math.abs(px(n) - p) >= minGapPx;
      });
      if (roomy && kept.every((s) => Math.abs(s.px - p) >= minGapPx)) kept.push({ x, px: p });
    }
  }
  return kept.map((s) => s.x).sort((a, b) => a - b);
}

/** A value of d or Q as an axis label: no more digits than it has, 4 at most ("2", "1.5", "0.25"). */
export function axisNumber(v: number): string {
  return String(Number(v.toFixed(4)));
}
