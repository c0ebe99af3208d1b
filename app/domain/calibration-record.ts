// The lab's accuracy on record (docs/design.md#calibration-on-record): each repeat calibration scan of a
// certified standard is judged against the tolerance and against the instrument's own control limits; the
// history is drawn as control charts; the public figures are the mean deviation over the last 12 months and the
// lab's on-time delivery. Pure rules; they run in the browser and on the server alike.
import { individualsLimits, WESTERN_ELECTRIC_RULES, westernElectric, type ControlLimits, type RuleNumber } from "./spc";
import { z } from "zod";
import { APPROVAL_TOLERANCE_A, CALIBRATION_STANDARDS, CalibrationScanFields } from "./vetting";

/** The control limits come from at most this many of the instrument's first passing calibrations. */
export const CALIBRATION_BASELINE_MAX = 12;
/**
 * Limits need at least this many passing calibrations: from two or three, σ̂ is so uncertain that a noisy but
 * healthy scan breaks rule 1 (common practice is 20–25 points for trial limits; five is the least we judge by).
 */
export const CALIBRATION_BASELINE_MIN = 5;

/** Individuals limits from a baseline of passing values, or none while there are fewer than CALIBRATION_BASELINE_MIN. */
const baselineLimits = (values: number[]) => (values.length >= CALIBRATION_BASELINE_MIN ? individualsLimits(values) : null);
export const CALIBRATION_INTERVAL_RANGE = { min: 1, max: 366 } as const;
/** The profile width on the charts is the FWHM at this 2θ (degrees), from the scan's Caglioti U, V, W (common practice: a mid-range angle). */
export const WIDTH_REFERENCE_TWO_THETA = 60;
/** The public accuracy covers calibrations measured within this many months. */
export const RECORD_MONTHS = 12;

export type CalibrationState = "none" | "ok" | "overdue" | "out_of_control";

export const CALIBRATION_STATE_LABELS: Record<CalibrationState, string> = {
  none: "No calibration on record",
  ok: "Calibration in order",
  overdue: "Calibration overdue",
  out_of_control: "Calibration out of control",
};

/** Whether an instrument in this state counts for matching: overdue and out of control leave matching until a passing scan. */
export function countsForMatching(state: string | null | undefined): boolean {
  return state !== "overdue" && state !== "out_of_control";
}

/** Why an instrument is withdrawn from matching, in one sentence; null when it counts. */
export function withdrawalReason(state: string | null | undefined): string | null {
  if (state === "overdue") return "Withdrawn from matching: its calibration scan is overdue";
  if (state === "out_of_control") return "Withdrawn from matching: its last calibration scan was out of control";
  return null;
}

export interface PriorCalibration {
  deviationA: number | null;
  passed: boolean;
}

export interface CalibrationJudgement {
  passed: boolean;
  withinTolerance: boolean;
  rulesBroken: RuleNumber[];
  /** The limits the new point was judged against; null with fewer than CALIBRATION_BASELINE_MIN baseline calibrations. */
  limits: ControlLimits | null;
  /** Why it failed, in sentences; empty when it passed. */
  problems: string[];
}

/**
 * Judges a new calibration's deviation (refined − certified a, Å) against the tolerance and the instrument's
 * control limits. The limits come from the first passing calibrations before it (at most
 * CALIBRATION_BASELINE_MAX; with fewer than CALIBRATION_BASELINE_MIN there are no limits and no rules); the rules run on the whole
 * series of deviations, the new one last, and count only where the new point is flagged.
 */
