// The trend of a material's lots (docs/design.md#lots-and-trends): per free cell parameter of its crystal system,
// the lots in the order they were measured, control limits from a chosen baseline of lots, the Western Electric
// rules each lot breaks, and the acceptance window as a band. Pure; the trend screen, its CSV, the API and the
// notice after a new lot all read the same answer.
//
// - A lot is its lot code: several checked scans of one lot (rows of material_lots with the same code) are one
//   subgroup. When every lot of the baseline has the same number of scans n (2…10) the chart is X̄/R on those
//   subgroups; otherwise it is an individuals chart of each lot's mean with moving-range limits (app/domain/spc.ts).
// - The baseline is lots first…last by their order on the record (1-based, inclusive); without a choice the first
//   20 lots, or all when there are fewer. Limits need two baseline lots with a value, else none yet.
// - The acceptance window is drawn as declared value ± its half-width (Å or degrees, or % of the declared value),
//   as app/diffraction/window.ts judges it.

import { CRYSTAL_SYSTEMS, type CrystalSystem } from "~/diffraction/cell";
import type { AcceptanceWindow, CellKey } from "~/diffraction/phases";
import { CELL_KEYS } from "~/diffraction/phases";
import { freeCellParameters } from "~/diffraction/window";
import { type ControlLimits, individualsLimits, type RuleNumber, WESTERN_ELECTRIC_RULES, westernElectric, xbarRLimits } from "./spc";

/** How many lots make the baseline when none is chosen (common practice: 20–25 subgroups for trial limits). */
export const DEFAULT_BASELINE_LOTS = 20;

export type LotCellValues = Record<CellKey, number>;

/** One checked scan of a lot on the material's record, as the table material_lots keeps it. */
export interface LotScan {
  id: string;
  lotCode: string;
  measuredAt: Date | string;
  cell: Partial<LotCellValues> | null;
  esd: Partial<LotCellValues> | null;
  verdict: string | null;
  withinWindow: boolean | null;
}

/** What of the material the trend needs: its system, the declared cell, the window and the chosen baseline. */
export interface TrendMaterial {
  crystalSystem: string | null;
  declared: Partial<Record<CellKey, number | null>>;
  acceptanceWindow: AcceptanceWindow | null;
  baselineFirstLot: number | null;
  baselineLastLot: number | null;
}

/** One lot: its scans (in measuring order) and what it shows as one point per parameter. */
export interface TrendLot {
  /** Its place on the record, 1-based, by its first scan. */
  order: number;
  lotCode: string;
  /** The first scan's time. */
  measuredAt: string;
  scans: LotScan[];
  /** The lot's value per parameter: the mean of its scans (one scan: that scan's value). */
  cell: Partial<LotCellValues>;
  /** The esd of that value: a single scan's esd, or √(Σ esd²)/n for a mean of n scans. */
  esd: Partial<LotCellValues>;
  /** The latest scan's verdict. */
  verdict: string | null;
  /** Outside when any scan is outside; inside when every scan is inside; else unknown (null). */
  withinWindow: boolean | null;
  /** The control rules the lot breaks, per parameter (only parameters with a broken rule). */
  rulesBroken: Partial<Record<CellKey, RuleNumber[]>>;
  inBaseline: boolean;
}

export interface TrendPoint {
  order: number;
  lotCode: string;
  measuredAt: string;
  /** The charted value (the lot's mean); null when no scan of the lot refined this parameter. */
  value: number | null;
  esd: number | null;
  /** The scans' values of the lot. */
  scans: number[];
  /** Moving range to the previous lot with a value (individuals) or the lot's range (X̄/R); null when none. */
  range: number | null;
  rules: RuleNumber[];
  inBaseline: boolean;
}

export interface ParameterTrend {
  parameter: CellKey;
  /** "a", "β" … */
  name: string;
  unit: "Å" | "°";
  chart: "individuals" | "xbar_r";
  /** Which chart, in words, for the screen. */
  chartWords: string;
  limits: ControlLimits | null;
  /** Why there are no limits yet, one sentence; null when there are limits. */
  limitsProblem: string | null;
  window: { declared: number; lower: number; upper: number; words: string } | null;
  points: TrendPoint[];
}

export interface MaterialTrend {
  parameters: CellKey[];
  baseline: { first: number; last: number; chosen: boolean };
  lots: TrendLot[];
  byParameter: Partial<Record<CellKey, ParameterTrend>>;
}

export const PARAMETER_NAMES: Record<CellKey, { name: string; unit: "Å" | "°"; digits: number }> = {
  a: { name: "a", unit: "Å", digits: 5 },
  b: { name: "b", unit: "Å", digits: 5 },
  c: { name: "c", unit: "Å", digits: 5 },
  alpha: { name: "α", unit: "°", digits: 4 },
  beta: { name: "β", unit: "°", digits: 4 },
  gamma: { name: "γ", unit: "°", digits: 4 },
};

