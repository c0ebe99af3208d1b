// A control chart (uPlot on a canvas), generic over what is charted: a material's lots, an instrument's
// calibrations. Points in order along x, each with its words (lot code and date) in the hover line and the x
// axis; the centre line and the control limits; the 1σ and 2σ zones drawn lightly; an optional band (the
// acceptance window, or a tolerance); the baseline's span shaded; points that break a rule marked with a red
// diamond and their rule numbers. The picture is an img whose label is the text summary given
// (docs/design.md#lots-and-trends).
import { CellSymbol } from "~/components/symbols";
import { useEffect, useRef, useState } from "react";
import type uPlotType from "uplot";
import "uplot/dist/uPlot.min.css";

export interface ControlChartPoint {
  /** Position along x (a lot's order on the record, a calibration's number). */
  x: number;
  /** Short words under the axis tick, e.g. the lot code. */
  tick: string;
  /** Words for the hover line, e.g. "Lot C-0412, 3 Mar 2026". */
  words: string;
  value: number | null;
  /** Rule numbers the point breaks (drawn beside its diamond). */
  rules: readonly number[];
}

export interface ControlChartData {
  points: ControlChartPoint[];
  /** Centre, limits and σ of the zones; null: no limits yet (points only). */
  limits: { center: number; ucl: number; lcl: number; sigma?: number | null } | null;
  /** Draw the 1σ and 2σ zones (the upper chart); off for a range chart. */
  zones?: boolean;
  /** A band drawn behind the points, e.g. the acceptance window. */
  band?: { lower: number; upper: number; label: string } | null;
  /** The baseline's first and last x, shaded along the bottom. */
  baseline?: [number, number] | null;
  /** The value axis's words, e.g. "a (Å)". */
  axisLabel: string;
  /**
   * The cell parameter's symbol at the start of axisLabel ("a", "α"): drawn in italics, as crystallography prints
   * it (IUCr Notes for Authors), with the rest of the label upright.
   */
  axisSymbol?: string;
  /** The x axis's words; lots in order unless given (e.g. "Calibration scan, by date"). */
  xLabel?: string;
  /** The points' name in the legend, e.g. "Lot value" or "Moving range". */
  valueLabel?: string;
  digits: number;
}

// The design tokens of app/app.css: ink, beam (the centre line and zones), danger (limits and flags).
const COLOURS = {
  point: "#1a1a18",
  center: "#1c6266",
  limit: "#b3261e",
  zone: "rgba(28, 98, 102, 0.06)",
  zone2: "rgba(28, 98, 102, 0.11)",
  band: "rgba(21, 128, 61, 0.12)",
  bandEdge: "#15803d",
  baseline: "rgba(134, 144, 163, 0.18)",
  flag: "#b3261e",
};
const AXIS_FONT = '12px "DM Sans", Helvetica, Arial, sans-serif';

