// Systematic shifts of observed line positions from their Bragg angles: the zero shift and the specimen displacement.

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

/** A refinement's instrumental correction: one of zeroShift (degrees 2θ) and displacement (mm) is refined, the other is 0. */
export interface RefinedCorrection {
  zeroShift: number;
  displacement: number;
  radiusMm: number;
}

/**
 * Where a line of Bragg angle 2θ (degrees) is seen under the refined correction, as an offset in
 * degrees 2θ: observed = 2θ_Bragg + offset.
 */
export function refinedLineShift(twoThetaBragg: number, correction: RefinedCorrection): number {
  return correction.displacement !== 0 ? displacementShift(twoThetaBragg, correction.displacement, correction.radiusMm) : correction.zeroShift;
}
