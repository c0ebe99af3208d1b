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

/** One of a tube's lines that are not the diffracting Kα lines but may leak through to the sample. */
export interface StrayLine {
  /** Stable id, e.g. "kbeta" or "W_La1". */
  id: string;
  /** How people read it, e.g. "Cu Kβ" or "W Lα1". */
  label: string;
  origin: "kbeta" | "tungsten_l";
  wavelength: number;
}

/**
 * Tungsten L lines that an aged tube emits once filament tungsten has deposited on the anode. Energies in eV
 * are the NIST X-ray Transition Energies Database's measured ("direct") values (Deslattes et al. 2003, Rev.
 * Mod. Phys. 75, 35): Lα1 = L3M5, Lα2 = L3M4, Lβ1 = L2M4, Lβ2 = L3N5, Lγ1 = L2N4; λ = 12398.41857 eV·Å / E
 * (docs/reference-values.md#lines-that-are-not-the-samples).
 */
export const TUNGSTEN_L_LINES: readonly (StrayLine & { transition: string; energyEv: number })[] = [
  { id: "W_La1", label: "W Lα1", origin: "tungsten_l", transition: "L3M5", energyEv: 8398.242, wavelength: 1.476311 },
  { id: "W_La2", label: "W Lα2", origin: "tungsten_l", transition: "L3M4", energyEv: 8335.34, wavelength: 1.487452 },
  { id: "W_Lb1", label: "W Lβ1", origin: "tungsten_l", transition: "L2M4", energyEv: 9672.575, wavelength: 1.281812 },
  { id: "W_Lb2", label: "W Lβ2", origin: "tungsten_l", transition: "L3N5", energyEv: 9964.133, wavelength: 1.244305 },
  { id: "W_Lg1", label: "W Lγ1", origin: "tungsten_l", transition: "L2N4", energyEv: 11286.0, wavelength: 1.098566 },
];

/**
 * How strong a stray line may be, as its integrated intensity over that of the same reflection's Kα1 line,
 * per monochromation (common practice, docs/reference-values.md#lines-that-are-not-the-samples): `limit`
 * is the most a peak may have and still be taken for the stray line; at or below `faint` it is taken for
 * one even where the sample's cell also has a reflection (the leak-through usually seen).
 * - A Kβ filter leaves Kβ at a few tenths of a percent of Kα, up to 1–2 % with a thin or aged foil.
 * - A secondary monochromator or an energy-discriminating detector ("Kα1 + Kα2") passes less Kβ; a graphite
 *   monochromator's width still passes part of the tungsten L lines.
 * - A primary Kα1 monochromator passes neither.
 */
export const STRAY_LINE_LIMITS: Record<Monochromation, { kBeta: number; tungstenL: number; faint: number }> = {
  k_beta_filtered: { kBeta: 0.02, tungstenL: 0.02, faint: 0.005 },
  k_alpha_doublet: { kBeta: 0.01, tungstenL: 0.02, faint: 0.005 },
  k_alpha1_only: { kBeta: 0, tungstenL: 0, faint: 0 },
};

/** The stray lines that may reach the sample with this radiation, each with its intensity limit; none for one wavelength. */
export function strayLines(r: Radiation): (StrayLine & { limit: number; faint: number })[] {
  if (r.kind === "custom") return [];
  const limits = STRAY_LINE_LIMITS[r.monochromation];
  const out: (StrayLine & { limit: number; faint: number })[] = [];
  if (limits.kBeta > 0) {
    out.push({ id: "kbeta", label: `${r.anode} Kβ`, origin: "kbeta", wavelength: ANODE_LINES[r.anode].kBeta, limit: limits.kBeta, faint: limits.faint });
  }
  if (limits.tungstenL > 0) {
    for (const line of TUNGSTEN_L_LINES) {
      out.push({ id: line.id, label: line.label, origin: line.origin, wavelength: line.wavelength, limit: limits.tungstenL, faint: limits.faint });
    }
  }
  return out;
}

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
