// Peak search and pseudo-Voigt profile fits of a powder scan, with the Kα2 line tied to Kα1 by Bragg's law.

import { estimateBackground } from "./background";
import { levenbergMarquardt, type NonlinearProblem } from "./least-squares";
import { lowerBound, median } from "./sorted";

const RAD = Math.PI / 180;
const LN2 = Math.LN2;
// Area of a unit-height pseudo-Voigt of unit FWHM: Lorentzian π/2, Gaussian √(π / 4 ln 2).
const LORENTZ_AREA = Math.PI / 2;
const GAUSS_AREA = Math.sqrt(Math.PI / (4 * LN2));

/** A diffracting line: wavelength in Å and intensity relative to the first (Kα1) line. */
export interface EmissionLine {
  wavelength: number;
  weight: number;
}

export interface FittedPeak {
  /** Kα1 (or single-line) position, degrees 2θ. */
  twoTheta: number;
  /** Standard uncertainty of the position from the fit, degrees 2θ. */
  twoThetaEsd: number;
  /** Kα1 peak height above the background, counts. */
  height: number;
  heightEsd: number;
  /** Integrated intensity of the Kα1 component, counts × degrees. */
  area: number;
  /** Full width at half maximum, degrees 2θ. */
  fwhm: number;
  /** Its standard uncertainty from the fit, degrees 2θ (NaN when the fit gave none). */
  fwhmEsd: number;
  /** Lorentzian fraction of the pseudo-Voigt, 0 (Gaussian) … 1 (Lorentzian). */
  eta: number;
  /** Bragg's law with the first line's wavelength, Å. */
  d: number;
}

export interface PeakSearchOptions {
  lines: EmissionLine[];
  /** Intensity standard uncertainties; without them a Poisson-like σ² = g·I is assumed and g estimated. */
  esd?: Float64Array;
  /** Detection threshold in standard deviations of the second-derivative filter. */
  threshold?: number;
}

export interface PeakAnalysis {
  peaks: FittedPeak[];
  background: Float64Array;
  /** Background plus every fitted peak, on the scan's points (for the plot). */
  fittedProfile: Float64Array;
  /** Typical FWHM found before fitting, degrees 2θ. */
  typicalFwhm: number;
  /** Variance of each intensity used as the weight's inverse. */
  variance: Float64Array;
}

// ——— Profile ———

/** Pseudo-Voigt of height h and FWHM H at x0, and the derivatives the fit needs. */
function pseudoVoigt(x: number, x0: number, h: number, H: number, eta: number, out: Float64Array | null): number {
  const u = (x - x0) / H;
  const u2 = u * u;
  const L = 1 / (1 + 4 * u2);
  // Past about 3.8 FWHMs the Gaussian part is below 10⁻¹⁷ of the height: taken as zero without the
  // exponential, which is most of the cost of a point far from the peak.
  const g = 4 * LN2 * u2;
  const G = g < 40 ? Math.exp(-g) : 0;
  const shape = eta * L + (1 - eta) * G;
  if (out) {
    const dfdu = h * (eta * (-8 * u * L * L) + (1 - eta) * (-8 * LN2 * u * G));
    out[0] = -dfdu / H; // ∂/∂x0
    out[1] = shape; // ∂/∂h
    out[2] = (-dfdu * u) / H; // ∂/∂H
    out[3] = h * (L - G); // ∂/∂η
  }
  return h * shape;
}

/** Position of a satellite line from the main line's position (Bragg's law at fixed d). */
function satellitePosition(twoTheta: number, ratio: number): { x: number; slope: number } {
  const s = ratio * Math.sin((twoTheta * RAD) / 2);
  if (s >= 1) return { x: Number.NaN, slope: Number.NaN };
  const x = (2 * Math.asin(s)) / RAD;
  const slope = (ratio * Math.cos((twoTheta * RAD) / 2)) / Math.cos((x * RAD) / 2);
  return { x, slope };
}

export function pseudoVoigtArea(height: number, fwhm: number, eta: number): number {
  return height * fwhm * (eta * LORENTZ_AREA + (1 - eta) * GAUSS_AREA);
}

