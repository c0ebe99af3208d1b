// Simulated powder scans — structure factors, Lorentz–polarisation, Caglioti widths, pseudo-Voigt
// profiles, the Kα2 line, stray tube lines (Kβ, tungsten L), instrument offsets (zero shift, specimen
// displacement, transparency), background and seeded counting noise — for demo data and tests.

import { type Cell, type Centering, type CrystalSystem, twoThetaFromD } from "./cell";
import { formFactor } from "./form-factors";
import { displacementShift, transparencyShift } from "./line-shifts";
import { allowedReflections } from "./reflections";
import type { AtomSite, CrystalStructure } from "./structures";
import { type Radiation, radiationLines } from "./wavelengths";

const RAD = Math.PI / 180;

/** Caglioti widths FWHM² = U tan²θ + V tanθ + W (degrees² 2θ) and the Lorentzian fraction η of the pseudo-Voigt. */
export interface PeakShape {
  U: number;
  V: number;
  W: number;
  eta: number;
}

/** An amorphous hump in the background: Gaussian in 2θ. */
export interface BackgroundHump {
  /** Centre, degrees 2θ. */
  center: number;
  /** Full width at half maximum, degrees 2θ. */
  fwhm: number;
  /** Counts at the centre. */
  height: number;
}

export interface Background {
  /** Counts at the start of the scan. */
  constant: number;
  /** Counts per degree 2θ from the start of the scan. */
  slope?: number;
  hump?: BackgroundHump;
}

export interface SimulationOptions {
  /** Atoms give structure factors; without a structure, `cell`, `system` and `centering` give equal |F|². */
  structure?: CrystalStructure;
  /** Overrides the structure's cell (same fractional coordinates), or the bare cell when there is no structure. */
  cell?: Cell;
  system?: CrystalSystem;
  centering?: Centering;
  radiation: Radiation;
  /** Kα2/Kα1 intensity ratio (default 0.5, common practice). */
  kAlpha2Ratio?: number;
  /** Scan range and step, degrees 2θ. */
  twoThetaMin: number;
  twoThetaMax: number;
  step: number;
  /** Isotropic B (Å²) for atoms that state none (default 0.5 Å², a typical room-temperature value; common practice). */
  bIso?: number;
  /** B (Å²) of the exp(−2B s²) fall-off that stands in for form and thermal factors without atoms (default 2 Å²). */
  fallOffB?: number;
  peakShape?: PeakShape;
  /**
   * Crystallite size (nm) adding Scherrer broadening β = Kλ/(τ cosθ), K = 0.9, to the Caglioti width:
   * in quadrature when η < 0.5 (Gaussian-like), linearly otherwise (Lorentzian-like) — the usual approximations.
   */
  crystalliteSizeNm?: number;
  /** Monochromator 2θ (degrees) for the polarisation factor; 0 or absent = no monochromator. */
  monochromatorTwoTheta?: number;
  /** Zero shift, degrees 2θ: every peak appears at 2θ_Bragg + zeroShift. */
  zeroShift?: number;
  /** Specimen displacement s (mm, positive = above the focusing circle) on a goniometer of radius R (mm, default 240). */
  specimenDisplacement?: number;
  goniometerRadius?: number;
  /** Specimen transparency as the penetration depth 1/μ, mm: lines move by −sin 2θ/(2μR) radians. */
  penetrationMm?: number;
  /**
   * Further lines of the tube that diffract from every reflection (e.g. Kβ leaking through a filter, tungsten L
   * lines of an aged tube): wavelength in Å and intensity relative to Kα1 (e.g. 0.003).
   */
  strayLines?: { wavelength: number; weight: number }[];
  background?: Background;
  /** Counts at the top of the strongest Kα1 line (default 10 000). */
  scale?: number;
  /** Poisson counting noise from a seeded generator; absent = noiseless. */
  noise?: { seed: number };
  /** Half-width of the window a peak is evaluated in, in FWHM (default 15). */
  peakWindow?: number;
}

