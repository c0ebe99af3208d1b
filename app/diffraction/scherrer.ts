// Crystallite size from peak breadth by the Scherrer equation, with optional removal of the instrument's width.
//
// τ = K λ / (β cos θ), β the integral breadth or FWHM in radians of the sample's own broadening, K ≈ 0.9
// for the FWHM of roughly spherical crystallites (Scherrer 1918; Langford & Wilson 1978, J. Appl. Cryst.
// 11, 102 — from memory). Without an instrument profile the whole FWHM is used and the size is a lower
// bound. With one (Caglioti U, V, W of a line-position standard), the instrumental FWHM is subtracted in
// quadrature for Gaussian-like peaks (η < 0.5: Gaussian widths add in quadrature) and linearly for
// Lorentzian-like ones (η ≥ 0.5: Lorentzian widths add linearly) — the usual approximations.

const RAD = Math.PI / 180;

/** Caglioti widths of the instrument: FWHM² = U tan²θ + V tan θ + W (degrees² 2θ). */
export interface InstrumentProfile {
  U: number;
  V: number;
  W: number;
}

export interface ScherrerEstimate {
  /** Crystallite size in nm, or null when the peak is not broader than the instrument. */
  sizeNm: number | null;
  /** Sample broadening used, degrees 2θ. */
  breadth: number;
  instrumentRemoved: boolean;
}

export const SCHERRER_K = 0.9;

export function instrumentFwhm(profile: InstrumentProfile, twoTheta: number): number {
  const t = Math.tan((twoTheta * RAD) / 2);
  return Math.sqrt(Math.max(profile.U * t * t + profile.V * t + profile.W, 0));
}

/** Scherrer size of one peak: FWHM and 2θ in degrees, wavelength in Å, η the Lorentzian fraction. */
export function scherrerSize(
  fwhm: number,
  twoTheta: number,
  wavelength: number,
  options: { eta?: number; instrument?: InstrumentProfile; k?: number } = {},
): ScherrerEstimate {
  let breadth = fwhm;
  if (options.instrument) {
    const inst = instrumentFwhm(options.instrument, twoTheta);
    breadth = (options.eta ?? 0) < 0.5 ? Math.sqrt(Math.max(fwhm * fwhm - inst * inst, 0)) : fwhm - inst;
  }
  if (!(breadth > 0)) return { sizeNm: null, breadth: Math.max(breadth, 0), instrumentRemoved: Boolean(options.instrument) };
  const beta = breadth * RAD;
  const tauAngstrom = ((options.k ?? SCHERRER_K) * wavelength) / (beta * Math.cos((twoTheta * RAD) / 2));
  return { sizeNm: tauAngstrom / 10, breadth, instrumentRemoved: Boolean(options.instrument) };
}

export const SCHERRER_CAUTION =
  "Crystallite sizes include the instrument's own broadening, so they are lower bounds; give the instrument profile (Caglioti U, V, W) to remove it.";

/** One peak's width for the instrument-profile fit: position and FWHM in degrees 2θ, with the FWHM's esd if known. */
export interface PeakWidth {
  twoTheta: number;
  fwhm: number;
  fwhmEsd?: number | null;
}

export type CagliotiFit =
  | {
      ok: true;
      profile: InstrumentProfile;
      /** Standard uncertainties of U, V, W (null with exactly three peaks and no width esds). */
      esd: InstrumentProfile | null;
      /** Covariance of (U, V, W), row-major 3×3, scaled like the esds. */
      covariance: number[] | null;
      reducedChi2: number | null;
      /** Peaks in the fit, and those left out as outliers (a blend or a broadened line). */
      peaksUsed: number;
      rejected: number;
    }
  | { ok: false; error: string };

// Without a width's esd, each FWHM is taken to 2 % (own choice; profile fits of a standard's clean lines give
// about that), and the esds are scaled by the fit's own scatter.
const RELATIVE_WIDTH_SIGMA = 0.02;

/**
 * Fits the Caglioti widths FWHM² = U tan²θ + V tan θ + W (degrees² 2θ; Caglioti, Paoletti & Ricci 1958 —
 * docs/reference-values.md#peak-positions-and-widths) to peak widths of a calibration scan by weighted linear
 * least squares in FWHM², σ(FWHM²) = 2 FWHM σ(FWHM). Widths more than five robust standard deviations off the
 * curve are left out (blends, a broadened line) while at least four remain. Refuses, with one sentence, fewer
 * than three usable peaks and an unphysical curve: a width² not positive somewhere within the peaks' range, or
 * U negative by more than three standard uncertainties (widths falling at high angles, unlike every real
 * instrument).
 */
