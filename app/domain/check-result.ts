// The stored form of a lattice check's result and the words and tables made from it (server and browser).
import { CENTERINGS, CRYSTAL_SYSTEMS } from "~/diffraction/cell";
import type { Cell, Centering, CrystalSystem, LatticeCheckResult, Radiation } from "~/diffraction";
import type { Verdict } from "~/diffraction/verdict";

export interface StoredProfile {
  /** Points in the scan file, and whether the arrays below are a thinned selection of them. */
  points: number;
  thinned: boolean;
  twoTheta: number[];
  observed: number[];
  background: number[];
  fitted: number[];
}

/** What is kept of a check in `scan_checks.result`: the engine's result without typed arrays, plus its inputs. */
export type StoredCheckResult = Omit<LatticeCheckResult, "twoTheta" | "observed" | "background" | "fittedProfile" | "unindexed"> & {
  version: 1;
  radiation: Radiation;
  /** Where the declared cell and the radiation came from. */
  declaredFrom: { sampleLabel: string | null; expectedPhase: string | null; instrumentName: string | null };
  profile: StoredProfile;
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

const CELL_PARAMS: { key: keyof Cell; name: string; unit: string; digits: number }[] = [
  { key: "a", name: "a", unit: "Å", digits: 5 },
  { key: "b", name: "b", unit: "Å", digits: 5 },
  { key: "c", name: "c", unit: "Å", digits: 5 },
  { key: "alpha", name: "α", unit: "°", digits: 3 },
  { key: "beta", name: "β", unit: "°", digits: 3 },
  { key: "gamma", name: "γ", unit: "°", digits: 3 },
];

/** Rows of the declared-versus-refined cell table, with standard uncertainties and the deviation. */
export function cellRows(result: Pick<StoredCheckResult, "cell" | "esd" | "declaredCell" | "deviation">) {
  return CELL_PARAMS.map(({ key, name, unit, digits }) => {
    const refined = result.cell?.[key];
    const esd = result.esd?.[key];
    const declared = result.declaredCell?.[key];
    const abs = result.deviation?.absolute[key];
    const rel = result.deviation?.relative[key];
    return {
      name,
      declared: declared != null ? `${declared.toFixed(digits)} ${unit}` : "—",
      refined: refined != null ? `${refined.toFixed(digits + 1)}${esd ? ` ± ${esd.toFixed(digits + 1)}` : ""} ${unit}` : "not refined",
      deviation: abs != null && rel != null ? `${signed(abs, digits + 1)} ${unit} (${signed(rel * 100, 3)} %)` : "—",
    };
  });
}

/** The peaks table for the CSV download: the header, then one row per fitted peak (null or undefined where a peak has no value). */
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
  ]);
  return [header, ...rows];
}

/** A sample's declaration as the app stores it: text fields and a cell whose parts may be missing. */
export interface SampleDeclaration {
  system?: string | null;
  centering?: string | null;
  cell?: Partial<Record<keyof Cell, number | null>> | null;
}

/** The declaration as engine options; missing lengths and angles follow from the crystal system. */
export function declaredCheckOptions(d: SampleDeclaration): { system?: CrystalSystem; centering?: Centering; cell?: Cell } {
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
