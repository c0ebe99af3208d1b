// Background under a powder pattern: SNIP clipping on a binned copy, so it follows sloping and humped
// (amorphous) backgrounds while staying linear in the number of points.
//
// SNIP (statistics-sensitive non-linear iterative peak clipping; Ryan et al. 1988, Nucl. Instrum.
// Methods B 34, 396; the log-log-sqrt transform and decreasing windows after Morháč et al. 1997,
// Nucl. Instrum. Methods A 401, 113 — from memory) replaces each value by the mean of its neighbours
// p points away whenever that mean is lower, for p = m … 1. A feature narrower than the window is
// clipped away; a hump wider than it survives. The scan is first averaged into bins of about a third of
// a peak width, so m stays a fixed number of bins whatever the step: O(n) in all.

import { median } from "./sorted";

export interface BackgroundOptions {
  /** Typical peak FWHM in degrees 2θ (from estimatePeakWidth). */
  peakFwhm: number;
  /** Clipping half-window in FWHMs; wide enough to clear a cluster of three overlapping peaks. */
  windowInFwhm?: number;
  /** Variance of each intensity; with it the clipping's bias toward the noise's lower edge is removed. */
  variance?: Float64Array;
}

const BINS_PER_FWHM = 3;

export function estimateBackground(twoTheta: Float64Array, intensity: Float64Array, options: BackgroundOptions): Float64Array {
  const n = twoTheta.length;
  const step = (twoTheta[n - 1] - twoTheta[0]) / (n - 1);
  const pointsPerFwhm = options.peakFwhm / step;
  const binSize = Math.max(1, Math.floor(pointsPerFwhm / BINS_PER_FWHM));
  const nBins = Math.ceil(n / binSize);
  const binX = new Float64Array(nBins);
  const binY = new Float64Array(nBins);
  for (let b = 0; b < nBins; b++) {
    const start = b * binSize;
    const end = Math.min(n, start + binSize);
    let sx = 0;
    let sy = 0;
    for (let i = start; i < end; i++) {
      sx += twoTheta[i];
      sy += intensity[i];
    }
    binX[b] = sx / (end - start);
    binY[b] = sy / (end - start);
  }
  const windowBins = Math.max(2, Math.round(((options.windowInFwhm ?? 4) * pointsPerFwhm) / binSize));
  const clipped = snip(binY, windowBins);
  const background = interpolate(binX, clipped, twoTheta);
  if (options.variance) removeClippingBias(intensity, background, options.variance);
  return background;
}

// biome-ignore lint/complexity/useMathMinMax: Math.min treats NaN and −0 otherwise, and the clipped values must stay as they were
const lower = (a: number, b: number) => (a < b ? a : b);

/**
 * Clipping follows the lower edge of the noise, so the raw SNIP background sits about one standard
 * deviation low. Points within 2.5 σ of it are background; the median of their normalised residuals is
 * that bias, added back in units of each point's σ.
 */
function removeClippingBias(intensity: Float64Array, background: Float64Array, variance: Float64Array): void {
  const n = intensity.length;
  const residuals: number[] = [];
  for (let i = 0; i < n; i += Math.max(1, Math.floor(n / 20000))) {
    const z = (intensity[i] - background[i]) / Math.sqrt(variance[i]);
    if (z < 2.5) residuals.push(z);
  }
  const bias = median(residuals);
  if (!(bias > 0)) return;
  for (let i = 0; i < n; i++) background[i] += bias * Math.sqrt(variance[i]);
}

// The transform compresses the dynamic range so strong and weak peaks are clipped alike.
const forward = (y: number) => Math.log(Math.log(Math.sqrt(Math.max(y, 0) + 1) + 1) + 1);
const backward = (v: number) => {
  const s = Math.exp(Math.exp(v) - 1) - 1;
  return s * s - 1;
};

function snip(values: Float64Array, window: number): Float64Array {
  const n = values.length;
  // An offset keeps background-subtracted scans (negative values) inside the transform's domain.
  let min = Infinity;
  for (let i = 0; i < n; i++) min = Math.min(min, values[i]);
  const offset = min < 0 ? -min : 0;
  let v = new Float64Array(n);
  for (let i = 0; i < n; i++) v[i] = forward(values[i] + offset);
  let next = new Float64Array(n);
  for (let p = Math.min(window, Math.floor((n - 1) / 2)); p >= 1; p--) {
    // Near the ends the window shrinks to what is there: q = i below p, n − 1 − i above n − 1 − p (p ≤ (n − 1)/2).
    for (let i = 0; i < p; i++) {
      const mean = i === 0 ? v[0] : 0.5 * (v[0] + v[2 * i]);
      next[i] = lower(mean, v[i]);
    }
    for (let i = p; i <= n - 1 - p; i++) {
      const mean = 0.5 * (v[i - p] + v[i + p]);
      next[i] = lower(mean, v[i]);
    }
    for (let i = n - p; i < n; i++) {
      const q = n - 1 - i;
      const mean = q === 0 ? v[i] : 0.5 * (v[i - q] + v[n - 1]);
      next[i] = lower(mean, v[i]);
    }
    [v, next] = [next, v];
  }
  const out = new Float64Array(n);
  for (let i = 0; i < n; i++) out[i] = backward(v[i]) - offset;
  return out;
}

function interpolate(x: Float64Array, y: Float64Array, at: Float64Array): Float64Array {
  const out = new Float64Array(at.length);
  let j = 0;
  for (let i = 0; i < at.length; i++) {
    const t = at[i];
    while (j < x.length - 2 && x[j + 1] < t) j++;
    if (x.length === 1) out[i] = y[0];
    else {
      const f = (t - x[j]) / (x[j + 1] - x[j]);
      out[i] = y[j] + Math.min(Math.max(f, -1), 2) * (y[j + 1] - y[j]);
    }
  }
  return out;
}