export function judgeCalibration(prior: PriorCalibration[], deviationA: number | null): CalibrationJudgement {
  const problems: string[] = [];
  if (deviationA === null || !Number.isFinite(deviationA)) {
    return { passed: false, withinTolerance: false, rulesBroken: [], limits: null, problems: ["The standard's cell could not be refined from the scan."] };
  }
  const withinTolerance = Math.abs(deviationA) <= APPROVAL_TOLERANCE_A;
  if (!withinTolerance) problems.push(`The deviation ${signedAngstrom(deviationA)} is outside the tolerance of ±${APPROVAL_TOLERANCE_A} Å.`);
  const series = prior.filter((p) => p.deviationA !== null && Number.isFinite(p.deviationA));
  const baseline = series
    .filter((p) => p.passed)
    .slice(0, CALIBRATION_BASELINE_MAX)
    .map((p) => p.deviationA as number);
  const limits = baselineLimits(baseline);
  let rulesBroken: RuleNumber[] = [];
  if (limits) {
    const flags = westernElectric([...series.map((p) => p.deviationA as number), deviationA], limits);
    rulesBroken = flags[flags.length - 1];
    for (const r of rulesBroken) problems.push(`Western Electric rule ${r}: ${WESTERN_ELECTRIC_RULES[r]}.`);
  }
  return { passed: withinTolerance && rulesBroken.length === 0, withinTolerance, rulesBroken, limits, problems };
}

/** FWHM (degrees 2θ) at 2θ from Caglioti U, V, W: FWHM² = U tan²θ + V tanθ + W (Caglioti, Paoletti & Ricci, 1958); null when not given or not real. */
export function profileWidth(u: number | null, v: number | null, w: number | null, twoTheta = WIDTH_REFERENCE_TWO_THETA): number | null {
  if (u === null || v === null || w === null) return null;
  const t = Math.tan((twoTheta / 2) * (Math.PI / 180));
  const sq = u * t * t + v * t + w;
  return sq > 0 && Number.isFinite(sq) ? Math.sqrt(sq) : null;
}

export interface ChartRow {
  measuredAt: string;
  deviationA: number | null;
  zeroShift: number | null;
  width: number | null;
  passed: boolean;
}

export interface ChartSeries {
  key: "deviation" | "zeroShift" | "width";
  label: string;
  unit: string;
  /** Seconds since 1970 of each point with a value, and the value. */
  times: number[];
  values: number[];
  limits: ControlLimits | null;
  /** The rules each point breaks (parallel to values). */
  flags: RuleNumber[][];
}

/**
 * The three control charts of an instrument's history: deviation (Å), zero shift (degrees 2θ) and profile width
 * (FWHM at WIDTH_REFERENCE_TWO_THETA, degrees 2θ). Each chart's limits come from its first passing points (at
 * most CALIBRATION_BASELINE_MAX), the same baseline rule as the judgement.
 */
export function calibrationCharts(rows: ChartRow[]): ChartSeries[] {
  const defs = [
    { key: "deviation", label: "Deviation from the certificate", unit: "Å", pick: (r: ChartRow) => r.deviationA },
    { key: "zeroShift", label: "Zero shift", unit: "° 2θ", pick: (r: ChartRow) => r.zeroShift },
    { key: "width", label: `Profile width (FWHM at 2θ = ${WIDTH_REFERENCE_TWO_THETA}°)`, unit: "° 2θ", pick: (r: ChartRow) => r.width },
  ] as const;
  return defs.map((d) => {
    const points = rows.flatMap((r) => {
      const v = d.pick(r);
      return v !== null && Number.isFinite(v) ? [{ t: Date.parse(r.measuredAt) / 1000, v, passed: r.passed }] : [];
    });
    const limits = baselineLimits(
      points
        .filter((p) => p.passed)
        .slice(0, CALIBRATION_BASELINE_MAX)
        .map((p) => p.v),
    );
    const values = points.map((p) => p.v);
    return {
      key: d.key,
      label: d.label,
      unit: d.unit,
      times: points.map((p) => p.t),
      values,
      limits,
      flags: limits ? westernElectric(values, limits) : values.map(() => []),
    };
  });
}

