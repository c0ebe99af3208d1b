// The interactive pattern of a lattice check (uPlot on a canvas): observed counts, background, fitted profile,
// the difference curve offset below, tick marks at the refined cell's reflections, and marks over peaks that are
// not the sample's (Kβ, tungsten L, holder lines). Drag to zoom in 2θ,
// Shift + drag or the arrow buttons to pan, the wheel to zoom around the pointer, double-click to reset.
import { useEffect, useRef, useState } from "react";
import type uPlotType from "uplot";
import "uplot/dist/uPlot.min.css";
import { useFormat } from "~/components/locale";

export interface CheckPlotTick {
  twoTheta: number;
  /** Miller indices as written, e.g. "1 1 1". */
  label: string;
}

export interface CheckPlotData {
  twoTheta: ArrayLike<number>;
  observed: ArrayLike<number>;
  background: ArrayLike<number>;
  fitted: ArrayLike<number>;
  ticks: CheckPlotTick[];
  /** Peaks that are not the sample's, with their words ("Cu Kβ of (1 1 0)"); drawn as marks above the tick row. */
  marks?: CheckPlotTick[];
}

// The product's own palette (app.css): observed in ink, fitted in beam violet, background grey, difference in ok green.
const COLOURS = { observed: "#252a35", fitted: "#5b4ee6", background: "#8690a3", difference: "#15803d", ticks: "#3c31a8", marks: "#b45309" };

/** The y offsets that put the tick row and the difference curve under the pattern. */
export function plotLayout(data: CheckPlotData) {
  let lo = Infinity;
  let hi = -Infinity;
  let diffAmp = 0;
  const n = data.twoTheta.length;
  for (let i = 0; i < n; i++) {
    const o = data.observed[i];
    const f = data.fitted[i];
    lo = Math.min(lo, o, f, data.background[i]);
    hi = Math.max(hi, o, f);
    diffAmp = Math.max(diffAmp, Math.abs(o - f));
  }
  if (!Number.isFinite(lo)) [lo, hi] = [0, 1];
  const span = Math.max(hi - lo, 1);
  const tickRow = lo - 0.05 * span;
  const diffZero = tickRow - 0.05 * span - diffAmp;
  return { tickRow, diffZero, top: hi + 0.04 * span, bottom: diffZero - diffAmp - 0.02 * span };
}

function toColumns(data: CheckPlotData, diffZero: number): uPlotType.AlignedData {
  const n = data.twoTheta.length;
  const x = new Float64Array(n);
  const diff = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    x[i] = data.twoTheta[i];
    diff[i] = data.observed[i] - data.fitted[i] + diffZero;
  }
  const copy = (a: ArrayLike<number>) => Float64Array.from(a as ArrayLike<number>);
  return [x, copy(data.observed), copy(data.background), copy(data.fitted), diff] as unknown as uPlotType.AlignedData;
}