// ——— Noise and width estimates ———

/**
 * Variance of each point. Whole, non-negative counts get counting statistics, σ² = max(I, 1). Scaled or
 * converted data get σ² = g·I with an unknown gain g, estimated from the scatter of each point about its
 * neighbours' mean, whose variance is 1.5 σ² on a smooth curve; the median of a χ²(1) variable is 0.455
 * (common practice).
 */
export function intensityVariance(intensity: Float64Array, esd?: Float64Array): Float64Array {
  const n = intensity.length;
  const variance = new Float64Array(n);
  if (esd) {
    for (let i = 0; i < n; i++) variance[i] = Math.max(esd[i] * esd[i], 1e-300);
    return variance;
  }
  let counts = true;
  for (let i = 0; i < n && counts; i++) counts = intensity[i] >= 0 && Number.isInteger(intensity[i]);
  if (counts) {
    for (let i = 0; i < n; i++) variance[i] = Math.max(intensity[i], 1);
    return variance;
  }
  const floor = Math.max(median(Float64Array.from(intensity, Math.abs)) * 0.05, 1e-12);
  const ratios = new Float64Array(n - 2);
  for (let i = 1; i < n - 1; i++) {
    const r = intensity[i] - 0.5 * (intensity[i - 1] + intensity[i + 1]);
    ratios[i - 1] = (r * r) / (1.5 * Math.max(intensity[i], floor));
  }
  let gain = median(ratios) / 0.455;
  if (!(gain > 0)) gain = ratios.reduce((a, b) => a + b, 0) / Math.max(ratios.length, 1) || 1;
  for (let i = 0; i < n; i++) variance[i] = gain * Math.max(intensity[i], floor);
  return variance;
}

/**
 * Typical FWHM (degrees) of the strongest peaks, measured directly at half height above the local
 * minimum; it sets the background window and the search filter before any fit. Only maxima standing well
 * clear of the noise count, so noise spikes on a weak pattern do not pass for narrow peaks; without any,
 * ten steps (scans are sampled with at least five points across a FWHM, docs/reference-values.md#facts-of-the-trade).
 */
export function estimatePeakWidth(twoTheta: Float64Array, intensity: Float64Array, variance?: Float64Array): number {
  const n = twoTheta.length;
  const step = (twoTheta[n - 1] - twoTheta[0]) / (n - 1);
  const smooth = boxSmooth(intensity, 1);
  const maxima: number[] = [];
  for (let i = 2; i < n - 2; i++) {
    if (smooth[i] > smooth[i - 1] && smooth[i] >= smooth[i + 1]) maxima.push(i);
  }
  maxima.sort((a, b) => smooth[b] - smooth[a]);
  const widths: number[] = [];
  // The base is the minimum within ±1°: wide enough for peaks up to about a degree broad, narrow enough
  // that an amorphous hump (several degrees) does not stand out from it.
  const reach = Math.max(20, Math.round(1 / step));
  const taken: number[] = [];
  for (const i of maxima.slice(0, 400)) {
    if (widths.length >= 9) break;
    if (taken.some((j) => Math.abs(twoTheta[j] - twoTheta[i]) < 0.5)) continue;
    let base = smooth[i];
    for (let j = Math.max(0, i - reach); j <= Math.min(n - 1, i + reach); j++) base = Math.min(base, smooth[j]);
    // The three-point mean has a third of a point's variance; the minimum over ±1° lies some three
    // standard deviations below the mean, so twelve above it is about nine above the noise.
    if (variance && smooth[i] - base < 12 * Math.sqrt(variance[i] / 3)) continue;
    taken.push(i);
    let lo = i;
    let hi = i;
    const half = base + 0.5 * (smooth[i] - base);
    while (lo > 0 && smooth[lo] > half) lo--;
    while (hi < n - 1 && smooth[hi] > half) hi++;
    // Only one side of a Kα doublet or a shoulder may be clean: when the half-widths disagree by more
    // than a third, the narrower one is the safer.
    const left = twoTheta[i] - twoTheta[lo];
    const right = twoTheta[hi] - twoTheta[i];
    widths.push(Math.abs(left - right) < 0.33 * Math.max(left, right) ? left + right : 2 * Math.min(left, right));
  }
  const w = median(widths);
  return Number.isFinite(w) && w > 0 ? Math.max(w, 2 * step) : 10 * step;
}