export function ControlChart({
  data,
  label,
  height = 300,
  testId = "control-chart",
  keyed = true,
}: {
  data: ControlChartData;
  label: string;
  height?: number;
  testId?: string;
  /** Draw the chart's own key under it; off where the page writes a fuller one. */
  keyed?: boolean;
}) {
  const host = useRef<HTMLDivElement>(null);
  const [hover, setHover] = useState<string | null>(null);

  useEffect(() => {
    let disposed = false;
    let cleanup = () => {};
    (async () => {
      const { default: uPlot } = await import("uplot");
      if (disposed || !host.current) return;
      const el = host.current;
      const { points, limits, band } = data;
      const xs = points.map((p) => p.x);
      const values = points.map((p) => p.value);
      const known = values.filter((v): v is number => v !== null);
      const lo = Math.min(...known, ...(limits ? [limits.lcl] : []), ...(band ? [band.lower] : []));
      const hi = Math.max(...known, ...(limits ? [limits.ucl] : []), ...(band ? [band.upper] : []));
      // A flat series still gets an axis whose ticks differ in the digits shown.
      const pad = Math.max((hi - lo) * 0.08, 2 * 10 ** -data.digits);
      const dpr = () => devicePixelRatio;
      const sigma = limits?.sigma ?? null;
      const fmt = (v: number | null) => (v == null ? "—" : v.toFixed(data.digits));

      const drawBehind = (u: uPlotType) => {
        const ctx = u.ctx;
        const { left, width } = u.bbox;
        const yOf = (v: number) => u.valToPos(v, "y", true);
        ctx.save();
        const fillBetween = (a: number, b: number, style: string) => {
          ctx.fillStyle = style;
          const y0 = yOf(Math.max(a, b));
          ctx.fillRect(left, y0, width, yOf(Math.min(a, b)) - y0);
        };
        if (data.baseline) {
          const x0 = u.valToPos(data.baseline[0] - 0.5, "x", true);
          const x1 = u.valToPos(data.baseline[1] + 0.5, "x", true);
          ctx.fillStyle = COLOURS.baseline;
          ctx.fillRect(x0, u.bbox.top + u.bbox.height - 6 * dpr(), x1 - x0, 6 * dpr());
        }
        if (band) {
          fillBetween(band.lower, band.upper, COLOURS.band);
          ctx.strokeStyle = COLOURS.bandEdge;
          ctx.setLineDash([6 * dpr(), 4 * dpr()]);
          ctx.lineWidth = dpr();
          for (const v of [band.lower, band.upper]) {
            ctx.beginPath();
            ctx.moveTo(left, yOf(v));
            ctx.lineTo(left + width, yOf(v));
            ctx.stroke();
          }
          ctx.setLineDash([]);
        }
        if (limits && data.zones && sigma && sigma > 0) {
          fillBetween(limits.center + sigma, limits.center + 2 * sigma, COLOURS.zone);
          fillBetween(limits.center - sigma, limits.center - 2 * sigma, COLOURS.zone);
          fillBetween(limits.center + 2 * sigma, limits.center + 3 * sigma, COLOURS.zone2);
          fillBetween(limits.center - 2 * sigma, limits.center - 3 * sigma, COLOURS.zone2);
        }
        ctx.restore();
      };

      const drawFlags = (u: uPlotType) => {
        const ctx = u.ctx;
        ctx.save();
        ctx.fillStyle = COLOURS.flag;
        ctx.font = `${11 * dpr()}px sans-serif`;
        for (const p of points) {
          if (p.value === null || p.rules.length === 0) continue;
          const x = u.valToPos(p.x, "x", true);
          const y = u.valToPos(p.value, "y", true);
          const r = 6 * dpr();
          ctx.beginPath();
          ctx.moveTo(x, y - r);
          ctx.lineTo(x + r, y);
          ctx.lineTo(x, y + r);
          ctx.lineTo(x - r, y);
          ctx.closePath();
          ctx.fill();
          ctx.fillText(p.rules.join(","), x + r + 2 * dpr(), y - r);
        }
        ctx.restore();
      };

      const constant = (v: number | undefined) => xs.map(() => (v === undefined ? null : v));
      const series: uPlotType.Series[] = [
        { label: "Point", value: (_u, v) => (v == null ? "—" : (points.find((p) => p.x === v)?.words ?? String(v))) },
        {
          label: data.valueLabel ?? "Value",
          stroke: COLOURS.point,
          width: 1,
          spanGaps: true,
          points: { show: true, size: 6, fill: COLOURS.point, stroke: COLOURS.point },
          value: (_u, v) => fmt(v),
        },
      ];
      const columns: (number | null)[][] = [xs, values];
      if (limits) {
        series.push(
          { label: "Centre line", stroke: COLOURS.center, width: 1.5, points: { show: false }, value: (_u, v) => fmt(v) },
          { label: "Upper control limit", stroke: COLOURS.limit, width: 1, dash: [5, 4], points: { show: false }, value: (_u, v) => fmt(v) },
          { label: "Lower control limit", stroke: COLOURS.limit, width: 1, dash: [5, 4], points: { show: false }, value: (_u, v) => fmt(v) },
        );
        columns.push(constant(limits.center), constant(limits.ucl), constant(limits.lcl));
      }
      const tickOf = new Map(points.map((p) => [p.x, p.tick]));
      const opts: uPlotType.Options = {
        width: Math.max(320, el.clientWidth),
        height,
        cursor: { drag: { x: false, y: false }, points: { show: false } },
        // The chart's own key and axis label are drawn as text under and above it, not as the library's legend.
        legend: { show: false },
        scales: {
          x: { time: false, range: () => [Math.min(...xs, 1) - 0.5, Math.max(...xs, 1) + 0.5] },
          y: { range: () => [lo - pad, hi + pad] },
        },
        axes: [
          {
            label: data.xLabel ?? "Lot, in order of measurement",
            stroke: "#42413c",
            font: AXIS_FONT,
            labelFont: AXIS_FONT,
            grid: { stroke: "#efede6" },
            ticks: { stroke: "#dfdcd2" },
            // One tick per point when they fit, else every k-th.
            splits: (u) => {
              const k = Math.max(1, Math.ceil((xs.length * 64 * dpr()) / Math.max(u.bbox.width, 1)));
              return xs.filter((_, i) => i % k === 0);
            },
            values: (_u, splits) => splits.map((x) => tickOf.get(x) ?? ""),
          },
          {
            stroke: "#42413c",
            font: AXIS_FONT,
            labelFont: AXIS_FONT,
            grid: { stroke: "#efede6" },
            ticks: { stroke: "#dfdcd2" },
            size: 80,
            values: (_u, s) => s.map((v) => v.toFixed(data.digits)),
          },
        ],
        series,
        hooks: {
          drawClear: [drawBehind],
          draw: [drawFlags],
          setCursor: [
            (u) => {
              const i = u.cursor.idx;
              const p = i == null ? null : points[i];
              setHover(p ? `${p.words}: ${fmt(p.value)}${p.rules.length ? ` — breaks rule ${p.rules.join(", ")}` : ""}` : null);
            },
          ],
        },
      };
      const u = new uPlot(opts, columns as unknown as uPlotType.AlignedData, el);
      const resize = new ResizeObserver(() => u.setSize({ width: Math.max(320, el.clientWidth), height }));
      resize.observe(el);
      el.dataset.ready = "true";
      cleanup = () => {
        resize.disconnect();
        u.destroy();
        delete el.dataset.ready;
      };
    })();
    return () => {
      disposed = true;
      cleanup();
    };
  }, [data, height]);

  return (
    <figure className="space-y-1">
      <p className="text-xs font-medium text-ink-700" data-testid={`${testId}-axis`}>
        {data.axisSymbol && data.axisLabel.startsWith(data.axisSymbol) ? (
          <>
            <CellSymbol name={data.axisSymbol} />
            {data.axisLabel.slice(data.axisSymbol.length)}
          </>
        ) : (
          data.axisLabel
        )}
      </p>
      <div ref={host} role="img" aria-label={label} className="w-full overflow-hidden rounded-lg border border-ink-200 bg-white" data-testid={testId} />
      {keyed ? (
        <ul className="flex flex-wrap gap-x-5 gap-y-1 text-xs text-ink-700" aria-label="Key to the chart">
          <li>
            <span aria-hidden="true" style={{ color: COLOURS.point }}>
              ●
            </span>{" "}
            {data.valueLabel ?? "Value"}
          </li>
          {data.limits ? (
            <>
              <li>
                <span aria-hidden="true" style={{ color: COLOURS.center }}>
                  —
                </span>{" "}
                centre line
              </li>
              <li>
                <span aria-hidden="true" style={{ color: COLOURS.limit }}>
                  - -
                </span>{" "}
                control limits (3σ)
              </li>
            </>
          ) : null}
          {data.band ? (
            <li>
              <span aria-hidden="true" style={{ color: COLOURS.bandEdge }}>
                ▬
              </span>{" "}
              {data.band.label}
            </li>
          ) : null}
          {data.points.some((p) => p.rules.length > 0) ? (
            <li>
              <span aria-hidden="true" style={{ color: COLOURS.flag }}>
                ◆
              </span>{" "}
              breaks a rule (its numbers beside it)
            </li>
          ) : null}
        </ul>
      ) : null}
      <p className="min-h-4 text-xs text-ink-700" aria-live="polite">
        {hover ?? ""}
      </p>
    </figure>
  );
}
