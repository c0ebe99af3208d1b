// Sample holders and the lines they may add to a scan: the holder's own reflections, labelled rather than
// counted as the sample's unindexed peaks (docs/reference-values.md#sample-holders).

import { twoThetaFromD } from "./cell";
import { allowedReflections } from "./reflections";
import { lorentzPolarisation, structureFactorSquaredSum } from "./simulate";
import { type CrystalStructure, SILICON } from "./structures";

/** The holder a sample was measured on, as an instrument or scan field offers it. */
export type SampleHolder = "none" | "aluminium" | "silicon_zero_background" | "quartz_zero_background" | "glass" | "pmma" | "steel";

/** Every holder with the label people choose it by; the app offers this list. */
export const SAMPLE_HOLDERS: readonly { id: SampleHolder; label: string }[] = [
  { id: "none", label: "Not stated" },
  { id: "aluminium", label: "Aluminium" },
  { id: "silicon_zero_background", label: "Silicon zero-background plate" },
  { id: "quartz_zero_background", label: "Quartz zero-background plate" },
  { id: "glass", label: "Glass" },
  { id: "pmma", label: "PMMA (acrylic)" },
  { id: "steel", label: "Stainless steel" },
];

export const SAMPLE_HOLDER_IDS: readonly SampleHolder[] = SAMPLE_HOLDERS.map((h) => h.id);

/**
 * Aluminium, F m -3 m, Al on 4a; a = 4.0495 Å at room temperature (Swanson & Tatge 1953, NBS Circular 539
 * vol. I — memory; docs/reference-values.md#sample-holders). Sites expanded with gemmi (lib).
 */
export const ALUMINIUM: CrystalStructure = {
  name: "Aluminium",
  formula: "Al",
  spaceGroup: "F m -3 m",
  system: "cubic",
  centering: "F",
  cell: { a: 4.0495, b: 4.0495, c: 4.0495, alpha: 90, beta: 90, gamma: 90 },
  sites: [{ element: "Al", x: 0, y: 0, z: 0 }],
  atoms: [
    { element: "Al", x: 0, y: 0, z: 0 },
    { element: "Al", x: 0, y: 0.5, z: 0.5 },
    { element: "Al", x: 0.5, y: 0, z: 0.5 },
    { element: "Al", x: 0.5, y: 0.5, z: 0 },
  ],
};

/**
 * α-quartz, P 32 2 1 on hexagonal axes: a = 4.9134, c = 5.4052 Å (ICDD PDF 46-1045 — memory); Si on 3a
 * (x = 0.4697, 0, 2/3), O on 6c (0.4135, 0.2669, 0.7858): Levien, Prewitt & Weidner 1980 (memory), moved to
 * the International Tables origin; Si–O 1.604 and 1.613 Å and I(100)/I(101) ≈ 0.2 confirm the setting (lib:
 * gemmi expansion, pymatgen pattern; docs/reference-values.md#sample-holders).
 */
export const QUARTZ: CrystalStructure = {
  name: "Quartz",
  formula: "SiO2",
  spaceGroup: "P 32 2 1",
  system: "trigonal",
  centering: "P",
  cell: { a: 4.9134, b: 4.9134, c: 5.4052, alpha: 90, beta: 90, gamma: 120 },
  sites: [
    { element: "Si", x: 0.4697, y: 0, z: 0.666667 },
    { element: "O", x: 0.4135, y: 0.2669, z: 0.785767 },
  ],
  atoms: [
    { element: "Si", x: 0.4697, y: 0, z: 0.666667 },
    { element: "Si", x: 0, y: 0.4697, z: 0.333333 },
    { element: "Si", x: 0.5303, y: 0.5303, z: 0 },
    { element: "O", x: 0.4135, y: 0.2669, z: 0.785767 },
    { element: "O", x: 0.7331, y: 0.1466, z: 0.452434 },
    { element: "O", x: 0.8534, y: 0.5865, z: 0.1191 },
    { element: "O", x: 0.2669, y: 0.4135, z: 0.214233 },
    { element: "O", x: 0.1466, y: 0.7331, z: 0.547566 },
    { element: "O", x: 0.5865, y: 0.8534, z: 0.8809 },
  ],
};

/**
 * Austenitic stainless steel (AISI 304/316: face-centred cubic iron with Cr and Ni), F m -3 m, a = 3.59 Å;
 * the composition moves a by about ±0.01 Å (common practice; docs/reference-values.md#sample-holders).
 */
