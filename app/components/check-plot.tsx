// The interactive pattern of a lattice check (uPlot on a canvas, its own legend and readout off: the key and the
// cursor readout beside the plot are Diffractory's own, docs/design-system.md). The observed counts are drawn last,
// on top, as a thin dark line (and as points once zoomed in far enough); under them the calculated curve — the whole-pattern
// fit when the check made one, else the sum of the freely fitted peaks, labelled as such — and the background;
// below the pattern one tick row per declared phase (an absent phase's row dashed and faint), rows for the lines
// that are not the sample's (tube: Kβ, tungsten L; holder), and the difference observed − calculated. Sample
// peaks no phase indexes get a red triangle above their top. The x axis reads 2θ, d-spacing or Q: the data stay
// on their 2θ points and only the axis's labels change. The freely fitted peaks can be shown as a layer of their
// own. Drag to zoom, Shift + drag or the arrow buttons to pan, the wheel zooms around the pointer, double-click
// resets.
import { type ReactNode, useEffect, useId, useRef, useState } from "react";
import type uPlotType from "uplot";
import "uplot/dist/uPlot.min.css";
import { useFormat } from "~/components/locale";
import { Formula, TwoTheta } from "~/components/symbols";
import { axisNumber, axisUnit, dOf, type PlotAxis, qOf, roundSplits } from "./plot-axis";

export interface CheckPlotTick {
  twoTheta: number;
  /** Miller indices as written ("1 1 1"), or the line's words ("Cu Kβ of (1 1 0)"). */
  label: string;
}

/** One row of tick marks under the pattern: a declared phase's reflections. */
export interface CheckPlotRow {
  /** The phase's name as the key shows it, e.g. "LiFePO4"; null when the sample names none. */
  name: string | null;
  role: "main" | "expected";
  /** False: the scan does not show the phase; its row is drawn dashed and faint. */
  present: boolean;
  ticks: CheckPlotTick[];
  /** Where the ticks come from when the phase was not refined ("declared cell"). */
  note?: string;
}

/** A line that is not the sample's: a tube line (Kβ, tungsten L) or a line of the sample holder. */
export interface CheckPlotMark extends CheckPlotTick {
  kind?: "tube" | "holder";
}

export interface CheckPlotData {
  twoTheta: ArrayLike<number>;
  observed: ArrayLike<number>;
  background: ArrayLike<number>;
  /** The sum of the freely fitted single peaks, with the background. */
  fitted: ArrayLike<number>;
  /** The whole-pattern fit's calculated curve with the background; null or absent when the check made none. */
  calculated?: ArrayLike<number> | null;
  /** Kα1 wavelength, Å: with it the x axis can read d-spacing or Q. */
  wavelength?: number | null;
  /** One tick row of the sample's reflections, used when `rows` is absent. */
  ticks: CheckPlotTick[];
  /** One tick row per declared phase, top to bottom (main first). */
  rows?: CheckPlotRow[];
  /** Peaks that are not the sample's, with their words ("Cu Kβ of (1 1 0)"); a row per kind. */
  marks?: CheckPlotMark[];
  /** Sample peaks no phase indexes: a triangle above each. */
  unindexed?: CheckPlotTick[];
}

// The product's own palette (app/app.css tokens, read from the stylesheet when the canvas is drawn; the values here
// are the tokens' own for a page without it): observed in ink, the calculated curve in the copper anode, the
// difference in beam, background and the lines that are not the sample's in greys.
const TOKENS = {
  observed: ["--color-ink-900", "#1a1a18"],
  calculated: ["--color-anode-500", "#c1682a"],
  background: ["--color-ink-400", "#9a968a"],
  difference: ["--color-beam-600", "#1c6266"],
  free: ["--color-beam-400", "#4a9597"],
  tube: ["--color-ink-600", "#57554f"],
  holder: ["--color-ink-400", "#9a968a"],
  unindexed: ["--color-danger-600", "#b3261e"],
  axis: ["--color-ink-700", "#42413c"],
  grid: ["--color-ink-100", "#efede6"],
  tick: ["--color-ink-300", "#c6c2b5"],
} as const;
type PlotColour = keyof typeof TOKENS;
/** A colour for SVG and CSS: the token itself, so the key follows the stylesheet. */
const cssColour = (c: PlotColour) => `var(${TOKENS[c][0]}, ${TOKENS[c][1]})`;
/** The colours for the canvas, read from the stylesheet's tokens. */
function canvasColours(): Record<PlotColour, string> {
  const style = typeof document === "undefined" ? null : getComputedStyle(document.documentElement);
  return Object.fromEntries(Object.entries(TOKENS).map(([k, [name, fallback]]) => [k, style?.getPropertyValue(name).trim() || fallback])) as Record<
    PlotColour,
    string
  >;
}
/**
 * Tick-row colours, one per phase (main first): the Okabe–Ito set for colour-blind readers, darkened where needed
 * to hold 3 : 1 against white as thin marks (WCAG 1.4.11); rows also differ by position, and the key names each.
 */