const iso = (d: Date | string) => (d instanceof Date ? d.toISOString() : new Date(d).toISOString());
const finite = (v: unknown): v is number => typeof v === "number" && Number.isFinite(v);
const mean = (xs: number[]) => xs.reduce((s, x) => s + x, 0) / xs.length;

/** The trend screen's path for a parameter, from anywhere (the screen, notices, letters). */
export const trendPath = (materialId: string, parameter?: CellKey) => `/client/materials/${materialId}/trend${parameter ? `?parameter=${parameter}` : ""}`;

export function isCellKey(v: unknown): v is CellKey {
  return typeof v === "string" && (CELL_KEYS as readonly string[]).includes(v);
}

/**
 * The parameters a trend shows: the free ones of the material's crystal system; without a known system, every
 * parameter some lot has a value for.
 */
export function trendParameters(crystalSystem: string | null, scans: readonly LotScan[]): CellKey[] {
  if (crystalSystem && (CRYSTAL_SYSTEMS as readonly string[]).includes(crystalSystem)) return freeCellParameters(crystalSystem as CrystalSystem);
  return CELL_KEYS.filter((k) => scans.some((s) => finite(s.cell?.[k])));
}

/** Lots from scans: grouped by lot code (trimmed, case kept as first written), ordered by their first scan. */
export function groupLots(scans: readonly LotScan[]): Omit<TrendLot, "rulesBroken" | "inBaseline">[] {
  const sorted = [...scans].sort((x, y) => new Date(x.measuredAt).getTime() - new Date(y.measuredAt).getTime() || x.id.localeCompare(y.id));
  const groups = new Map<string, LotScan[]>();
  for (const s of sorted) {
    const key = s.lotCode.trim().toLowerCase();
    const g = groups.get(key);
    if (g) g.push(s);
    else groups.set(key, [s]);
  }
  return [...groups.values()].map((group, i) => {
    const cell: Partial<LotCellValues> = {};
    const esd: Partial<LotCellValues> = {};
    for (const k of CELL_KEYS) {
      const values = group.map((s) => s.cell?.[k]).filter(finite);
      if (values.length === 0) continue;
      cell[k] = mean(values);
      const esds = group.filter((s) => finite(s.cell?.[k])).map((s) => s.esd?.[k]);
      const known = esds.filter(finite);
      if (known.length === esds.length) esd[k] = Math.sqrt(known.reduce((t, e) => t + e * e, 0)) / known.length;
    }
    const answers = group.map((s) => s.withinWindow);
    const withinWindow = answers.includes(false) ? false : answers.length > 0 && answers.every((a) => a === true) ? true : null;
    return {
      order: i + 1,
      lotCode: group[0].lotCode.trim(),
      measuredAt: iso(group[0].measuredAt),
      scans: group,
      cell,
      esd,
      verdict: group[group.length - 1].verdict,
      withinWindow,
    };
  });
}

/** The baseline's lot numbers (1-based, inclusive) for `count` lots: the chosen range clamped, else the first 20. */
export function baselineRange(count: number, first: number | null, last: number | null): { first: number; last: number; chosen: boolean } {
  const chosen = first != null || last != null;
  const f = Math.max(1, Math.min(first ?? 1, Math.max(count, 1)));
  const l = Math.max(f, Math.min(last ?? (chosen ? count : DEFAULT_BASELINE_LOTS), Math.max(count, 1)));
  return { first: f, last: l, chosen };
}

/** The window's band for one parameter: declared ± the half-width, as app/diffraction/window.ts judges it. */
export function windowBand(window: AcceptanceWindow | null, declared: number | null | undefined, key: CellKey) {
  const limit = window?.[key];
  if (!limit || !finite(declared) || !(limit.plusMinus > 0)) return null;
  const half = limit.unit === "percent" ? (Math.abs(declared) * limit.plusMinus) / 100 : limit.plusMinus;
  const unit = limit.unit === "percent" ? " %" : PARAMETER_NAMES[key].unit === "Å" ? " Å" : "°";
  return { declared, lower: declared - half, upper: declared + half, words: `${PARAMETER_NAMES[key].name} ${declared} ± ${limit.plusMinus}${unit}` };
}

