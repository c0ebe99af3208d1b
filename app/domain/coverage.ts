// What d-spacings (and, for total scattering, what Q) an instrument reaches: Bragg's law over its 2θ range.

const rad = (deg: number) => (deg * Math.PI) / 180;

/**
 * d-spacing range in Å covered by wavelength λ (Å) over 2θ ∈ [twoThetaMin, twoThetaMax] degrees:
 * from λ / (2 sin θmax) to λ / (2 sin θmin) (Bragg's law, λ = 2 d sin θ). A 2θ minimum of 0 reaches
 * arbitrarily large d (Infinity).
 */
export function dSpacingCoverage(wavelength: number, twoThetaMin: number, twoThetaMax: number) {
  const dMin = wavelength / (2 * Math.sin(rad(twoThetaMax / 2)));
  const dMax = twoThetaMin > 0 ? wavelength / (2 * Math.sin(rad(twoThetaMin / 2))) : Infinity;
  return { dMin, dMax };
}

/** Q_max = 4π sin θmax / λ in Å⁻¹, the figure of merit of a total-scattering instrument. */
export function qMax(wavelength: number, twoThetaMax: number) {
  return (4 * Math.PI * Math.sin(rad(twoThetaMax / 2))) / wavelength;
}

/** The 2θ (degrees) at which wavelength λ reaches d, or NaN when d < λ/2 cannot be reached. */
export function twoThetaForD(wavelength: number, d: number) {
  const s = wavelength / (2 * d);
  return s > 1 ? NaN : (2 * Math.asin(s) * 180) / Math.PI;
}