const PHASE_COLOURS = ["#0072b2", "#a8508a", "#00785a", "#b84a00", "#6e5c00", "#3d7fb5"];
export const phaseColour = (i: number) => PHASE_COLOURS[i % PHASE_COLOURS.length];

const ROW_PX = 14;

/** The tick rows under the pattern, top to bottom: one per phase, then tube lines and holder lines when any. */
function tickRows(data: CheckPlotData) {
  const rows: TickRow[] = [];
  if (data.rows?.length) {
    data.rows.forEach((r, i) => rows.push({ key: `phase-${i}`, ...phaseRowLabel(r, i), colour: phaseColour(i), faint: !r.present, ticks: r.ticks }));
  } else if (data.ticks.length) {
    rows.push({ key: "phase-0", label: "Reflections of the refined cell", colour: phaseColour(0), faint: false, ticks: data.ticks });
  }
  const marks = data.marks ?? [];
  const tube = marks.filter((m) => m.kind !== "holder");
  const holder = marks.filter((m) => m.kind === "holder");
  const untyped = marks.every((m) => !m.kind);
  if (tube.length) {
    rows.push({
      key: "tube",
      label: untyped ? "Lines that are not the sample's (Kβ, tungsten L, holder)" : "Tube lines (Kβ, tungsten L)",
      colour: cssColour("tube"),
      token: "tube",
      faint: false,
      ticks: tube,
    });
  }
  if (holder.length) rows.push({ key: "holder", label: "Holder lines", colour: cssColour("holder"), token: "holder", faint: false, ticks: holder });
  return rows;
}

interface TickRow {
  key: string;
  /** The row's words in plain text (for the readout); `formula` and `suffix` split them for the key. */
  label: string;
  formula?: string;
  suffix?: string;
  /** The colour for SVG and CSS; `token` names it for the canvas when it is one of the plot's own. */
  colour: string;
  token?: PlotColour;
  faint: boolean;
  ticks: CheckPlotTick[];
}

function phaseRowLabel(r: CheckPlotRow, i: number) {
  const role = r.role === "main" ? "main" : "expected";
  const tail = `${r.present ? "" : ", absent"}${r.note ? ` (${r.note})` : ""}`;
  if (r.name?.trim()) return { label: `${r.name.trim()} — ${role}${tail}`, formula: r.name.trim(), suffix: ` — ${role}${tail}` };
  return { label: `${r.role === "main" ? "Main phase" : `Expected phase ${i + 1}`}${tail}` };
}

/**
 * The y positions (in counts) that put the tick rows and the difference curve under the pattern. Each tick row
 * gets about ROW_PX pixels of a plot `plotPx` high, whatever the counts: T = K / (1 − rows·ROW_PX / plotPx).
 */
function plotLayout(data: CheckPlotData, rowCount = 1, plotPx = 280) {
  const calc = data.calculated ?? data.fitted;
  let lo = Infinity;
  let hi = -Infinity;
  let diffAmp = 0;
  const n = data.twoTheta.length;
  for (let i = 0; i < n; i++) {
    const o = data.observed[i];
    const f = calc[i];
    lo = Math.min(lo, o, f, data.background[i]);
    hi = Math.max(hi, o, f);
    diffAmp = Math.max(diffAmp, Math.abs(o - f));
  }
  if (!Number.isFinite(lo)) [lo, hi] = [0, 1];
  const span = Math.max(hi - lo, 1);
  const fixed = span * (1 + 0.08 + 0.04 + 0.04 + 0.02) + 2 * diffAmp;
  const share = Math.min(0.5, (Math.max(rowCount, 1) * ROW_PX) / Math.max(plotPx, 100));
  const total = fixed / (1 - share);
  const rowGap = (total * share) / Math.max(rowCount, 1);
  const firstRow = lo - 0.04 * span - rowGap / 2;
  const rows = Array.from({ length: Math.max(rowCount, 1) }, (_, i) => firstRow - i * rowGap);
  const diffZero = rows[rows.length - 1] - rowGap / 2 - 0.04 * span - diffAmp;
  return { lo, tickRow: rows[0], rows, rowGap, diffZero, top: hi + 0.08 * span, bottom: diffZero - diffAmp - 0.02 * span };
}

