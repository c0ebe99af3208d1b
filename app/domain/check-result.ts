// The stored form of a lattice check's result and the words and tables made from it (server and browser).
import { CENTERINGS, CRYSTAL_SYSTEMS } from "~/diffraction/cell";
import type { Cell, Centering, CheckedPeak, CrystalSystem, LatticeCheckResult, Radiation } from "~/diffraction";
import type { LatticeCheckOptions } from "~/diffraction/check";
import type { Verdict } from "~/diffraction/verdict";
import type { ScanMetadata } from "~/diffraction/readers/types";
import type { InstrumentProfile } from "~/diffraction/scherrer";
import type { AcceptanceWindow, DeclaredPhase } from "~/diffraction/phases";
import { fixedCellParameters } from "~/diffraction/window";
import type { RadiationSource } from "./measurement";

export interface StoredProfile {
  /** Points in the scan file, and whether the arrays below are a thinned selection of them. */
  points: number;
  thinned: boolean;
  twoTheta: number[];
  observed: number[];
  background: number[];
  /** The sum of the freely fitted single peaks and the background (not a whole-pattern fit). */
  fitted: number[];
  /** The whole-pattern fit's calculated curve with the background; null or absent when no fit was made. */
  calculated?: number[] | null;
}

/**
 * What is kept of a check in `scan_checks.result`: the engine's result without typed arrays, plus its inputs.
 * Version 2 added the corrections refined together (the correlation of zero shift and displacement, the
 * transparency) and the labels of peaks that are not the sample's (Kβ, tungsten L, holder lines); a version 1
 * result lacks them and reads through `readStoredResult`, which fills them in as a version 1 check meant them
 * (every peak the sample's, no correlation, no transparency). The fields added with the scan readers (format,
 * metadata, where the radiation came from, holder, instrument profile) are optional for the same reason.
 * Version 3 added the declared phases, the candidate forms, the acceptance window and the whole-pattern fit;
 * an older result reads as one main phase, no candidates, no window set and no whole-pattern fit.
 */
export const STORED_RESULT_VERSION = 3;

/** Fields a version 1 result does not have. */
type AddedInVersion2 =
  | "correctionRequested"
  | "zeroDisplacementCorrelation"
  | "transparency"
  | "penetrationMm"
  | "penetrationMmEsd"
  | "goniometerRadiusMm"
  | "foreignPeaks";

/** Fields a version 1 or 2 result does not have. */
type AddedInVersion3 = "phases" | "candidates" | "window" | "withinWindow" | "wholePattern";

export type StoredCheckResult = Omit<
  LatticeCheckResult,
  | "twoTheta"
  | "observed"
  | "background"
  | "fittedProfile"
  | "calculatedProfile"
  | "unindexed"
  | "scanFormat"
  | "scanFormatLabel"
  | "metadata"
  | AddedInVersion2
  | AddedInVersion3
> &
  Partial<Pick<LatticeCheckResult, AddedInVersion2 | AddedInVersion3>> & {
    version: 1 | 2 | 3;
    radiation: Radiation;
    /** Where the declared cell and the radiation came from. */
    declaredFrom: { sampleLabel: string | null; expectedPhase: string | null; instrumentName: string | null };
    profile: StoredProfile;
    /** The reader's format id and label, and what the file states about its measurement (absent in older results). */
    scanFormat?: string;
    scanFormatLabel?: string;
    metadata?: ScanMetadata;
    /** Whether the radiation above is the file's own, the quote's instrument's, or assumed (absent in older results: the instrument's). */
    radiationSource?: RadiationSource;
    /** The sentence naming a file measured with another source than the quote's instrument, or null. */
    radiationMismatch?: string | null;
    holder?: string | null;
    instrumentProfile?: InstrumentProfile | null;
  };

/** How each verdict is shown wherever one appears: the badge's tone and word, and what the verdict means. */
export const VERDICT_WORDS: Record<Verdict, { tone: "ok" | "caution" | "danger"; label: string; meaning: string }> = {
  consistent: { tone: "ok", label: "Consistent", meaning: "The scan confirms the declared cell." },
  review: { tone: "caution", label: "Review", meaning: "The scan mostly fits the declared cell, but something needs a person's look." },
  inconsistent: { tone: "danger", label: "Inconsistent", meaning: "The scan does not fit the declared cell." },
};