export const AUSTENITIC_STEEL: CrystalStructure = {
  name: "Austenitic stainless steel",
  formula: "Fe",
  spaceGroup: "F m -3 m",
  system: "cubic",
  centering: "F",
  cell: { a: 3.59, b: 3.59, c: 3.59, alpha: 90, beta: 90, gamma: 90 },
  sites: [{ element: "Fe", x: 0, y: 0, z: 0 }],
  atoms: [
    { element: "Fe", x: 0, y: 0, z: 0 },
    { element: "Fe", x: 0, y: 0.5, z: 0.5 },
    { element: "Fe", x: 0.5, y: 0, z: 0.5 },
    { element: "Fe", x: 0.5, y: 0.5, z: 0 },
  ],
};

interface HolderPhase {
  /** How the phase is named beside a line, e.g. "Al". */
  short: string;
  structure: CrystalStructure;
  /** Relative uncertainty of the cell lengths (alloys, composition, temperature). */
  cellTolerance: number;
  /** A powder shows its lines in proportion; a single-crystal plate may show any allowed reflection it is tilted into. */
  singleCrystal: boolean;
}

// Amorphous holders (glass, PMMA) add a broad hump to the background, no lines.
const HOLDER_PHASES: Record<SampleHolder, HolderPhase | null> = {
  none: null,
  glass: null,
  pmma: null,
  aluminium: { short: "Al", structure: ALUMINIUM, cellTolerance: 0.001, singleCrystal: false },
  silicon_zero_background: { short: "Si", structure: SILICON, cellTolerance: 0.0002, singleCrystal: true },
  quartz_zero_background: { short: "quartz", structure: QUARTZ, cellTolerance: 0.0005, singleCrystal: true },
  steel: { short: "steel", structure: AUSTENITIC_STEEL, cellTolerance: 0.004, singleCrystal: false },
};

/** One reflection of a holder's phase. */
export interface HolderLine {
  phase: string;
  hkl: [number, number, number];
  d: number;
  /** Kα1 Bragg angle, degrees 2θ. */
  twoTheta: number;
  /** Powder intensity relative to the phase's strongest line in the range, 0–100. */
  relativeIntensity: number;
  /** Half-width of the window for the line's position from the phase's cell tolerance, degrees 2θ. */
  positionTolerance: number;
}

// Powder lines weaker than this share of the phase's strongest are left out: a holder strong enough to show
// them shows its strong lines first (own choice).
const WEAKEST_POWDER_LINE = 1;

/** The reflections of a holder up to `twoThetaMax` at the given wavelength; none for amorphous holders. */
export function holderLines(holder: SampleHolder, wavelength: number, twoThetaMax: number): HolderLine[] {
  const phase = HOLDER_PHASES[holder];
  if (!phase) return [];
  const { structure } = phase;
  const thetaMax = (Math.min(twoThetaMax + 2, 179) * Math.PI) / 360;
  const dMin = wavelength / (2 * Math.sin(thetaMax));
  const lines = allowedReflections(structure.cell, structure.system, structure.centering, { dMin, equivalents: true })
    .map((r) => {
      const twoTheta = twoThetaFromD(r.d, wavelength);
      const f2 = structureFactorSquaredSum(structure.atoms, r.equivalents ?? [r], r.d, 0.5);
      const tanTheta = Math.tan((twoTheta * Math.PI) / 360);
      return {
        phase: phase.short,
        hkl: [r.h, r.k, r.l] as [number, number, number],
        d: r.d,
        twoTheta,
        relativeIntensity: f2 * lorentzPolarisation(twoTheta),
        positionTolerance: ((2 * tanTheta * phase.cellTolerance * 180) / Math.PI) as number,
        f2,
      };
    })
    .filter((l) => Number.isFinite(l.twoTheta));
  const top = Math.max(0, ...lines.map((l) => l.relativeIntensity));
  const f2Top = Math.max(0, ...lines.map((l) => l.f2));
  return lines
    .map(({ f2, ...l }) => ({ ...l, relativeIntensity: top > 0 ? (100 * l.relativeIntensity) / top : 0, f2 }))
    .filter((l) => (phase.singleCrystal ? l.f2 > 1e-6 * f2Top : l.relativeIntensity >= WEAKEST_POWDER_LINE))
    .map(({ f2: _f2, ...l }) => l);
}