/** The nearest of a sorted 2θ array's indices to a value. */
function nearestIndex(xs: ArrayLike<number>, x: number) {
  let lo = 0;
  let hi = xs.length - 1;
  while (hi - lo > 1) {
    const mid = (lo + hi) >> 1;
    if (xs[mid] < x) lo = mid;
    else hi = mid;
  }
  return Math.abs(xs[lo] - x) <= Math.abs(xs[hi] - x) ? lo : hi;
}

/** The highest observed count within ±0.1° of a peak: where its triangle sits. */
function peakTop(data: CheckPlotData, twoTheta: number) {
  const i = nearestIndex(data.twoTheta, twoTheta);
  let top = data.observed[i];
  for (let j = i - 1; j >= 0 && data.twoTheta[j] >= twoTheta - 0.1; j--) top = Math.max(top, data.observed[j]);
  for (let j = i + 1; j < data.twoTheta.length && data.twoTheta[j] <= twoTheta + 0.1; j++) top = Math.max(top, data.observed[j]);
  return top;
}

const AXIS_WORDS: Record<PlotAxis, { label: string; short: string }> = {
  twoTheta: { label: "2θ (degrees)", short: "2θ" },
  d: { label: "d-spacing (Å), decreasing to the right", short: "d" },
  q: { label: "Q = 4π sin θ / λ (Å⁻¹)", short: "Q" },
};

/** The values under the cursor, for the readout beside the plot. */
interface Readout {
  twoTheta: number;
  observed: number;
  calculated: number;
  difference: number;
}

/**
 * The pattern with its controls, its key and the cursor readout. `keyBeside`: on wide screens the key stands to
 * the right of the canvas (the check page, where the plot shares the first screen with the verdict); else below.
 */