export function fitCaglioti(peaks: readonly PeakWidth[]): CagliotiFit {
  const usable = peaks.filter(
    (p) =>
      Number.isFinite(p.twoTheta) &&
      p.twoTheta > 0 &&
      p.twoTheta < 180 &&
      Number.isFinite(p.fwhm) &&
      p.fwhm > 0 &&
      (p.fwhmEsd == null || (Number.isFinite(p.fwhmEsd) && p.fwhmEsd > 0)),
  );
  if (usable.length < 3) {
    return { ok: false, error: `The instrument profile needs the widths of at least three peaks of the standard; this scan gives ${usable.length}.` };
  }
  const haveEsds = usable.every((p) => p.fwhmEsd != null);
  const rows = usable.map((p) => {
    const t = Math.tan((p.twoTheta * RAD) / 2);
    const sigmaFwhm = haveEsds ? Math.hypot(p.fwhmEsd as number, 0.005 * p.fwhm) : RELATIVE_WIDTH_SIGMA * p.fwhm;
    return { x: [t * t, t, 1], y: p.fwhm * p.fwhm, sigma: 2 * p.fwhm * sigmaFwhm, t };
  });
  let used = rows.map(() => true);
  let solution: ReturnType<typeof solveWeighted> = null;
  for (let round = 0; round < 5; round++) {
    solution = solveWeighted(rows.filter((_, i) => used[i]));
    if (!solution) break;
    const { beta } = solution;
    const normalised = rows.map((r) => (r.y - (beta[0] * r.x[0] + beta[1] * r.x[1] + beta[2])) / r.sigma);
    const inFit = normalised.filter((_, i) => used[i]);
    const centre = sortedMedian(inFit);
    const spread = 1.4826 * sortedMedian(inFit.map((v) => Math.abs(v - centre)));
    const limit = 5 * Math.max(spread, 1);
    const next = rows.map((_, i) => used[i] && Math.abs(normalised[i]) <= limit);
    const remaining = next.filter(Boolean).length;
    if (remaining === used.filter(Boolean).length || remaining < 4) break;
    used = next;
  }
  if (!solution) return { ok: false, error: "The peak widths do not determine U, V and W: the peaks cover too narrow a range of angles." };
  const n = used.filter(Boolean).length;
  const dof = n - 3;
  const [U, V, W] = solution.beta;
  const reducedChi2 = dof > 0 ? solution.chi2 / dof : null;
  // Esds from the covariance: with width esds scaled by √χ²ᵣ when above 1, without them by √χ²ᵣ always.
  const scale = reducedChi2 === null ? (haveEsds ? 1 : null) : haveEsds ? Math.max(reducedChi2, 1) : reducedChi2;
  const covariance = scale === null ? null : solution.covariance.map((c) => c * scale);
  const esd = covariance ? { U: Math.sqrt(covariance[0]), V: Math.sqrt(covariance[4]), W: Math.sqrt(covariance[8]) } : null;
  const inFit = rows.filter((_, i) => used[i]);
  const tMin = Math.min(...inFit.map((r) => r.t));
  const tMax = Math.max(...inFit.map((r) => r.t));
  // The parabola's smallest value over the range: at an end or at its vertex −V/(2U).
  const f = (t: number) => U * t * t + V * t + W;
  const vertex = U > 0 ? -V / (2 * U) : Number.NaN;
  const lowest = Math.min(f(tMin), f(tMax), vertex > tMin && vertex < tMax ? f(vertex) : Number.POSITIVE_INFINITY);
  if (!(lowest > 0)) {
    return {
      ok: false,
      error: "The fitted widths fall to zero or below within the scan's range, which no instrument does; the peak widths are too scattered to give a profile.",
    };
  }
  if (esd && U < -3 * esd.U) {
    return {
      ok: false,
      error: "The fitted widths shrink towards high angles (U is negative), which no instrument does; the peak widths are too scattered to give a profile.",
    };
  }
  return { ok: true, profile: { U, V, W }, esd, covariance, reducedChi2, peaksUsed: n, rejected: rows.length - n };
}

function solveWeighted(rows: { x: number[]; y: number; sigma: number }[]): { beta: number[]; covariance: number[]; chi2: number } | null {
  if (rows.length < 3) return null;
  // Normal equations in columns scaled to unit size (tan²θ and 1 differ by orders of magnitude at low angles).
  const scaleOf = [0, 1, 2].map((j) => Math.max(...rows.map((r) => Math.abs(r.x[j]))) || 1);
  const a = new Array(9).fill(0);
  const b = [0, 0, 0];
  for (const r of rows) {
    const w = 1 / (r.sigma * r.sigma);
    for (let j = 0; j < 3; j++) {
      b[j] += (w * r.x[j] * r.y) / scaleOf[j];
      for (let k = 0; k < 3; k++) a[j * 3 + k] += (w * r.x[j] * r.x[k]) / (scaleOf[j] * scaleOf[k]);
    }
  }
  const inv = invert3(a);
  if (!inv) return null;
  const beta = [0, 1, 2].map((j) => (inv[j * 3] * b[0] + inv[j * 3 + 1] * b[1] + inv[j * 3 + 2] * b[2]) / scaleOf[j]);
  const covariance = inv.map((c, i) => c / (scaleOf[Math.floor(i / 3)] * scaleOf[i % 3]));
  let chi2 = 0;
  for (const r of rows) chi2 += ((r.y - (beta[0] * r.x[0] + beta[1] * r.x[1] + beta[2])) / r.sigma) ** 2;
  return { beta, covariance, chi2 };
}

function invert3(m: number[]): number[] | null {
  const [a, b, c, d, e, f, g, h, i] = m;
  const A = e * i - f * h;
  const B = -(d * i - f * g);
  const C = d * h - e * g;
  const det = a * A + b * B + c * C;
  // A near-singular system: the peaks cannot tell the three terms apart.
  const size = Math.max(...m.map(Math.abs));
  if (!(Math.abs(det) > 1e-12 * size ** 3)) return null;
  return [A, -(b * i - c * h), b * f - c * e, B, a * i - c * g, -(a * f - c * d), C, -(a * h - b * g), a * e - b * d].map((x) => x / det);
}

function sortedMedian(values: number[]): number {
  const s = [...values].sort((x, y) => x - y);
  const m = s.length >> 1;
  return s.length % 2 ? s[m] : 0.5 * (s[m - 1] + s[m]);
}