export function CheckPlot({ data, height = 360, label = "Powder pattern" }: { data: CheckPlotData; height?: number; label?: string }) {
  const fmt = useFormat();
  const host = useRef<HTMLDivElement>(null);
  const plot = useRef<uPlotType | null>(null);
  const [range, setRange] = useState<[number, number] | null>(null);
  const n = data.twoTheta.length;
  const full: [number, number] = n > 0 ? [data.twoTheta[0], data.twoTheta[n - 1]] : [0, 1];

  // biome-ignore lint/correctness/useExhaustiveDependencies: the plot is rebuilt only when the data object or height changes; zoom state lives in uPlot
  useEffect(() => {
    let disposed = false;
    let cleanup = () => {};
    (async () => {
      const { default: uPlot } = await import("uplot");
      if (disposed || !host.current) return;
      const el = host.current;
      const layout = plotLayout(data);
      const ticks = data.ticks;
      const drawTicks = (u: uPlotType) => {
        const ctx = u.ctx;
        const y = u.valToPos(layout.tickRow, "y", true);
        const [xMin, xMax] = [u.scales.x.min ?? full[0], u.scales.x.max ?? full[1]];
        ctx.save();
        ctx.strokeStyle = COLOURS.ticks;
        ctx.lineWidth = Math.max(1, devicePixelRatio);
        ctx.beginPath();
        for (const t of ticks) {
          if (t.twoTheta < xMin || t.twoTheta > xMax) continue;
          const x = u.valToPos(t.twoTheta, "x", true);
          ctx.moveTo(x, y - 6 * devicePixelRatio);
          ctx.lineTo(x, y + 6 * devicePixelRatio);
        }
        ctx.stroke();
        // Lines that are not the sample's: a short mark above the tick row, in the caution colour.
        const marks = data.marks ?? [];
        if (marks.length > 0) {
          ctx.strokeStyle = COLOURS.marks;
          ctx.beginPath();
          for (const m of marks) {
            if (m.twoTheta < xMin || m.twoTheta > xMax) continue;
            const x = u.valToPos(m.twoTheta, "x", true);
            ctx.moveTo(x, y - 16 * devicePixelRatio);
            ctx.lineTo(x, y - 8 * devicePixelRatio);
          }
          ctx.stroke();
        }
        ctx.restore();
      };
      const opts: uPlotType.Options = {
        width: Math.max(320, el.clientWidth),
        height,
        pxAlign: false,
        cursor: { drag: { x: true, y: false, setScale: true }, points: { show: false } },
        scales: {
          x: { time: false },
          y: {
            // Keep the tick row and the difference curve in view whatever the zoom.
            range: (u, min, max) => [Math.min(min, layout.bottom), Math.max(max, layout.tickRow + 1)],
          },
        },
        axes: [
          { label: "2θ (degrees)", stroke: "#3a4151", grid: { stroke: "#eceef2" }, ticks: { stroke: "#d6dae2" } },
          { label: "Counts", stroke: "#3a4151", grid: { stroke: "#eceef2" }, ticks: { stroke: "#d6dae2" }, size: 64 },
        ],
        series: [
          { label: "2θ", value: (_u, v) => (v == null ? "—" : `${v.toFixed(3)}°`) },
          { label: "Observed", stroke: COLOURS.observed, width: 1, value: (_u, v) => (v == null ? "—" : v.toFixed(0)) },
          { label: "Background", stroke: COLOURS.background, width: 1, dash: [4, 3], value: (_u, v) => (v == null ? "—" : v.toFixed(0)) },
          { label: "Fitted profile", stroke: COLOURS.fitted, width: 1.5, value: (_u, v) => (v == null ? "—" : v.toFixed(0)) },
          {
            label: "Difference (offset)",
            stroke: COLOURS.difference,
            width: 1,
            value: (_u, v) => (v == null ? "—" : (v - layout.diffZero).toFixed(0)),
          },
        ],
        hooks: {
          draw: [drawTicks],
          setScale: [
            (u, key) => {
              if (key !== "x") return;
              const min = u.scales.x.min;
              const max = u.scales.x.max;
              if (min != null && max != null) setRange([min, max]);
            },
          ],
        },
      };
      const u = new uPlot(opts, toColumns(data, layout.diffZero), el);
      plot.current = u;

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
      const resize = new ResizeObserver(() => u.setSize({ width: Math.max(320, el.clientWidth), height }));
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
  }, [data, height]);

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

  return (
    <figure className="space-y-2" aria-label={label}>
      <div className="flex flex-wrap items-center justify-between gap-2 text-xs text-ink-600">
        <p data-testid="plot-range">
          {range && zoomed
            ? `Showing 2θ ${range[0].toFixed(2)}°–${range[1].toFixed(2)}° of ${full[0].toFixed(2)}°–${full[1].toFixed(2)}°`
            : `Whole scan, 2θ ${full[0].toFixed(2)}°–${full[1].toFixed(2)}° (${fmt.number(n)} points)`}
        </p>
        <div className="flex gap-1">
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
      <div ref={host} className="check-plot w-full overflow-hidden rounded-lg border border-ink-200 bg-white" data-testid="check-plot" />
      <figcaption className="text-xs text-ink-600">
        Drag across the plot to zoom in 2θ, Shift + drag to pan, the mouse wheel zooms around the pointer, double-click resets. Short vertical marks under the
        pattern are the refined cell&apos;s reflections
        {data.marks?.length
          ? "; the orange marks above them are peaks that are not the sample's (Kβ, tungsten L or holder lines, named in the peaks table)"
          : ""}
        ; the green curve below is observed − fitted.
      </figcaption>
    </figure>
  );
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