function boxSmooth(y: Float64Array, half: number): Float64Array {
  const n = y.length;
  const out = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    let s = 0;
    let c = 0;
    for (let j = Math.max(0, i - half); j <= Math.min(n - 1, i + half); j++) {
      s += y[j];
      c++;
    }
    out[i] = s / c;
  }
  return out;
}

// ——— Search ———

interface Candidate {
  index: number;
  twoTheta: number;
  strength: number;
}

/**
 * Peak candidates: local maxima of the negated second derivative of a Gaussian matched to the peak width
 * (it separates overlapping peaks and ignores a smooth background), kept when that filter's output exceeds
 * `threshold` standard deviations, propagated from the intensity variances — or, for weak isolated peaks,
 * when the Gaussian-weighted net intensity above the background exceeds `threshold` + 1 of its own
 * (the more sensitive matched filter; common practice).
 */
export function searchPeaks(
  twoTheta: Float64Array,
  intensity: Float64Array,
  variance: Float64Array,
  fwhm: number,
  threshold: number,
  net?: Float64Array,
): Candidate[] {
  const n = twoTheta.length;
  const step = (twoTheta[n - 1] - twoTheta[0]) / (n - 1);
  const sigma = Math.max(fwhm / (2 * Math.sqrt(2 * LN2)) / step, 0.7);
  const half = Math.max(2, Math.ceil(3 * sigma));
  const kernel = new Float64Array(2 * half + 1);
  let mean = 0;
  for (let j = -half; j <= half; j++) {
    const t = j / sigma;
    kernel[j + half] = (1 - t * t) * Math.exp(-0.5 * t * t);
    mean += kernel[j + half];
  }
  mean /= kernel.length;
  // Zero sum: a constant or linear background gives no response.
  for (let j = 0; j < kernel.length; j++) kernel[j] -= mean;
  const gauss = new Float64Array(2 * half + 1);
  for (let j = -half; j <= half; j++) gauss[j + half] = Math.exp(-0.5 * (j / sigma) ** 2);
  const response = new Float64Array(n);
  const score = new Float64Array(n);
  const matched = new Float64Array(n);
  for (let i = half; i < n - half; i++) {
    let s = 0;
    let v = 0;
    let g = 0;
    let gv = 0;
    for (let j = -half; j <= half; j++) {
      const c = kernel[j + half];
      const vij = variance[i + j];
      s += c * intensity[i + j];
      v += c * c * vij;
      if (net) {
        const w = gauss[j + half];
        g += w * net[i + j];
        gv += w * w * vij;
      }
    }
    response[i] = s;
    score[i] = v > 0 ? s / Math.sqrt(v) : 0;
    matched[i] = gv > 0 ? g / Math.sqrt(gv) : 0;
  }
  // A matched-filter detection must be that filter's own maximum within a FWHM: on the tail of a strong
  // peak the net intensity is high but falls monotonically.
  const reach = Math.max(1, Math.round(fwhm / step));
  const found: Candidate[] = [];
  for (let i = half + 1; i < n - half - 1; i++) {
    const significant = score[i] > threshold || (score[i] > 0 && matched[i] > threshold + 1 && isPeakOf(matched, i, reach));
    if (significant && response[i] > response[i - 1] && response[i] >= response[i + 1]) {
      // Parabolic interpolation of the filter maximum.
      const a = response[i - 1];
      const b = response[i];
      const c = response[i + 1];
      const denom = a - 2 * b + c;
      const offset = denom < 0 ? Math.max(-0.5, Math.min(0.5, (0.5 * (a - c)) / denom)) : 0;
      found.push({ index: i, twoTheta: twoTheta[i] + offset * step, strength: score[i] });
    }
  }
  return found;
}

// Within 10 % of the largest value nearby: the two filters' maxima may sit a point or two apart.
function isPeakOf(values: Float64Array, i: number, reach: number): boolean {
  for (let j = Math.max(0, i - reach); j <= Math.min(values.length - 1, i + reach); j++) if (0.9 * values[j] > values[i]) return false;
  return true;
}