/** One reflection of a simulated scan: `twoTheta` where Kα1 appears in the scan, `intensity` relative to 100. */
export interface SimulatedReflection {
  h: number;
  k: number;
  l: number;
  d: number;
  twoTheta: number;
  /** The Bragg angle of Kα1 before zero shift and displacement. */
  twoThetaBragg: number;
  intensity: number;
  multiplicity: number;
  /** FWHM of the line, degrees 2θ. */
  fwhm: number;
}

export interface SimulatedScan {
  twoTheta: Float64Array;
  intensity: Float64Array;
  /** √counts (at least 1) when counting noise was applied. */
  esd?: Float64Array;
  reflections: SimulatedReflection[];
}

/** Typical laboratory Bragg–Brentano widths: about 0.04° at 30° and 0.1° at 120° 2θ (common practice). */
export const DEFAULT_PEAK_SHAPE: PeakShape = { U: 0.004, V: -0.002, W: 0.002, eta: 0.5 };

// ---------------------------------------------------------------------------------------------
// Seeded randomness.

/** mulberry32: a small 32-bit PRNG, uniform in [0, 1); deterministic for a seed. */
export function mulberry32(seed: number): () => number {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

/** A Poisson sampler on a uniform generator: exact (Knuth) for small means, normal approximation above 50. */
export function poissonSampler(uniform: () => number): (mean: number) => number {
  let spare = Number.NaN;
  const gaussian = () => {
    if (!Number.isNaN(spare)) {
      const g = spare;
      spare = Number.NaN;
      return g;
    }
    // Box–Muller; 1 − u keeps the logarithm finite.
    const r = Math.sqrt(-2 * Math.log(1 - uniform()));
    const phi = 2 * Math.PI * uniform();
    spare = r * Math.sin(phi);
    return r * Math.cos(phi);
  };
  return (mean: number) => {
    if (!(mean > 0)) return 0;
    if (mean > 50) return Math.max(0, Math.round(mean + Math.sqrt(mean) * gaussian()));
    const limit = Math.exp(-mean);
    let k = 0;
    let p = uniform();
    while (p > limit) {
      k++;
      p *= uniform();
    }
    return k;
  };
}

// ---------------------------------------------------------------------------------------------
// Intensities.

/** Lorentz–polarisation factor (1 + cos²2θ_m cos²2θ)/(sin²θ cosθ) for Bragg–Brentano; 2θ_m = 0 without a monochromator. */
export function lorentzPolarisation(twoTheta: number, monochromatorTwoTheta = 0): number {
  const theta = (twoTheta / 2) * RAD;
  const c2m = Math.cos(monochromatorTwoTheta * RAD) ** 2;
  const c2 = Math.cos(2 * theta) ** 2;
  return (1 + c2m * c2) / (Math.sin(theta) ** 2 * Math.cos(theta));
}

/** FWHM (degrees 2θ) from the Caglioti formula; never below 1e-4° so a profile stays finite. */
export function cagliotiFwhm(shape: PeakShape, twoTheta: number): number {
  const t = Math.tan((twoTheta / 2) * RAD);
  return Math.sqrt(Math.max(shape.U * t * t + shape.V * t + shape.W, 1e-8));
}

/** Scherrer broadening (degrees 2θ) of crystallites of size τ (nm): β = Kλ/(τ cosθ), K = 0.9 (Scherrer 1918). */
export function scherrerBroadening(twoTheta: number, wavelength: number, sizeNm: number): number {
  return (0.9 * wavelength) / (sizeNm * 10 * Math.cos((twoTheta / 2) * RAD)) / RAD;
}

// Re-exported so that callers and tests take the shift from the simulator with its other line-position pieces.
export { displacementShift };

function isotropicB(site: AtomSite, defaultB: number): number {
  if (site.bIso !== undefined) return site.bIso;
  if (site.uIso !== undefined) return 8 * Math.PI * Math.PI * site.uIso;
  return defaultB;
}

/**
 * |F(hkl)|² summed over a set of planes, from every unit-cell site with Cromer–Mann f0 and
 * exp(−B s²) (s = 1/2d); anomalous dispersion is left out.
 */
export function structureFactorSquaredSum(
  atoms: readonly AtomSite[],
  planes: readonly { h: number; k: number; l: number }[],
  d: number,
  defaultB: number,
): number {
  const s = 1 / (2 * d);
  const s2 = s * s;
  // f0 and the thermal factor depend only on the element and B at this s.
  const weights = atoms.map((a) => (a.occupancy ?? 1) * formFactor(a.element, s) * Math.exp(-isotropicB(a, defaultB) * s2));
  let total = 0;
  for (const { h, k, l } of planes) {
    let re = 0;
    let im = 0;
    for (let j = 0; j < atoms.length; j++) {
      const a = atoms[j];
      const phase = 2 * Math.PI * (h * a.x + k * a.y + l * a.z);
      re += weights[j] * Math.cos(phase);
      im += weights[j] * Math.sin(phase);
    }
    total += re * re + im * im;
  }
  return total;
}

// Unit-area pseudo-Voigt pieces with FWHM Γ: G = (2/Γ)√(ln2/π) exp(−4 ln2 x²/Γ²), L = (2/πΓ)/(1 + 4x²/Γ²).
const GAUSS_NORM = 2 * Math.sqrt(Math.LN2 / Math.PI);
const FOUR_LN2 = 4 * Math.LN2;

function pseudoVoigtPeakHeight(fwhm: number, eta: number): number {
  return (eta * 2) / (Math.PI * fwhm) + ((1 - eta) * GAUSS_NORM) / fwhm;
}

interface Line {
  position: number;
  area: number;
  fwhm: number;
}

function addPseudoVoigt(x: Float64Array, y: Float64Array, line: Line, eta: number, window: number, x0: number, step: number) {
  const { position, area, fwhm } = line;
  const half = window * fwhm;
  const first = Math.max(0, Math.ceil((position - half - x0) / step));
  const last = Math.min(x.length - 1, Math.floor((position + half - x0) / step));
  if (last < first) return;
  const gAmp = (area * (1 - eta) * GAUSS_NORM) / fwhm;
  const lAmp = (area * eta * 2) / (Math.PI * fwhm);
  const inv = 1 / (fwhm * fwhm);
  // The Lorentzian's value at the window edge is subtracted so the profile meets zero without a step.
  const lEdge = lAmp / (1 + 4 * window * window);
  for (let i = first; i <= last; i++) {
    const dx = x[i] - position;
    const u = dx * dx * inv;
    y[i] += gAmp * Math.exp(-FOUR_LN2 * u) + lAmp / (1 + 4 * u) - lEdge;
  }
}

function reflectionSource(options: SimulationOptions): { cell: Cell; system: CrystalSystem; centering: Centering } {
  const { structure } = options;
  const cell = options.cell ?? structure?.cell;
  const system = options.system ?? structure?.system;
  const centering = options.centering ?? structure?.centering;
  if (!cell || !system || !centering) throw new TypeError("simulatePattern needs a structure, or a cell with its system and centering.");
  return { cell, system, centering };
}

/** A simulated powder scan with its reflection list; deterministic for a given noise seed. */
export function simulatePattern(options: SimulationOptions): SimulatedScan {
  const { twoThetaMin, twoThetaMax, step, radiation, structure } = options;
  if (!(step > 0) || !(twoThetaMax > twoThetaMin)) throw new RangeError("The scan needs twoThetaMax > twoThetaMin and a positive step.");
  const { cell, system, centering } = reflectionSource(options);
  const shape = options.peakShape ?? DEFAULT_PEAK_SHAPE;
  const window = options.peakWindow ?? 15;
  const zero = options.zeroShift ?? 0;
  const displacement = options.specimenDisplacement ?? 0;
  const radius = options.goniometerRadius ?? 240;
  const scale = options.scale ?? 10_000;
  const defaultB = options.bIso ?? 0.5;
  const fallOffB = options.fallOffB ?? 2;
  const lines = radiationLines(radiation, options.kAlpha2Ratio);
  const penetration = options.penetrationMm ?? 0;
  const observed = (bragg: number) => bragg + zero + displacementShift(bragg, displacement, radius) + transparencyShift(bragg, penetration, radius);
  const size = options.crystalliteSizeNm;
  const fwhmAt = (bragg: number, wavelength: number) => {
    const instrument = cagliotiFwhm(shape, bragg);
    if (!(size && size > 0)) return instrument;
    const sample = scherrerBroadening(bragg, wavelength, size);
    return shape.eta < 0.5 ? Math.hypot(instrument, sample) : instrument + sample;
  };

  const n = Math.floor((twoThetaMax - twoThetaMin) / step + 1e-9) + 1;
  const x = new Float64Array(n);
  for (let i = 0; i < n; i++) x[i] = twoThetaMin + i * step;
  const y = new Float64Array(n);

  // Reflections whose tails reach into the scan: a margin beyond the last angle for the widest line.
  const longest = Math.max(...lines.map((l) => l.wavelength));
  const edge = Math.min(twoThetaMax + 2 + Math.abs(zero) + window * fwhmAt(Math.min(twoThetaMax, 179), longest), 179.9);
  // A stray line of shorter wavelength shows reflections whose Kα lines lie beyond the scan.
  const dMin = Math.min(...[longest, ...(options.strayLines ?? []).map((l) => l.wavelength)].map((w) => w / (2 * Math.sin((edge / 2) * RAD))));
  const planes = allowedReflections(cell, system, centering, { dMin, equivalents: Boolean(structure) });

  const kAlpha1 = lines[0].wavelength;
  const reflections: SimulatedReflection[] = [];
  const strengths: number[] = [];
  for (const r of planes) {
    const bragg = twoThetaFromD(r.d, kAlpha1);
    const s = 1 / (2 * r.d);
    // Σ|F|² over the equivalent planes is multiplicity·|F|², exact even when the structure's true
    // Laue class is lower than the system's.
    const f2sum = structure
      ? structureFactorSquaredSum(structure.atoms, r.equivalents ?? [r], r.d, defaultB)
      : r.multiplicity * Math.exp(-2 * fallOffB * s * s);
    const strength = Number.isFinite(bragg) ? f2sum * lorentzPolarisation(bragg, options.monochromatorTwoTheta) : 0;
    strengths.push(strength);
    reflections.push({
      h: r.h,
      k: r.k,
      l: r.l,
      d: r.d,
      twoTheta: observed(bragg),
      twoThetaBragg: bragg,
      intensity: strength,
      multiplicity: r.multiplicity,
      fwhm: fwhmAt(bragg, kAlpha1),
    });
  }

  // Scale: the strongest Kα1 line in the scan range peaks at `scale` counts.
  let strongest = -1;
  reflections.forEach((r, i) => {
    if (r.twoTheta >= twoThetaMin && r.twoTheta <= twoThetaMax && (strongest < 0 || strengths[i] > strengths[strongest])) strongest = i;
  });
  const areaPerStrength =
    strongest >= 0 && strengths[strongest] > 0 ? scale / pseudoVoigtPeakHeight(reflections[strongest].fwhm, shape.eta) / strengths[strongest] : 0;
  const diffracting = [...lines, ...(options.strayLines ?? [])];
  for (let i = 0; i < planes.length; i++) {
    if (!(strengths[i] > 0)) continue;
    for (const line of diffracting) {
      const bragg = twoThetaFromD(planes[i].d, line.wavelength);
      if (!Number.isFinite(bragg)) continue;
      addPseudoVoigt(
        x,
        y,
        { position: observed(bragg), area: strengths[i] * areaPerStrength * line.weight, fwhm: fwhmAt(bragg, line.wavelength) },
        shape.eta,
        window,
        twoThetaMin,
        step,
      );
    }
  }

  const bg = options.background;
  if (bg) {
    const slope = bg.slope ?? 0;
    const hump = bg.hump;
    const humpWidth = hump ? FOUR_LN2 / (hump.fwhm * hump.fwhm) : 0;
    for (let i = 0; i < n; i++) {
      let b = bg.constant + slope * (x[i] - twoThetaMin);
      if (hump) b += hump.height * Math.exp(-humpWidth * (x[i] - hump.center) ** 2);
      y[i] += Math.max(b, 0);
    }
  }

  // Relative intensities (strongest = 100) of the lines inside the scan; negligible ones (e.g. Si 222,
  // zero by the special position) are left out of the list.
  const top = strongest >= 0 ? strengths[strongest] : 0;
  const listed = reflections.filter((r, i) => r.twoTheta >= twoThetaMin && r.twoTheta <= twoThetaMax && top > 0 && strengths[i] > top * 1e-9);
  for (const r of listed) r.intensity = (100 * r.intensity) / top;

  if (!options.noise) return { twoTheta: x, intensity: y, reflections: listed };
  const poisson = poissonSampler(mulberry32(options.noise.seed));
  const esd = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    y[i] = poisson(y[i]);
    esd[i] = Math.sqrt(Math.max(y[i], 1));
  }
  return { twoTheta: x, intensity: y, esd, reflections: listed };
}

