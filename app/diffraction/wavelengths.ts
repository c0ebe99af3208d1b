// Characteristic X-ray lines of the laboratory anodes, radiation descriptions and K absorption edges.

/** Anode elements a laboratory X-ray tube is commonly made of. */
export type Anode = "Cr" | "Fe" | "Co" | "Cu" | "Mo" | "Ag";

export const ANODES: readonly Anode[] = ["Cr", "Fe", "Co", "Cu", "Mo", "Ag"];

/**
 * Kα1, Kα2 and Kβ wavelengths in Å. λ = 12398.41857 eV·Å / E (International Tables for
 * Crystallography Vol. C §4.2.2.14), E from the NIST X-ray Transition Energies Database
 * (Deslattes et al. 2003, Rev. Mod. Phys. 75, 35); values as tabulated in docs/reference-values.md#x-ray-wavelengths.
 */
export const ANODE_LINES: Record<Anode, { kAlpha1: number; kAlpha2: number; kBeta: number }> = {
  Cr: { kAlpha1: 2.289726, kAlpha2: 2.293651, kBeta: 2.084881 },
  Fe: { kAlpha1: 1.936041, kAlpha2: 1.939973, kBeta: 1.756604 },
  Co: { kAlpha1: 1.788996, kAlpha2: 1.792835, kBeta: 1.620826 },
  Cu: { kAlpha1: 1.540593, kAlpha2: 1.544427, kBeta: 1.392234 },
  Mo: { kAlpha1: 0.709317, kAlpha2: 0.713607, kBeta: 0.632303 },
  Ag: { kAlpha1: 0.559422, kAlpha2: 0.563813, kBeta: 0.497082 },
};

/**
 * How the tube spectrum is cleaned before it reaches the sample:
 * `k_alpha_doublet` — Kα1 + Kα2 (e.g. a secondary monochromator or energy-discriminating detector);
 * `k_alpha1_only` — a primary monochromator passes Kα1 alone;
 * `k_beta_filtered` — a metal foil removes Kβ, the Kα doublet remains.
 */
export type Monochromation = "k_alpha_doublet" | "k_alpha1_only" | "k_beta_filtered";

/** The radiation of an instrument: a laboratory anode, or one wavelength (synchrotron, neutron). */
export type Radiation = { kind: "anode"; anode: Anode; monochromation: Monochromation } | { kind: "custom"; wavelength: number };

/** Kα2/Kα1 intensity ratio: 0.5 is the usual convention (common practice; xraylib's rates give 0.51–0.53). */
export const KALPHA2_RATIO = 0.5;

/** hc in eV·Å (International Tables Vol. C §4.2.2.14). */
export const X_RAY_EV_ANGSTROM = 12398.41857;

/** One emission line reaching the sample: wavelength in Å and intensity relative to the main line. */
export interface RadiationLine {
  wavelength: number;
  weight: number;
}

/** The lines that diffract: Kα1 first with weight 1, then Kα2 with weight `kAlpha2Ratio` if present. */
export function radiationLines(r: Radiation, kAlpha2Ratio = KALPHA2_RATIO): RadiationLine[] {
  if (r.kind === "custom") return [{ wavelength: r.wavelength, weight: 1 }];
  const lines = ANODE_LINES[r.anode];
  if (r.monochromation === "k_alpha1_only") return [{ wavelength: lines.kAlpha1, weight: 1 }];
  return [
    { wavelength: lines.kAlpha1, weight: 1 },
    { wavelength: lines.kAlpha2, weight: kAlpha2Ratio },
  ];
}

/** The wavelength (Å) that d-spacings are computed with: Kα1, or the custom wavelength. */
export function primaryWavelength(r: Radiation): number {
  return r.kind === "custom" ? r.wavelength : ANODE_LINES[r.anode].kAlpha1;
}

/** Photon energy in keV of a wavelength in Å. */
export function photonEnergyKeV(wavelength: number): number {
  return X_RAY_EV_ANGSTROM / wavelength / 1000;
}

/**
 * K absorption edge energies in keV (lib: xraylib 4.0.0 EdgeEnergy(Z, K_SHELL)); docs/reference-values.md#k-absorption-edges lists
 * V, Cr, Mn, Fe, Co, Ni, Zr, Rh, Pd. An element whose edge lies just below a source's Kα energy
 * fluoresces under it (iron under copper radiation is the classic case).
 */
export const K_EDGE_KEV: Readonly<Record<string, number>> = {
  K: 3.6074,
  Ca: 4.0381,
  Sc: 4.4928,
  Ti: 4.9664,
  V: 5.4651,
  Cr: 5.9892,
  Mn: 6.539,
  Fe: 7.112,
  Co: 7.7089,
  Ni: 8.3328,
  Cu: 8.9789,
  Zn: 9.6586,
  Ga: 10.3671,
  Ge: 11.1031,
  As: 11.8667,
  Se: 12.6578,
  Br: 13.4737,
  Sr: 16.1046,
  Y: 17.0384,
  Zr: 17.9976,
  Nb: 18.9856,
  Mo: 19.9995,
  Ru: 22.1172,
  Rh: 23.2199,
  Pd: 24.3503,
  Ag: 25.514,
  Cd: 26.7112,
  In: 27.9399,
  Sn: 29.2001,
  Sb: 30.4912,
  Te: 31.8138,
};