function parameterTrend(
  key: CellKey,
  lots: Omit<TrendLot, "rulesBroken" | "inBaseline">[],
  baseline: { first: number; last: number },
  material: TrendMaterial,
): ParameterTrend {
  const { name, unit } = PARAMETER_NAMES[key];
  const scansOf = (lot: (typeof lots)[number]) => lot.scans.map((s) => s.cell?.[key]).filter(finite);
  const inBaseline = (lot: (typeof lots)[number]) => lot.order >= baseline.first && lot.order <= baseline.last;
  const baseLots = lots.filter((l) => inBaseline(l) && scansOf(l).length > 0);
  const sizes = new Set(baseLots.map((l) => scansOf(l).length));
  const n = sizes.size === 1 ? [...sizes][0] : 1;
  const subgrouped = n >= 2 && n <= 10;
  const limits = subgrouped ? xbarRLimits(baseLots.map(scansOf)) : individualsLimits(baseLots.map((l) => l.cell[key] as number));
  const chartWords = subgrouped
    ? `X̄/R chart: each lot's ${n} scans are one subgroup; the point is their mean and the lower chart their range.`
    : "Individuals chart of each lot's value (the mean of its scans), with limits from the moving range of consecutive lots.";
  let previous: number | null = null;
  const points: TrendPoint[] = lots.map((lot) => {
    const scans = scansOf(lot);
    const value = scans.length ? (lot.cell[key] as number) : null;
    let range: number | null = null;
    if (value !== null) {
      if (subgrouped) range = scans.length > 1 ? Math.max(...scans) - Math.min(...scans) : null;
      else range = previous === null ? null : Math.abs(value - previous);
      previous = value;
    }
    return {
      order: lot.order,
      lotCode: lot.lotCode,
      measuredAt: lot.measuredAt,
      value,
      esd: finite(lot.esd[key]) ? (lot.esd[key] as number) : null,
      scans,
      range,
      rules: [],
      inBaseline: inBaseline(lot),
    };
  });
  if (limits) {
    const charted = points.filter((p) => p.value !== null);
    const rules = westernElectric(
      charted.map((p) => p.value as number),
      limits,
    );
    charted.forEach((p, i) => {
      p.rules = rules[i];
    });
  }
  return {
    parameter: key,
    name,
    unit,
    chart: subgrouped ? "xbar_r" : "individuals",
    chartWords,
    limits,
    limitsProblem: limits ? null : "Not enough lots for limits yet: the baseline needs at least two lots with a refined value.",
    window: windowBand(material.acceptanceWindow, material.declared[key], key),
    points,
  };
}

/** The whole trend of a material from its lot scans. */
export function materialTrend(material: TrendMaterial, scans: readonly LotScan[]): MaterialTrend {
  const grouped = groupLots(scans);
  const parameters = trendParameters(material.crystalSystem, scans);
  const baseline = baselineRange(grouped.length, material.baselineFirstLot, material.baselineLastLot);
  const byParameter: Partial<Record<CellKey, ParameterTrend>> = {};
  for (const key of parameters) byParameter[key] = parameterTrend(key, grouped, baseline, material);
  const lots: TrendLot[] = grouped.map((lot, i) => {
    const rulesBroken: Partial<Record<CellKey, RuleNumber[]>> = {};
    for (const key of parameters) {
      const rules = byParameter[key]!.points[i].rules;
      if (rules.length) rulesBroken[key] = rules;
    }
    return { ...lot, rulesBroken, inBaseline: lot.order >= baseline.first && lot.order <= baseline.last };
  });
  return { parameters, baseline, lots, byParameter };
}

/** "a: rule 1 (one point beyond the 3σ limits); c: rule 4 (…)" — a lot's broken rules in words; "" when none. */
export function rulesWords(rulesBroken: Partial<Record<CellKey, RuleNumber[]>>): string {
  return (Object.entries(rulesBroken) as [CellKey, RuleNumber[]][])
    .filter(([, rules]) => rules.length)
    .map(([key, rules]) => `${PARAMETER_NAMES[key].name}: ${rules.map((r) => `rule ${r} (${WESTERN_ELECTRIC_RULES[r]})`).join(", ")}`)
    .join("; ");
}

/** A parameter's chart in words, for people who cannot see the picture. */
export function trendSummary(t: ParameterTrend): string {
  const charted = t.points.filter((p) => p.value !== null);
  const { digits } = PARAMETER_NAMES[t.parameter];
  const f = (v: number) => `${v.toFixed(digits)} ${t.unit}`;
  const parts = [`${charted.length} lot${charted.length === 1 ? "" : "s"} with a refined ${t.name}.`];
  if (t.limits) {
    parts.push(`Centre line ${f(t.limits.center)}, control limits ${f(t.limits.lcl)} to ${f(t.limits.ucl)}, from ${t.limits.baselinePoints} baseline lots.`);
    const flagged = charted.filter((p) => p.rules.length);
    parts.push(
      flagged.length
        ? `${flagged.length} lot${flagged.length === 1 ? " breaks" : "s break"} a rule: ${flagged.map((p) => `${p.lotCode} (rule ${p.rules.join(", ")})`).join("; ")}.`
        : "No lot breaks a rule.",
    );
  } else parts.push(t.limitsProblem ?? "");
  if (t.window) {
    const outside = charted.filter((p) => p.value! < t.window!.lower || p.value! > t.window!.upper);
    parts.push(`Acceptance window ${f(t.window.lower)} to ${f(t.window.upper)}; ${outside.length ? `${outside.length} outside it` : "every lot inside it"}.`);
  }
  const last = charted[charted.length - 1];
  if (last) parts.push(`Latest lot ${last.lotCode}: ${f(last.value!)}.`);
  return parts.join(" ");
}