// ---------------------------------------------------------------------------------------------
// Writing scans.

function decimalsOfStep(twoTheta: Float64Array): number {
  const step = twoTheta.length > 1 ? Math.abs(twoTheta[1] - twoTheta[0]) : 0.01;
  return Math.min(6, Math.max(2, Math.ceil(-Math.log10(step)) + 2));
}

function formatCounts(value: number): string {
  return Number.isInteger(value) ? String(value) : value.toFixed(3);
}

/** Two-column text (2θ in degrees, intensity), one point a line, with optional `#` comment lines first. */
export function formatScanAsXy(sim: Pick<SimulatedScan, "twoTheta" | "intensity">, comment?: string): string {
  const decimals = decimalsOfStep(sim.twoTheta);
  const out: string[] = comment ? comment.split("\n").map((line) => `# ${line}`) : [];
  for (let i = 0; i < sim.twoTheta.length; i++) out.push(`${sim.twoTheta[i].toFixed(decimals)} ${formatCounts(sim.intensity[i])}`);
  return `${out.join("\n")}\n`;
}

/**
 * A pdCIF powder block: wavelengths (one, or Kα1 and Kα2 with weights), the 2θ range as
 * _pd_meas_2theta_range_min/_max/_inc and a _pd_meas_counts_total loop (pdCIF dictionary data names).
 */