export const signed = (v: number, digits: number) => `${v >= 0 ? "+" : "−"}${Math.abs(v).toFixed(digits)}`;

export const formatHkl = (hkl: [number, number, number]) => hkl.map((i) => (i < 0 ? `${Math.abs(i)}̄` : String(i))).join(" ");

const MONOCHROMATION_WORDS = { k_alpha_doublet: "Kα1 + Kα2", k_alpha1_only: "Kα1 only", k_beta_filtered: "Kβ filtered" } as const;

export function radiationWords(r: Radiation) {
  return r.kind === "anode" ? `${r.anode} ${MONOCHROMATION_WORDS[r.monochromation]}` : `Wavelength ${r.wavelength} Å`;
}

/** The six cell parameters as tables show them: name, unit and digits. */
export const CELL_PARAMS: { key: keyof Cell; name: string; unit: "Å" | "°"; digits: number }[] = [
  { key: "a", name: "a", unit: "Å", digits: 5 },
  { key: "b", name: "b", unit: "Å", digits: 5 },
  { key: "c", name: "c", unit: "Å", digits: 5 },
  { key: "alpha", name: "α", unit: "°", digits: 3 },
  { key: "beta", name: "β", unit: "°", digits: 3 },
  { key: "gamma", name: "γ", unit: "°", digits: 3 },
];

/**
 * Rows of the declared-versus-refined cell table, with standard uncertainties and the deviation; a parameter
 * the crystal system fixes or ties to another (α = 90°, b = a) reads "fixed", not as a refined value.
 */
export function cellRows(result: Pick<StoredCheckResult, "cell" | "esd" | "declaredCell" | "deviation"> & { system?: CrystalSystem | null }) {
  const fixed = result.system ? fixedCellParameters(result.system) : [];
  return CELL_PARAMS.map(({ key, name, unit, digits }) => {
    const refined = result.cell?.[key];
    const esd = result.esd?.[key];
    const declared = result.declaredCell?.[key];
    const abs = result.deviation?.absolute[key];
    const rel = result.deviation?.relative[key];
    const isFixed = fixed.includes(key) && refined != null;
    return {
      name,
      declared: declared != null ? `${declared.toFixed(digits)} ${unit}` : "—",
      refined: isFixed
        ? `fixed (${["b", "c"].includes(key) ? "follows a" : `${refined.toFixed(digits - 2)} ${unit}`})`
        : refined != null
          ? `${refined.toFixed(digits + 1)}${esd ? ` ± ${esd.toFixed(digits + 1)}` : ""} ${unit}`
          : "not refined",
      deviation: abs != null && rel != null ? `${signed(abs, digits + 1)} ${unit} (${signed(rel * 100, 3)} %)` : "—",
    };
  });
}

/**
 * The fitted peaks' origin in words: null for the sample's own reflections, else the stray line or holder line
 * with what it belongs to — "Cu Kβ of (1 1 0)", "W Lα1 of peak 3" (the parent unindexed), "holder (Al 1 1 1)".
 */
export function peakOriginWords(peak: Pick<CheckedPeak, "origin" | "foreign">): string | null {
  const f = peak.foreign;
  if (!f || !peak.origin || peak.origin === "sample") return null;
  if (f.origin === "holder") return `holder (${f.line}${f.holderHkl ? ` ${formatHkl(f.holderHkl)}` : ""})`;
  const parent = f.parentHkl ? `(${formatHkl(f.parentHkl)})` : f.parentPeak != null ? `peak ${f.parentPeak + 1}` : "a stronger peak";
  return `${f.line} of ${parent}`;
}

/** The short marks the plot puts over labelled peaks: where, and the words of peakOriginWords. */
export function foreignMarks(peaks: readonly Pick<CheckedPeak, "twoTheta" | "origin" | "foreign">[]): { twoTheta: number; label: string }[] {
  return peaks.flatMap((p) => {
    const words = peakOriginWords(p);
    return words ? [{ twoTheta: p.twoTheta, label: words }] : [];
  });
}

/**
 * A stored result of any version in the shape of the current one: a version 1 result (before the corrections
 * refined together and the peak labels) reads as its check meant it — every peak the sample's, the correction
 * it names refined alone, no transparency. Newer fields already present are kept.
 */
