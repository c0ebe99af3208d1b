// Systematic shifts of observed line positions from their Bragg angles: the zero shift, the specimen
// displacement and the specimen transparency (docs/reference-values.md#peak-positions-and-widths).

const RAD = Math.PI / 180;
const DEG = 180 / Math.PI;

/**
 * Shift of a line, degrees 2θ, when the specimen surface lies s mm off the focusing circle (positive
 * above it) of a Bragg–Brentano goniometer of radius R mm, at the Bragg angle θ given in radians:
 *
 *   Δ2θ = −2 s cos θ / R   (radians; common practice, docs/reference-values.md#peak-positions-and-widths)
 *
 * Linear in s, so s = 1 gives ∂(2θ)/∂s for the least squares.
 */
export function displacementShiftAtTheta(theta: number, displacement: number, radius: number): number {
  return (-2 * displacement * Math.cos(theta) * DEG) / radius;
}

/** The displacement shift (degrees 2θ) of a line at 2θ degrees; see displacementShiftAtTheta for the formula. */
export function displacementShift(twoTheta: number, displacement: number, radius: number): number {
  return displacementShiftAtTheta((twoTheta * RAD) / 2, displacement, radius);
}

/**
 * Shift of a line, degrees 2θ, from the beam's penetration into a thick, weakly absorbing specimen of linear
 * attenuation coefficient μ on a Bragg–Brentano goniometer of radius R mm, at the Bragg angle θ in radians:
 *
 *   Δ2θ = −sin 2θ / (2 μ R)   (radians; Klug & Alexander, common practice,
 *                              docs/reference-values.md#peak-positions-and-widths)
 *
 * The parameter is the penetration depth 1/μ in mm, in which the shift is linear (1/μ = 1 gives ∂(2θ)/∂(1/μ)).
 */
export function transparencyShiftAtTheta(theta: number, penetrationMm: number, radius: number): number {
  return (-Math.sin(2 * theta) * penetrationMm * DEG) / (2 * radius);
}

/** The transparency shift (degrees 2θ) of a line at 2θ degrees; see transparencyShiftAtTheta. */
export function transparencyShift(twoTheta: number, penetrationMm: number, radius: number): number {
  return transparencyShiftAtTheta((twoTheta * RAD) / 2, penetrationMm, radius);
}

/** 1/μ in mm from a linear attenuation coefficient μ in cm⁻¹. */
export function penetrationMmOf(linearAttenuationPerCm: number): number {
  return 10 / linearAttenuationPerCm;
}

/**
 * A refinement's instrumental correction: the zero shift (degrees 2θ), the specimen displacement (mm) and
 * the transparency's penetration depth 1/μ (mm); a part that was not refined is 0.
 */
export interface RefinedCorrection {
  zeroShift: number;
  displacement: number;
  /** 1/μ in mm, refined or fixed from a given μ; absent or 0 without a transparency correction. */
  penetrationMm?: number;
  radiusMm: number;
}

/**
 * Where a line of Bragg angle 2θ (degrees) is seen under the refined correction, as an offset in
 * degrees 2θ: observed = 2θ_Bragg + offset. The parts add.
 */
export function refinedLineShift(twoThetaBragg: number, correction: RefinedCorrection): number {
  let shift = correction.zeroShift;
  if (correction.displacement !== 0) shift += displacementShift(twoThetaBragg, correction.displacement, correction.radiusMm);
  if (correction.penetrationMm) shift += transparencyShift(twoThetaBragg, correction.penetrationMm, correction.radiusMm);
  return shift;
}

/**
 * The Bragg angle (degrees 2θ) of a line observed at `twoTheta` under a correction: the inverse of
 * refinedLineShift, by a few fixed-point steps (the shift changes by far less than itself across it).
 */
export function braggAngleOf(twoTheta: number, correction: RefinedCorrection): number {
  let bragg = twoTheta;
  for (let i = 0; i < 3; i++) bragg = twoTheta - refinedLineShift(bragg, correction);
  return bragg;
}