/**
 * The search on bins of about a fifth of a FWHM when the scan is stepped more finely than ten points per
 * FWHM: the filter sees the same peaks and its cost stops growing with the number of points.
 */
function searchBinned(
  twoTheta: Float64Array,
  intensity: Float64Array,
  variance: Float64Array,
  net: Float64Array,
  fwhm: number,
  threshold: number,
): Candidate[] {
  const n = twoTheta.length;
  const step = (twoTheta[n - 1] - twoTheta[0]) / (n - 1);
  const bin = Math.floor(fwhm / step / 5);
  if (bin < 2) return searchPeaks(twoTheta, intensity, variance, fwhm, threshold, net);
  const { x, y, variance: v } = binScan(twoTheta, intensity, variance, 0, Math.floor(n / bin), bin);
  const binnedNet = binScan(twoTheta, net, variance, 0, Math.floor(n / bin), bin).y;
  return searchPeaks(x, y, v, fwhm, threshold, binnedNet).map((c) => ({ ...c, index: Math.min(n - 1, c.index * bin + (bin >> 1)) }));
}

/** Means of `count` bins of `bin` points from `start`: angle, intensity, and the variance of the mean. */
function binScan(
  twoTheta: Float64Array,
  intensity: Float64Array,
  variance: Float64Array,
  start: number,
  count: number,
  bin: number,
): { x: Float64Array; y: Float64Array; variance: Float64Array } {
  const x = new Float64Array(count);
  const y = new Float64Array(count);
  const v = new Float64Array(count);
  for (let i = 0; i < count; i++) {
    let sx = 0;
    let sy = 0;
    let sv = 0;
    for (let j = start + i * bin; j < start + (i + 1) * bin; j++) {
      sx += twoTheta[j];
      sy += intensity[j];
      sv += variance[j];
    }
    x[i] = sx / bin;
    y[i] = sy / bin;
    v[i] = sv / (bin * bin);
  }
  return { x, y, variance: v };
}

/**
 * FWHM of the net peak at `index` from its half-height points (the narrower side, for a doublet), or
 * `fallback` when they are not found within a few typical widths: a start for the fit that already
 * follows the widths' growth with angle.
 */
function localFwhm(twoTheta: Float64Array, net: Float64Array, index: number, fallback: number): number {
  const half = 0.5 * net[index];
  if (!(half > 0)) return fallback;
  const limit = 4 * fallback;
  let lo = index;
  let hi = index;
  while (lo > 0 && net[lo] > half && twoTheta[index] - twoTheta[lo] < limit) lo--;
  while (hi < net.length - 1 && net[hi] > half && twoTheta[hi] - twoTheta[index] < limit) hi++;
  const width = 2 * Math.min(twoTheta[index] - twoTheta[lo], twoTheta[hi] - twoTheta[index]);
  return width > 0.5 * fallback && width < limit ? width : fallback;
}

// ——— Fits ———

interface PeakStart {
  twoTheta: number;
  height: number;
  fwhm: number;
}

interface ClusterFit {
  peaks: FittedPeak[];
  start: number;
  end: number;
  params: Float64Array;
}

/** Finds peaks and fits them; overlapping peaks (including Kα2 satellites) are fitted together. */
export function analysePeaks(twoTheta: Float64Array, intensity: Float64Array, options: PeakSearchOptions): PeakAnalysis {
  const n = twoTheta.length;
  const variance = intensityVariance(intensity, options.esd);
  const typicalFwhm = estimatePeakWidth(twoTheta, intensity, variance);
  const background = estimateBackground(twoTheta, intensity, { peakFwhm: typicalFwhm, variance });
  const net = new Float64Array(n);
  for (let i = 0; i < n; i++) net[i] = intensity[i] - background[i];
  const candidates = searchBinned(twoTheta, intensity, variance, net, typicalFwhm, options.threshold ?? 4);
  const lines = options.lines;
  const starts = dropSatellites(candidates, lines, typicalFwhm).map(
    (c): PeakStart => ({ twoTheta: c.twoTheta, height: Math.max(net[c.index], 0), fwhm: localFwhm(twoTheta, net, c.index, typicalFwhm) }),
  );
  const fittedProfile = Float64Array.from(background);
  const peaks: FittedPeak[] = [];
  let claimed = 0;
  for (const cluster of groupClusters(starts, lines, typicalFwhm)) {
    const fit = fitCluster(twoTheta, net, variance, cluster, lines, typicalFwhm);
    if (!fit) continue;
    addProfile(fittedProfile, twoTheta, fit, lines, claimed);
    claimed = fit.end;
    peaks.push(...fit.peaks);
  }
  peaks.sort((a, b) => a.twoTheta - b.twoTheta);
  return { peaks, background, fittedProfile, typicalFwhm, variance };
}