/** A calibration chart's summary in words: the picture's label and its caption. */
export function chartSummary(series: ChartSeries, decimals: number): string {
  const n = series.values.length;
  if (n === 0) return `${series.label}: no scans yet.`;
  const flagged = series.flags.filter((f) => f.length > 0).length;
  const l = series.limits;
  const limits = l
    ? `centre ${l.center.toFixed(decimals)} ${series.unit}, limits ${l.lcl.toFixed(decimals)} to ${l.ucl.toFixed(decimals)} ${series.unit} from the first ${l.baselinePoints} passing scans`
    : `no control limits yet (they need ${CALIBRATION_BASELINE_MIN} passing scans)`;
  const last = series.values[n - 1];
  return `${series.label}: ${n} ${n === 1 ? "scan" : "scans"}, latest ${last.toFixed(decimals)} ${series.unit}; ${limits}; ${flagged} ${flagged === 1 ? "point breaks" : "points break"} a Western Electric rule.`;
}

/** When the next calibration is due: the measurement plus the interval in days. */
export function nextDueAt(measuredAt: Date, intervalDays: number): Date {
  return new Date(measuredAt.getTime() + intervalDays * 86_400_000);
}

/** A length in Å with its sign and five decimals (a tenth of the tolerance's smallest digit): "+0.00012 Å", "−0.00031 Å", "0.00000 Å". */
export function signedAngstrom(value: number, decimals = 5): string {
  const text = Math.abs(value).toFixed(decimals);
  if (Number(text) === 0) return `${text} Å`;
  return `${value < 0 ? "−" : "+"}${text} Å`;
}

/** The short name of a standard's material ("LaB6", "Si") for the public line; the key itself when unknown. */
export function standardShortName(standard: string | null): string {
  if (standard === "lab6_srm660c") return "LaB6";
  if (standard === "si_srm640c") return "Si";
  return standard ?? "—";
}

export function standardLabel(standard: string | null): string {
  return standard && standard in CALIBRATION_STANDARDS ? CALIBRATION_STANDARDS[standard as keyof typeof CALIBRATION_STANDARDS].label : "—";
}

export interface InstrumentAccuracy {
  instrumentId: string;
  instrumentName: string;
  standard: string | null;
  /** Mean deviation (Å) of the calibrations in the last RECORD_MONTHS months; null with none. */
  meanDeviationA: number | null;
  scans: number;
}

/** "LaB6: +0.00012 Å, 14 scans in 12 months"; "No calibration scans in 12 months" with none. */
export function accuracyText(a: Pick<InstrumentAccuracy, "standard" | "meanDeviationA" | "scans">): string {
  if (a.scans === 0 || a.meanDeviationA === null) return `No calibration scans in ${RECORD_MONTHS} months`;
  return `${standardShortName(a.standard)}: ${signedAngstrom(a.meanDeviationA)}, ${a.scans} ${a.scans === 1 ? "scan" : "scans"} in ${RECORD_MONTHS} months`;
}

export interface OnTimeRecord {
  onTime: number;
  delivered: number;
}

/** "On time: 18 of 19 orders in 12 months"; "No orders delivered in 12 months" with none. */
export function onTimeText(r: OnTimeRecord): string {
  if (r.delivered === 0) return `No orders delivered in ${RECORD_MONTHS} months`;
  return `On time: ${r.onTime} of ${r.delivered} ${r.delivered === 1 ? "order" : "orders"} in ${RECORD_MONTHS} months`;
}

/** The repeat calibration form: the standard and the stored scan, as vetting's form takes them. */
export const CalibrationScanSchema = z.object(CalibrationScanFields);

/** The schedule form: days between calibration scans. */
export const CalibrationIntervalSchema = z.object({
  intervalDays: z.coerce
    .number({ error: "Give the interval in whole days." })
    .int("Give the interval in whole days.")
    .min(CALIBRATION_INTERVAL_RANGE.min, `Give at least ${CALIBRATION_INTERVAL_RANGE.min} day.`)
    .max(CALIBRATION_INTERVAL_RANGE.max, `Give at most ${CALIBRATION_INTERVAL_RANGE.max} days.`),
});