export function CheckPlot({
  data,
  height = 360,
  label = "Powder pattern",
  keyBeside = false,
}: {
  data: CheckPlotData;
  height?: number;
  label?: string;
  keyBeside?: boolean;
}) {
  const fmt = useFormat();
  const id = useId();
  const host = useRef<HTMLDivElement>(null);
  const plot = useRef<uPlotType | null>(null);
  const [range, setRange] = useState<[number, number] | null>(null);
  const [axis, setAxis] = useState<PlotAxis>("twoTheta");
  const [showFree, setShowFree] = useState(false);
  const [hover, setHover] = useState<string | null>(null);
  const [readout, setReadout] = useState<Readout | null>(null);
  // The zoom and the free-peak layer outlive a rebuild for another axis (the same data keeps its window).
  const kept = useRef<{ data: CheckPlotData; range: [number, number] | null; showFree: boolean }>({ data, range: null, showFree: false });
  kept.current.showFree = showFree;
  const n = data.twoTheta.length;
  const full: [number, number] = n > 0 ? [data.twoTheta[0], data.twoTheta[n - 1]] : [0, 1];
  const wavelength = data.wavelength && data.wavelength > 0 ? data.wavelength : null;
  const wholePattern = data.calculated != null && data.calculated.length === n;
  const rows = tickRows(data);
  const plotHeight = height + Math.max(0, rows.length - 1) * ROW_PX;
  const FREE = 2; // series index of the freely fitted peaks' layer (only with a whole-pattern fit)

  // biome-ignore lint/correctness/useExhaustiveDependencies: the plot is rebuilt only when the data, height or axis change; zoom state lives in uPlot
  useEffect(() => {
    let disposed = false;
    let cleanup = () => {};
    if (kept.current.data !== data) kept.current = { data, range: null, showFree: kept.current.showFree };
    (async () => {
      const { default: uPlot } = await import("uplot");
      if (disposed || !host.current) return;
      const el = host.current;
      const layout = plotLayout(data, rows.length, plotHeight - 80);
      const calc = wholePattern ? data.calculated! : data.fitted;
      const unindexed = (data.unindexed ?? []).map((p) => ({ ...p, top: peakTop(data, p.twoTheta) }));
      const dpr = () => devicePixelRatio;
      const C = canvasColours();

      const drawRows = (u: uPlotType) => {
        const ctx = u.ctx;
        const [xMin, xMax] = [u.scales.x.min ?? full[0], u.scales.x.max ?? full[1]];
        const gapPx = Math.abs(u.valToPos(layout.rows[0], "y", true) - u.valToPos(layout.rows[0] - layout.rowGap, "y", true));
        const half = Math.max(2 * dpr(), Math.min(6 * dpr(), gapPx * 0.36));
        ctx.save();
        ctx.lineWidth = Math.max(1, dpr());
        rows.forEach((row, r) => {
          const y = u.valToPos(layout.rows[r], "y", true);
          ctx.strokeStyle = row.token ? C[row.token] : row.colour;
          ctx.globalAlpha = row.faint ? 0.55 : 1;
          ctx.setLineDash(row.faint ? [2 * dpr(), 2 * dpr()] : []);
          ctx.beginPath();
          for (const t of row.ticks) {
            if (t.twoTheta < xMin || t.twoTheta > xMax) continue;
            const x = u.valToPos(t.twoTheta, "x", true);
            ctx.moveTo(x, y - half);
            ctx.lineTo(x, y + half);
          }
          ctx.stroke();
        });
        ctx.globalAlpha = 1;
        ctx.setLineDash([]);
        // Unindexed sample peaks: a red triangle pointing down at the peak, just above its top.
        ctx.fillStyle = C.unindexed;
        for (const p of unindexed) {
          if (p.twoTheta < xMin || p.twoTheta > xMax) continue;
          const x = u.valToPos(p.twoTheta, "x", true);
          const y = u.valToPos(p.top, "y", true) - 4 * dpr();
          ctx.beginPath();
          ctx.moveTo(x, y);
          ctx.lineTo(x - 4 * dpr(), y - 7 * dpr());
          ctx.lineTo(x + 4 * dpr(), y - 7 * dpr());
          ctx.closePath();
          ctx.fill();
        }
        ctx.restore();
      };

      // The tick or triangle under the pointer (within 4 px), named beside the plot: the nearest row, then the nearest tick.
      const hoverWords = (u: uPlotType) => {
        const left = u.cursor.left;
        const top = u.cursor.top;
        if (left == null || top == null || left < 0) return null;
        const nearest = <T extends CheckPlotTick>(ticks: readonly T[]) => {
          let best: T | null = null;
          let bestPx = 4;
          for (const t of ticks) {
            const px = Math.abs(u.valToPos(t.twoTheta, "x") - left);
            if (px <= bestPx) [best, bestPx] = [t, px];
          }
          return best;
        };
        const peak = unindexed.length ? nearest(unindexed) : null;
        if (peak && Math.abs(u.valToPos(peak.top, "y") - top) <= 24) return `Unindexed sample peak at 2θ ${peak.twoTheta.toFixed(3)}°`;
        const byDistance = rows.map((row, r) => ({ row, dy: Math.abs(u.valToPos(layout.rows[r], "y") - top) })).sort((x, y) => x.dy - y.dy);
        const near = byDistance[0];
        if (!near || near.dy > 12) return null;
        const tick = nearest(near.row.ticks);
        return tick ? `${near.row.label}: ${tick.label} at 2θ ${tick.twoTheta.toFixed(3)}°` : null;
      };

      const xAxis: uPlotType.Axis = { label: AXIS_WORDS[axis].label, stroke: C.axis, grid: { stroke: C.grid }, ticks: { stroke: C.tick } };
      if (axis !== "twoTheta" && wavelength) {
        const [toUnit, fromUnit] = axisUnit(axis, wavelength);
        xAxis.splits = (u, _i, min, max) => roundSplits(min, max, toUnit, fromUnit, u.bbox.width / dpr());
        xAxis.values = (_u, splits) => splits.map((x) => axisNumber(toUnit(x)));
      }
      const series: uPlotType.Series[] = [{ label: AXIS_WORDS[axis].short }, { label: "Background", stroke: C.background, width: 1, dash: [4, 3] }];
      if (wholePattern) {
        series.push({
          label: "Freely fitted peaks (sum; separate layer)",
          stroke: C.free,
          width: 1,
          dash: [5, 3],
          show: kept.current.showFree,
        });
        series.push({ label: "Calculated (whole-pattern fit)", stroke: C.calculated, width: 2 });
      } else {
        series.push({ label: "Sum of freely fitted peaks — not a whole-pattern fit", stroke: C.calculated, width: 2 });
      }
      series.push(
        {
          label: wholePattern ? "Difference (observed − calculated, offset)" : "Difference (observed − sum of free peaks, offset)",
          stroke: C.difference,
          width: 1,
        },
        // Last, so it is drawn on top of every other curve; points once zoomed in enough to tell them apart.
        {
          label: "Observed",
          stroke: C.observed,
          width: 1,
          // Points once each has 5 CSS pixels of its own, i.e. when zoomed in.
          points: { show: (u, _s, i0, i1) => (i1 - i0) * 5 * dpr() < u.bbox.width, size: 4, fill: C.observed, stroke: C.observed },
        },
      );
      const x = Float64Array.from(data.twoTheta as ArrayLike<number>);
      const diff = new Float64Array(n);
      for (let i = 0; i < n; i++) diff[i] = data.observed[i] - calc[i] + layout.diffZero;
      const copy = (a: ArrayLike<number>) => Float64Array.from(a as ArrayLike<number>);
      const columns = [x, copy(data.background), ...(wholePattern ? [copy(data.fitted), copy(calc)] : [copy(calc)]), diff, copy(data.observed)];

      const opts: uPlotType.Options = {
        width: Math.max(320, el.clientWidth),
        height: plotHeight,
        pxAlign: false,
        cursor: { drag: { x: true, y: false, setScale: true }, points: { show: false } },
        // The plotting library's own legend stays off: the key and the readout beside the plot are the product's.
        legend: { show: false },
        scales: {
          x: { time: false },
          y: {
            // Keep the tick rows and the difference curve in view whatever the zoom, with room for the triangles.
            range: (_u, min, max) => {
              const hi = Math.max(max, layout.tickRow + 1);
              const lo = Math.min(min, layout.bottom);
              return [lo, hi + 0.06 * (hi - layout.lo)];
            },
          },
        },
        axes: [
          xAxis,
          {
            label: "Counts",
            stroke: C.axis,
            grid: { stroke: C.grid, filter: (_u, splits) => splits.map((v) => (v >= layout.lo - 1e-9 ? v : null)) },
            ticks: { stroke: C.tick, filter: (_u, splits) => splits.map((v) => (v >= layout.lo - 1e-9 ? v : null)) },
            // Counts are labelled on the pattern only, not beside the tick rows and the offset difference.
            filter: (_u, splits) => splits.map((v) => (v >= layout.lo - 1e-9 ? v : null)),
            size: 64,
          },
        ],
        series,
        hooks: {
          draw: [drawRows],
          setScale: [
            (u, key) => {
              if (key !== "x") return;
              const min = u.scales.x.min;
              const max = u.scales.x.max;
              if (min != null && max != null) {
                setRange([min, max]);
                kept.current.range = [min, max];
              }
            },
          ],
          setCursor: [
            (u) => {
              setHover(hoverWords(u));
              const i = u.cursor.idx;
              setReadout(
                i == null || u.cursor.left == null || u.cursor.left < 0
                  ? null
                  : { twoTheta: x[i], observed: data.observed[i], calculated: calc[i], difference: data.observed[i] - calc[i] },
              );
            },
          ],
          setSeries: [(u, i) => i === FREE && wholePattern && setShowFree(u.series[FREE].show !== false)],
        },
      };
      const u = new uPlot(opts, columns as unknown as uPlotType.AlignedData, el);
      plot.current = u;
      const keep = kept.current.range;
      if (keep) u.setScale("x", { min: keep[0], max: keep[1] });

      // Shift + drag pans: handled in the capture phase so uPlot's own drag-to-zoom does not start.
      let panFrom: { x: number; min: number; max: number } | null = null;
      const onDown = (e: MouseEvent) => {
        if (!e.shiftKey || e.button !== 0) return;
        e.stopPropagation();
        e.preventDefault();
        panFrom = { x: e.clientX, min: u.scales.x.min ?? full[0], max: u.scales.x.max ?? full[1] };
      };
      const onMove = (e: MouseEvent) => {
        if (!panFrom) return;
        const perPx = (panFrom.max - panFrom.min) / u.over.clientWidth;
        const shift = clampShift(-(e.clientX - panFrom.x) * perPx, panFrom.min, panFrom.max, full);
        u.setScale("x", { min: panFrom.min + shift, max: panFrom.max + shift });
      };
      const onUp = () => (panFrom = null);
      const onWheel = (e: WheelEvent) => {
        e.preventDefault();
        const min = u.scales.x.min ?? full[0];
        const max = u.scales.x.max ?? full[1];
        const rect = u.over.getBoundingClientRect();
        const at = u.posToVal(e.clientX - rect.left, "x");
        const factor = e.deltaY < 0 ? 0.8 : 1.25;
        const next = zoomAround(min, max, at, factor, full);
        u.setScale("x", { min: next[0], max: next[1] });
      };
      const resize = new ResizeObserver(() => u.setSize({ width: Math.max(320, el.clientWidth), height: plotHeight }));
      el.addEventListener("mousedown", onDown, true);
      window.addEventListener("mousemove", onMove);
      window.addEventListener("mouseup", onUp);
      u.over.addEventListener("wheel", onWheel, { passive: false });
      resize.observe(el);
      el.dataset.ready = "true";
      cleanup = () => {
        el.removeEventListener("mousedown", onDown, true);
        window.removeEventListener("mousemove", onMove);
        window.removeEventListener("mouseup", onUp);
        resize.disconnect();
        u.destroy();
        plot.current = null;
        delete el.dataset.ready;
      };
    })();
    return () => {
      disposed = true;
      cleanup();
    };
  }, [data, plotHeight, axis]);

  const zoomed = range !== null && (range[0] > full[0] + 1e-9 || range[1] < full[1] - 1e-9);
  const pan = (direction: 1 | -1) => {
    const u = plot.current;
    if (!u) return;
    const min = u.scales.x.min ?? full[0];
    const max = u.scales.x.max ?? full[1];
    const shift = clampShift(direction * 0.25 * (max - min), min, max, full);
    u.setScale("x", { min: min + shift, max: max + shift });
  };
  const reset = () => plot.current?.setScale("x", { min: full[0], max: full[1] });
  const toggleFree = (show: boolean) => {
    setShowFree(show);
    plot.current?.setSeries(FREE, { show });
  };
  const unindexedCount = data.unindexed?.length ?? 0;

  const calcWords = wholePattern ? "Calculated — whole-pattern fit" : "Sum of freely fitted peaks — not a whole-pattern fit";
  const key = (
    <ul className="space-y-1 text-xs text-ink-700" aria-label="Key to the plot" data-testid="plot-key">
      <KeyItem series="observed" swatch={<KeyLine colour={cssColour("observed")} width={1.4} dot />}>
        Observed scan
      </KeyItem>
      <KeyItem series="calculated" swatch={<KeyLine colour={cssColour("calculated")} width={2.4} />}>
        {calcWords}
      </KeyItem>
      {wholePattern ? (
        <li data-series="free" data-shown={String(showFree)} className="print:hidden">
          <label className="inline-flex items-start gap-2">
            <input type="checkbox" className="mt-0.5" checked={showFree} onChange={(e) => toggleFree(e.target.checked)} />
            <KeyLine colour={cssColour("free")} width={1.4} dash="4 2" />
            <span>Show the freely fitted peaks (a separate layer)</span>
          </label>
        </li>
      ) : null}
      <KeyItem series="background" swatch={<KeyLine colour={cssColour("background")} width={1.4} dash="4 3" />}>
        Background
      </KeyItem>
      <KeyItem series="difference" swatch={<KeyLine colour={cssColour("difference")} width={1.4} />}>
        Difference, observed − {wholePattern ? "calculated" : "sum"} (below)
      </KeyItem>
      {rows.map((r) => (
        <KeyItem
          key={r.key}
          series={r.key}
          faint={r.faint}
          swatch={
            <svg viewBox="0 0 28 12" className="h-3 w-7 shrink-0" aria-hidden="true" focusable="false">
              <path
                d="M3 1v10M10 1v10M17 1v10M24 1v10"
                stroke={r.colour}
                strokeWidth="1.6"
                strokeDasharray={r.faint ? "2 2" : undefined}
                opacity={r.faint ? 0.55 : 1}
              />
            </svg>
          }
        >
          {r.formula ? (
            <span>
              <Formula>{r.formula}</Formula>
              {r.suffix}
            </span>
          ) : (
            r.label
          )}{" "}
          <span className="text-ink-600">({r.ticks.length})</span>
        </KeyItem>
      ))}
      {unindexedCount ? (
        <KeyItem
          series="unindexed"
          swatch={
            <svg viewBox="0 0 28 12" className="h-3 w-7 shrink-0" aria-hidden="true" focusable="false">
              <path d="M14 10 9.5 2h9Z" fill={cssColour("unindexed")} />
            </svg>
          }
        >
          Sample peaks no declared phase indexes <span className="text-ink-600">({unindexedCount})</span>
        </KeyItem>
      ) : null}
    </ul>
  );
  const readoutLine = (
    <p className="min-h-8 text-xs text-ink-800 tabular-nums print:hidden" data-testid="plot-readout" aria-live="off">
      {readout ? readoutWords(readout, axis, wavelength, fmt.number) : <span className="text-ink-600">Point at the pattern to read its values here.</span>}
      <span className="block text-ink-700" data-testid="plot-hover">
        {hover ?? ""}
      </span>
    </p>
  );

  return (
    <figure className="space-y-2 print:break-inside-avoid">
      <div className="flex flex-wrap items-center justify-between gap-x-6 gap-y-1 text-xs text-ink-600">
        <p data-testid="plot-range">{rangeWords(range && zoomed ? range : null, full, n, axis, wavelength, fmt.number)}</p>
        {wavelength ? (
          <fieldset className="flex flex-wrap items-center gap-3 text-ink-700 print:hidden">
            <legend className="float-left mr-1 font-medium">x axis</legend>
            {(
              [
                ["twoTheta", <TwoTheta key="t" unit />],
                ["d", "d-spacing (Å)"],
                ["q", "Q (Å⁻¹)"],
              ] as const
            ).map(([value, words]) => (
              <label key={value} className="inline-flex items-center gap-1">
                <input type="radio" name={`${id}-axis`} value={value} checked={axis === value} onChange={() => setAxis(value)} />
                {words}
              </label>
            ))}
          </fieldset>
        ) : null}
        <div className="flex gap-1 print:hidden">
          <button type="button" className="btn-secondary px-2 py-1 text-xs" onClick={() => pan(-1)} disabled={!zoomed} aria-label="Pan to lower 2θ">
            ← Pan
          </button>
          <button type="button" className="btn-secondary px-2 py-1 text-xs" onClick={() => pan(1)} disabled={!zoomed} aria-label="Pan to higher 2θ">
            Pan →
          </button>
          <button type="button" className="btn-secondary px-2 py-1 text-xs" onClick={reset} disabled={!zoomed}>
            Reset zoom
          </button>
        </div>
      </div>
      <div className={keyBeside ? "grid gap-3 lg:grid-cols-[minmax(0,1fr)_15rem] print:block" : "space-y-2"}>
        <div
          ref={host}
          role="img"
          aria-label={label}
          // In print the canvas scales to the paper's width (it keeps its drawing; the pointer layers are left out).
          className="check-plot w-full overflow-hidden rounded-card border border-ink-200 bg-white print:border-ink-400 print:[&_.u-over]:hidden print:[&_.u-under]:hidden print:[&_.u-wrap]:h-auto! print:[&_.u-wrap]:w-full! print:[&_.uplot]:w-full! print:[&_canvas]:h-auto! print:[&_canvas]:w-full!"
          data-testid="check-plot"
          data-axis={axis}
          data-calculated={wholePattern ? "whole-pattern" : "free-peaks"}
        />
        <div className={keyBeside ? "space-y-3 print:mt-2" : "space-y-2"}>
          {key}
          {readoutLine}
        </div>
      </div>
      <figcaption className="text-xs text-ink-600">
        {wholePattern ? null : (
          <strong className="mb-1 block font-semibold text-ink-800">
            The copper curve is the sum of freely fitted peaks — not a whole-pattern fit: each peak was fitted on its own, so it follows the scan whatever the
            cell.
          </strong>
        )}
        <details className="print:hidden">
          <summary className="cursor-pointer text-beam-700">How to read and zoom the plot</summary>
          <p className="mt-1">
            {wholePattern
              ? "The dark line (drawn on top) is the observed scan; the copper curve is calculated by the whole-pattern fit from the phases' cells (positions from the cells, intensities free, one shared peak shape), so a wrong cell shows as misfit; the petrol curve below is observed − calculated."
              : "The dark line (drawn on top) is the observed scan; the petrol curve below is observed − the sum of the freely fitted peaks."}{" "}
            The tick rows under the pattern mark each phase&apos;s reflections, one row per phase. Drag across the plot to zoom, Shift + drag to pan, the mouse
            wheel zooms around the pointer, double-click resets; point at a tick to name it.
            {axis === "d" ? " On the d-spacing axis d decreases from left to right, because the data stay on their 2θ points." : ""}
          </p>
        </details>
      </figcaption>
    </figure>
  );
}