/**
 * Removes candidates that sit where a stronger candidate's satellite line falls (a resolved Kα2): the
 * satellite is part of the stronger peak's model, not a reflection of its own.
 */
function dropSatellites(candidates: Candidate[], lines: EmissionLine[], fwhm: number): Candidate[] {
  if (lines.length < 2) return candidates;
  const byStrength = [...candidates].sort((a, b) => b.strength - a.strength);
  const dropped = new Set<Candidate>();
  for (const c of byStrength) {
    if (dropped.has(c)) continue;
    for (const line of lines.slice(1)) {
      const sat = satellitePosition(c.twoTheta, line.wavelength / lines[0].wavelength).x;
      for (const other of candidates) {
        if (other === c || dropped.has(other)) continue;
        if (Math.abs(other.twoTheta - sat) < 0.4 * fwhm && other.strength < c.strength * Math.max(0.9, line.weight * 1.6)) {
          dropped.add(other);
        }
      }
    }
  }
  return candidates.filter((c) => !dropped.has(c));
}

const MAX_CLUSTER = 4;

function groupClusters(starts: PeakStart[], lines: EmissionLine[], fwhm: number): PeakStart[][] {
  const sorted = [...starts].sort((a, b) => a.twoTheta - b.twoTheta);
  const clusters: PeakStart[][] = [];
  let current: PeakStart[] = [];
  let reachEnd = -Infinity;
  for (const p of sorted) {
    const lo = p.twoTheta - 2.5 * fwhm;
    if (current.length > 0 && lo > reachEnd) {
      clusters.push(current);
      current = [];
    }
    current.push(p);
    reachEnd = Math.max(reachEnd, lastLinePosition(p.twoTheta, lines) + 2.5 * fwhm);
  }
  if (current.length > 0) clusters.push(current);
  return clusters.flatMap(splitLargeCluster);
}

function splitLargeCluster(cluster: PeakStart[]): PeakStart[][] {
  if (cluster.length <= MAX_CLUSTER) return [cluster];
  let cut = 1;
  let widest = -Infinity;
  // Cut at the widest gap away from the ends so both halves keep a few peaks.
  for (let i = 2; i < cluster.length - 1; i++) {
    const gap = cluster[i].twoTheta - cluster[i - 1].twoTheta;
    if (gap > widest) [widest, cut] = [gap, i];
  }
  return [...splitLargeCluster(cluster.slice(0, cut)), ...splitLargeCluster(cluster.slice(cut))];
}

function lastLinePosition(twoTheta: number, lines: EmissionLine[]): number {
  let x = twoTheta;
  for (const line of lines.slice(1)) {
    const sat = satellitePosition(twoTheta, line.wavelength / lines[0].wavelength).x;
    if (Number.isFinite(sat)) x = Math.max(x, sat);
  }
  return x;
}

const PER_PEAK = 4;
const JACOBIAN_REACH = 8;