export function readStoredResult(raw: unknown): StoredCheckResult & Pick<LatticeCheckResult, AddedInVersion2 | AddedInVersion3> {
  const r = raw as StoredCheckResult;
  const peaks = (r.peaks ?? []).map((p) => ({ ...p, origin: p.origin ?? "sample", foreign: p.foreign ?? null, fwhmEsd: p.fwhmEsd ?? null }));
  const count = (origin: string) => peaks.filter((p) => p.origin === origin).length;
  return {
    ...r,
    peaks,
    correctionRequested: r.correctionRequested ?? r.correction,
    zeroDisplacementCorrelation: r.zeroDisplacementCorrelation ?? null,
    transparency: r.transparency ?? "none",
    penetrationMm: r.penetrationMm ?? 0,
    penetrationMmEsd: r.penetrationMmEsd ?? null,
    goniometerRadiusMm: r.goniometerRadiusMm ?? 240,
    foreignPeaks: r.foreignPeaks ?? { kbeta: count("kbeta"), tungstenL: count("tungsten_l"), holder: count("holder") },
    phases: r.phases ?? singlePhase(r),
    candidates: r.candidates ?? null,
    window: r.window ?? { withinWindow: null, parameters: [] },
    withinWindow: r.withinWindow ?? null,
    wholePattern: r.wholePattern ?? null,
  };
}

/** An older result's one phase: the declared (or indexed) main phase, with the top-level cell and ticks. */
function singlePhase(r: StoredCheckResult): LatticeCheckResult["phases"] {
  if (!r.system || !r.centering || !(r.declaredCell ?? r.cell)) return [];
  return [
    {
      role: "main",
      name: r.declaredFrom?.expectedPhase ?? null,
      system: r.system,
      centering: r.centering,
      declaredCell: (r.declaredCell ?? r.cell)!,
      cell: r.cell,
      esd: r.esd,
      fixed: fixedCellParameters(r.system),
      present: r.cell !== null,
      peaks: r.peaks.filter((p) => p.hkl !== null).length,
      M20: r.figuresOfMerit?.M20 ?? null,
      reasons: [],
      reflections: r.reflections ?? [],
    },
  ];
}

/**
 * The instrumental corrections refined with the cell, one row each as the check screen lists them: the zero
 * shift (degrees 2θ) and the specimen displacement (mm) with their esds, their correlation when both were
 * refined or tried, and the transparency when used.
 */
export function correctionRows(result: StoredCheckResult): { name: string; value: string }[] {
  const r = readStoredResult(result);
  const rows: { name: string; value: string }[] = [];
  const refined = r.correction;
  if (refined === "zero_shift" || refined === "zero_and_displacement") {
    rows.push({ name: "Zero shift", value: `${signed(r.zeroShift, 4)}°${r.zeroShiftEsd != null ? ` ± ${r.zeroShiftEsd.toFixed(4)}°` : ""} 2θ` });
  }
  if (refined === "displacement" || refined === "zero_and_displacement") {
    rows.push({
      name: "Specimen displacement",
      value: `${signed(r.displacement, 3)} mm${r.displacementEsd != null ? ` ± ${r.displacementEsd.toFixed(3)} mm` : ""} (goniometer radius ${r.goniometerRadiusMm} mm)`,
    });
  }
  if (r.zeroDisplacementCorrelation != null) {
    rows.push({
      name: "Correlation of zero shift and displacement",
      value: `${r.zeroDisplacementCorrelation.toFixed(5)}${refined === "zero_and_displacement" ? "" : " (when refined together)"}`,
    });
  }
  if (r.transparency !== "none") {
    const mu = r.penetrationMm > 0 ? ` (μ = ${(10 / r.penetrationMm).toFixed(1)} cm⁻¹)` : "";
    rows.push({
      name: "Transparency, penetration depth 1/μ",
      value:
        r.transparency === "fixed"
          ? `${r.penetrationMm.toFixed(3)} mm${mu}, from the given attenuation`
          : `${r.penetrationMm.toFixed(3)} mm${r.penetrationMmEsd != null ? ` ± ${r.penetrationMmEsd.toFixed(3)} mm` : ""}${mu}, refined`,
    });
  }
  return rows;
}

/**
 * The peaks table for the CSV download: the header, then one row per fitted peak (null or undefined where a peak
 * has no value); with `origin` and `origin_note` columns when some peaks are Kβ, tungsten L or holder lines.
 */