/** A line of the key: the swatch drawn as the plot draws the curve or the marks, then the words. */
function KeyItem({ series, swatch, faint, children }: { series: string; swatch: ReactNode; faint?: boolean; children: ReactNode }) {
  return (
    <li className="flex items-start gap-2" data-series={series} data-faint={faint ? "true" : undefined}>
      <span className="mt-0.5 inline-flex">{swatch}</span>
      <span>{children}</span>
    </li>
  );
}

/** A curve's swatch: a short stretch of line in its colour, width and dash; the observed scan with a point on it. */
function KeyLine({ colour, width, dash, dot }: { colour: string; width: number; dash?: string; dot?: boolean }) {
  return (
    <svg viewBox="0 0 28 12" className="h-3 w-7 shrink-0" aria-hidden="true" focusable="false">
      <path d="M1 6h26" stroke={colour} strokeWidth={width} strokeDasharray={dash} />
      {dot ? <circle cx="14" cy="6" r="2.2" fill={colour} /> : null}
    </svg>
  );
}

/** The readout under the cursor in words: "2θ 32.000° · 1,234 counts · calculated 1,180 · difference +54". */
function readoutWords(r: Readout, axis: PlotAxis, wavelength: number | null, number: (v: number) => string) {
  const where =
    axis === "d" && wavelength
      ? `d ${dOf(r.twoTheta, wavelength).toFixed(4)} Å (2θ ${r.twoTheta.toFixed(3)}°)`
      : axis === "q" && wavelength
        ? `Q ${qOf(r.twoTheta, wavelength).toFixed(4)} Å⁻¹ (2θ ${r.twoTheta.toFixed(3)}°)`
        : `2θ ${r.twoTheta.toFixed(3)}°`;
  const diff = Math.round(r.difference);
  return `${where} · ${number(Math.round(r.observed))} counts · calculated ${number(Math.round(r.calculated))} · difference ${diff > 0 ? "+" : diff < 0 ? "−" : ""}${number(Math.abs(diff))}`;
}