function fitCluster(
  twoTheta: Float64Array,
  net: Float64Array,
  variance: Float64Array,
  cluster: PeakStart[],
  lines: EmissionLine[],
  fwhm: number,
): ClusterFit | null {
  const first = cluster[0].twoTheta;
  const last = lastLinePosition(cluster[cluster.length - 1].twoTheta, lines);
  // Three FWHMs of margin: enough baseline on each side to tell the local background from the peak.
  const start = lowerBound(twoTheta, first - 3 * fwhm);
  const end = Math.min(twoTheta.length, lowerBound(twoTheta, last + 3 * fwhm));
  // Finely stepped scans are fitted on bins of about a sixth of a FWHM: the profile hardly changes
  // across a bin, the mean of a symmetric bin moves no centre, and the cost no longer grows with the
  // number of points per peak.
  const step = (twoTheta[end - 1] - twoTheta[start]) / Math.max(end - start - 1, 1);
  const bin = Math.max(1, Math.floor(fwhm / step / 6));
  const m = Math.floor((end - start) / bin);
  const k = cluster.length;
  const nParams = PER_PEAK * k + 2;
  if (m < nParams + 3) return null;
  const { x: xs, y: ys, variance: binVariance } = binScan(twoTheta, net, variance, start, m, bin);
  const weights = new Float64Array(m);
  for (let i = 0; i < m; i++) weights[i] = 1 / Math.sqrt(Math.max(binVariance[i], 1e-300));
  const centre = 0.5 * (twoTheta[start] + twoTheta[end - 1]);
  const p0 = new Float64Array(nParams);
  const lower = new Float64Array(nParams);
  const upper = new Float64Array(nParams);
  cluster.forEach((p, j) => {
    const o = PER_PEAK * j;
    p0.set([p.twoTheta, p.height, p.fwhm, 0.5], o);
    lower.set([p.twoTheta - 0.75 * fwhm, 0, 0.25 * fwhm, 0], o);
    upper.set([p.twoTheta + 0.75 * fwhm, Infinity, 6 * fwhm, 1], o);
  });
  lower[nParams - 2] = -Infinity;
  upper[nParams - 2] = Infinity;
  lower[nParams - 1] = -Infinity;
  upper[nParams - 1] = Infinity;
  // Every line of a peak (the main line first, then its satellites) in typed arrays: the wavelength ratios and
  // weights, and per evaluation each line's position and its slope d(position)/d(main position). The main line
  // is the entry of ratio 1, weight 1 and slope 1, so one loop evaluates every line with one copy of the
  // profile (a smaller function for the optimising compiler, and the same numbers: ×1 is exact). The model
  // loop reads numbers of one kind only (no objects made per evaluation, no shape checks that could send the
  // optimised code back to the interpreter).
  const nLines = lines.length;
  const lineWeight = new Float64Array(nLines);
  const lineRatio = new Float64Array(nLines);
  lineWeight[0] = 1;
  lineRatio[0] = 1;
  for (let s = 1; s < nLines; s++) {
    lineRatio[s] = lines[s].wavelength / lines[0].wavelength;
    lineWeight[s] = lines[s].weight / lines[0].weight;
  }
  const lineX = new Float64Array(k * nLines);
  const lineSlope = new Float64Array(k * nLines);
  const d = new Float64Array(4);
  const problem: NonlinearProblem = {
    nParams,
    nPoints: m,
    evaluate(p, residuals, jacobian) {
      for (let j = 0; j < k; j++) {
        lineX[j * nLines] = p[PER_PEAK * j];
        lineSlope[j * nLines] = 1;
        for (let s = 1; s < nLines; s++) {
          const sat = satellitePosition(p[PER_PEAK * j], lineRatio[s]);
          lineX[j * nLines + s] = sat.x;
          lineSlope[j * nLines + s] = sat.slope;
        }
      }
      if (jacobian) jacobian.fill(0);
      for (let i = 0; i < m; i++) {
        const x = xs[i];
        const w = weights[i];
        let f = p[nParams - 2] + p[nParams - 1] * (x - centre);
        const row = i * nParams;
        for (let j = 0; j < k; j++) {
          const o = PER_PEAK * j;
          const h = p[o + 1];
          const H = p[o + 2];
          const eta = p[o + 3];
          for (let s = 0; s < nLines; s++) {
            const lx = lineX[j * nLines + s];
            // A satellite beyond 180° 2θ does not diffract.
            if (s > 0 && !Number.isFinite(lx)) continue;
            const wr = lineWeight[s];
            // Beyond JACOBIAN_REACH FWHMs a line still adds its tail to the model but no derivative.
            const near = jacobian !== null && Math.abs(x - lx) < JACOBIAN_REACH * H;
            f += pseudoVoigt(x, lx, wr * h, H, eta, near ? d : null);
            if (near) {
              jacobian[row + o] += d[0] * lineSlope[j * nLines + s] * w;
              jacobian[row + o + 1] += d[1] * wr * w;
              jacobian[row + o + 2] += d[2] * w;
              jacobian[row + o + 3] += d[3] * w;
            }
          }
        }
        if (jacobian) {
          jacobian[row + nParams - 2] = w;
          jacobian[row + nParams - 1] = (x - centre) * w;
        }
        residuals[i] = (ys[i] - f) * w;
      }
    },
  };
  // A fall of χ² below 10⁻⁴ of itself (a few hundredths on a window of a few hundred bins) moves no
  // position by more than a small fraction of its standard uncertainty.
  const result = levenbergMarquardt(problem, p0, { lower, upper, maxIterations: 25, relativeTolerance: 1e-4 });
  const scale = result.dof > 0 ? Math.max(result.chi2 / result.dof, 1e-12) : 1;
  const cov = result.covariance;
  const peaks: FittedPeak[] = [];
  for (let j = 0; j < k; j++) {
    const o = PER_PEAK * j;
    const [x0, h, H, eta] = [result.params[o], result.params[o + 1], result.params[o + 2], result.params[o + 3]];
    const positionEsd = cov ? Math.sqrt(Math.max(cov.data[o * nParams + o], 0) * scale) : NaN;
    const heightEsd = cov ? Math.sqrt(Math.max(cov.data[(o + 1) * nParams + o + 1], 0) * scale) : NaN;
    const fwhmEsd = cov ? Math.sqrt(Math.max(cov.data[(o + 2) * nParams + o + 2], 0) * scale) : NaN;
    // A peak whose height is not three standard uncertainties above zero is noise (common practice).
    if (!(h > 3 * heightEsd) || !Number.isFinite(positionEsd)) continue;
    // A position pinned on its bound means the fit slid onto a neighbour: not a measured peak.
    if (x0 <= lower[o] + 1e-9 || x0 >= upper[o] - 1e-9) continue;
    peaks.push({
      twoTheta: x0,
      twoThetaEsd: positionEsd,
      height: h,
      heightEsd,
      area: pseudoVoigtArea(h, H, eta),
      fwhm: H,
      fwhmEsd,
      eta,
      d: lines[0].wavelength / (2 * Math.sin((x0 * RAD) / 2)),
    });
  }
  return { peaks, start, end, params: result.params };
}