export function formatScanAsPdCif(sim: Pick<SimulatedScan, "twoTheta" | "intensity">, radiation: Radiation, blockName = "simulated_scan"): string {
  const n = sim.twoTheta.length;
  const decimals = decimalsOfStep(sim.twoTheta);
  const inc = n > 1 ? (sim.twoTheta[n - 1] - sim.twoTheta[0]) / (n - 1) : 0;
  const lines = radiationLines(radiation);
  const out = [`data_${blockName.replace(/\s+/g, "_")}`, ""];
  if (radiation.kind === "anode") out.push(`_diffrn_radiation_type 'X-ray, ${radiation.anode} K-alpha'`);
  if (lines.length === 1) {
    out.push(`_diffrn_radiation_wavelength ${lines[0].wavelength}`);
  } else {
    out.push("loop_", "_diffrn_radiation_wavelength_id", "_diffrn_radiation_wavelength", "_diffrn_radiation_wavelength_wt");
    lines.forEach((l, i) => out.push(`${i + 1} ${l.wavelength} ${l.weight}`));
  }
  out.push(
    "",
    `_pd_meas_number_of_points ${n}`,
    `_pd_meas_2theta_range_min ${sim.twoTheta[0].toFixed(decimals)}`,
    `_pd_meas_2theta_range_max ${sim.twoTheta[n - 1].toFixed(decimals)}`,
    `_pd_meas_2theta_range_inc ${inc.toFixed(decimals)}`,
    "",
    "loop_",
    // Counts only when every value is a whole number of counts (a noisy scan); else a plain intensity.
    sim.intensity.every(Number.isInteger) ? "_pd_meas_counts_total" : "_pd_meas_intensity_total",
  );
  for (let i = 0; i < n; i++) out.push(formatCounts(sim.intensity[i]));
  return `${out.join("\n")}\n`;
}