function rangeWords(
  range: [number, number] | null,
  full: [number, number],
  n: number,
  axis: PlotAxis,
  wavelength: number | null,
  number: (v: number) => string,
) {
  const twoTheta = (r: [number, number]) => `2θ ${r[0].toFixed(2)}°–${r[1].toFixed(2)}°`;
  const unit = (r: [number, number]) => {
    if (axis === "twoTheta" || !wavelength) return twoTheta(r);
    if (axis === "d") return `d ${dOf(r[0], wavelength).toFixed(3)}–${dOf(r[1], wavelength).toFixed(3)} Å (${twoTheta(r)})`;
    return `Q ${qOf(r[0], wavelength).toFixed(3)}–${qOf(r[1], wavelength).toFixed(3)} Å⁻¹ (${twoTheta(r)})`;
  };
  return range ? `Showing ${unit(range)} of ${twoTheta(full)}` : `Whole scan, ${unit(full)} (${number(n)} points)`;
}

function clampShift(shift: number, min: number, max: number, full: [number, number]) {
  if (min + shift < full[0]) return full[0] - min;
  if (max + shift > full[1]) return full[1] - max;
  return shift;
}

/** A window scaled by `factor` around the value `at`, kept inside the scan. */
export function zoomAround(min: number, max: number, at: number, factor: number, full: [number, number]): [number, number] {
  const span = Math.min(full[1] - full[0], Math.max((max - min) * factor, 0.05));
  let lo = at - (at - min) * (span / (max - min));
  lo = Math.max(full[0], Math.min(lo, full[1] - span));
  return [lo, lo + span];
}