/** Adds a cluster's peaks to the plotted profile; its local background only where no earlier window added one. */
function addProfile(profile: Float64Array, twoTheta: Float64Array, fit: ClusterFit, lines: EmissionLine[], claimed: number): void {
  const p = fit.params;
  const nParams = p.length;
  const k = (nParams - 2) / PER_PEAK;
  const centre = 0.5 * (twoTheta[fit.start] + twoTheta[fit.end - 1]);
  // The satellites' positions and heights once per peak, not once per point of a fine scan.
  const satellites = Array.from({ length: k }, (_, j) =>
    lines.slice(1).map((line) => ({
      x: satellitePosition(p[PER_PEAK * j], line.wavelength / lines[0].wavelength).x,
      height: (line.weight / lines[0].weight) * p[PER_PEAK * j + 1],
    })),
  );
  for (let i = fit.start; i < fit.end; i++) {
    const x = twoTheta[i];
    let f = i >= claimed ? p[nParams - 2] + p[nParams - 1] * (x - centre) : 0;
    for (let j = 0; j < k; j++) {
      const o = PER_PEAK * j;
      f += pseudoVoigt(x, p[o], p[o + 1], p[o + 2], p[o + 3], null);
      for (const sat of satellites[j]) {
        if (Number.isFinite(sat.x)) f += pseudoVoigt(x, sat.x, sat.height, p[o + 2], p[o + 3], null);
      }
    }
    profile[i] += f;
  }
}
