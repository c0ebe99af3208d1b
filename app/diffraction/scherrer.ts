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
