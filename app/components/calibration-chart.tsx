// One control chart of an instrument's calibration history (uPlot on a canvas): the points over time, the centre
// line and the 3σ limits, and the points that break a Western Electric rule drawn as larger red diamonds. The
// canvas is hidden from screen readers; the figure's caption says what it shows and the table below lists every
// scan.
import { useEffect, useRef } from "react";
import type uPlotType from "uplot";
import "uplot/dist/uPlot.min.css";
import { Badge, type BadgeTone } from "~/components/ui";
import { CALIBRATION_STATE_LABELS, type CalibrationState, type ChartSeries } from "~/domain/calibration-record";

const INK = "#1f2937";
const LIMIT = "#b45309";
const CENTRE = "#4b5563";
const FLAG = "#b91c1c";

export function CalibrationChart({ series, decimals }: { series: ChartSeries; decimals: number }) {
  const host = useRef<HTMLDivElement>(null);
  useEffect(() => {
    const el = host.current;
    if (!el || series.values.length === 0) return;
    let plot: uPlotType | null = null;
    let cancelled = false;
    void (async () => {
      const { default: uPlot } = await import("uplot");
      if (cancelled) return;
      const n = series.values.length;
      const flat = (v: number | undefined) => Array.from({ length: n }, () => v ?? null);
      const l = series.limits;
      const flagged = series.values.map((v, i) => (series.flags[i]?.length ? v : null));
      const fmt = (v: number | null) => (v === null ? "—" : v.toFixed(decimals));
      const opts: uPlotType.Options = {
        width: Math.max(320, el.clientWidth),
        height: 220,
        legend: { show: true },
        scales: { x: { time: true } },
        axes: [{}, { values: (_u, splits) => splits.map((s) => s.toFixed(decimals)), size: 70 }],
        series: [
          {},
          { label: series.label, stroke: INK, width: 1, points: { show: true, size: 6, fill: INK }, value: (_u, v) => fmt(v) },
          { label: "Centre", stroke: CENTRE, width: 1, dash: [2, 4], points: { show: false }, value: (_u, v) => fmt(v) },
          { label: "Upper limit", stroke: LIMIT, width: 1, dash: [6, 4], points: { show: false }, value: (_u, v) => fmt(v) },
          { label: "Lower limit", stroke: LIMIT, width: 1, dash: [6, 4], points: { show: false }, value: (_u, v) => fmt(v) },
          { label: "Breaks a rule", stroke: FLAG, width: 0, paths: () => null, points: { show: true, size: 11, fill: FLAG }, value: (_u, v) => fmt(v) },
        ],
      };
      const data = [series.times, series.values, flat(l?.center), flat(l?.ucl), flat(l?.lcl), flagged] as unknown as uPlotType.AlignedData;
      plot = new uPlot(opts, data, el);
    })();
    const resize = () => plot?.setSize({ width: Math.max(320, el.clientWidth), height: 220 });
    window.addEventListener("resize", resize);
    return () => {
      cancelled = true;
      window.removeEventListener("resize", resize);
      plot?.destroy();
    };
  }, [series, decimals]);
  return <div ref={host} aria-hidden="true" className="min-h-56 w-full" />;
}

/** The chart's summary in words, for the figure caption. */
export function chartSummary(series: ChartSeries, decimals: number): string {
  const n = series.values.length;
  if (n === 0) return `${series.label}: no scans yet.`;
  const flagged = series.flags.filter((f) => f.length > 0).length;
  const l = series.limits;
  const limits = l
    ? `centre ${l.center.toFixed(decimals)} ${series.unit}, limits ${l.lcl.toFixed(decimals)} to ${l.ucl.toFixed(decimals)} ${series.unit} from the first ${l.baselinePoints} passing scans`
    : "no control limits yet (they need two passing scans)";
  const last = series.values[n - 1];
  return `${series.label}: ${n} ${n === 1 ? "scan" : "scans"}, latest ${last.toFixed(decimals)} ${series.unit}; ${limits}; ${flagged} ${flagged === 1 ? "point breaks" : "points break"} a Western Electric rule.`;
}

const STATE_TONES: Record<CalibrationState, BadgeTone> = { none: "neutral", ok: "ok", overdue: "caution", out_of_control: "danger" };

/** An instrument's calibration state as a badge (word, shape and colour). */
export function CalibrationStateBadge({ state }: { state: CalibrationState }) {
  return <Badge tone={STATE_TONES[state]}>{CALIBRATION_STATE_LABELS[state]}</Badge>;
}