export function peaksTable(result: Pick<StoredCheckResult, "peaks">): (string | number | null | undefined)[][] {
  const header = [
    "peak",
    "h",
    "k",
    "l",
    "d_angstrom",
    "two_theta_obs_deg",
    "two_theta_obs_su_deg",
    "two_theta_calc_deg",
    "delta_two_theta_deg",
    "intensity",
    "relative_intensity_percent",
    "fwhm_deg",
    "eta",
    "used_in_refinement",
    "crystallite_size_nm",
  ];
  // The origin columns appear when the check labelled peaks that are not the sample's (tables of version 1
  // results and of scans without such lines keep their former columns).
  const labelled = result.peaks.some((p) => p.foreign);
  if (labelled) header.push("origin", "origin_note");
  const rows = result.peaks.map((p, i) => [
    i + 1,
    p.hkl?.[0],
    p.hkl?.[1],
    p.hkl?.[2],
    p.d,
    p.twoTheta,
    p.twoThetaEsd,
    p.twoThetaCalc,
    p.delta,
    p.intensity,
    p.relativeIntensity,
    p.fwhm,
    p.eta,
    p.usedInRefinement ? "yes" : "no",
    p.crystalliteSizeNm,
    ...(labelled ? [p.origin ?? "sample", peakOriginWords(p) ?? ""] : []),
  ]);
  return [header, ...rows];
}

/** A phase's system, centering and cell as the app stores them (text fields; the cell may lack parts). */
export interface StoredPhaseDeclaration {
  name?: string | null;
  system?: string | null;
  centering?: string | null;
  cell?: Partial<Record<keyof Cell, number | null>> | null;
}

/** A sample's declaration as the app stores it: its main phase, further expected phases, candidate forms and window. */
export interface SampleDeclaration extends StoredPhaseDeclaration {
  /** The main phase's name (the sample's expected phase). */
  mainName?: string | null;
  phases?: StoredPhaseDeclaration[];
  candidates?: StoredPhaseDeclaration[];
  window?: AcceptanceWindow | null;
}

/** The declaration as engine options (the lattice check's declared phases and window). */
export type DeclaredCheckOptions = Pick<LatticeCheckOptions, "system" | "centering" | "cell" | "mainName" | "phases" | "candidates" | "window">;

/** The system, centering and cell as engine options; missing lengths and angles follow from the crystal system. */
function cellOptions(d: StoredPhaseDeclaration): { system?: CrystalSystem; centering?: Centering; cell?: Cell } {
  const system = CRYSTAL_SYSTEMS.includes(d.system as CrystalSystem) ? (d.system as CrystalSystem) : undefined;
  const centering = CENTERINGS.includes(d.centering as Centering) ? (d.centering as Centering) : undefined;
  const a = d.cell?.a;
  if (!a || a <= 0) return { system, centering };
  const hexagonal = system === "hexagonal" || system === "trigonal";
  const cell: Cell = {
    a,
    b: d.cell?.b ?? a,
    c: d.cell?.c ?? a,
    alpha: d.cell?.alpha ?? 90,
    beta: d.cell?.beta ?? 90,
    gamma: d.cell?.gamma ?? (hexagonal ? 120 : 90),
  };
  if (system === "cubic") Object.assign(cell, { b: a, c: a });
  if (system === "tetragonal" || hexagonal) cell.b = a;
  return { system, centering, cell };
}

/** The further phases the engine can use: those with a known system, centering and cell. */
function declaredPhases(list: StoredPhaseDeclaration[] | undefined): DeclaredPhase[] | undefined {
  const phases: DeclaredPhase[] = [];
  for (const p of list ?? []) {
    const { system, centering, cell } = cellOptions(p);
    if (system && centering && cell) phases.push({ name: p.name ?? null, system, centering, cell });
  }
  return phases.length ? phases : undefined;
}

/** The declaration as engine options; missing lengths and angles follow from the crystal system. */
export function declaredCheckOptions(d: SampleDeclaration): DeclaredCheckOptions {
  const options: DeclaredCheckOptions = cellOptions(d);
  if (d.mainName) options.mainName = d.mainName;
  const phases = declaredPhases(d.phases);
  if (phases) options.phases = phases;
  const candidates = declaredPhases(d.candidates);
  if (candidates) options.candidates = candidates;
  if (d.window && Object.keys(d.window).length) options.window = d.window;
  return options;
}
