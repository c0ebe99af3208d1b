// A powder pattern as an inline SVG: observed counts, the fitted profile, reflection tick marks and the difference curve.

export interface PlotTick {
  twoTheta: number;
  /** e.g. the Miller indices "111"; shown as the tick's tooltip. */
  label?: string;
}

const W = 800;
const LEFT = 56;
const RIGHT = 790;
const MAIN_TOP = 12;
const MAIN_BOTTOM = 232;
const TICK_TOP = 240;
const TICK_BOTTOM = 254;
const DIFF_TOP = 264;
const DIFF_BOTTOM = 330;
const H = 360;

function path(xs: readonly number[], ys: readonly number[], x: (v: number) => number, y: (v: number) => number) {
  let d = "";
  for (let i = 0; i < xs.length; i++) d += `${i === 0 ? "M" : "L"}${x(xs[i]).toFixed(1)} ${y(ys[i]).toFixed(1)}`;
  return d;
}

function niceStep(span: number) {
  for (const s of [1, 2, 5, 10, 20, 25, 50]) if (span / s <= 10) return s;
  return 100;
}

/**
 * Observed (dark), fitted (brand colour), background (dashed), ticks of the reflections and observed − fitted
 * below. Every array is on the same 2θ points (degrees).
 */
export function ScanPlot({
  twoTheta,
  observed,
  fitted,
  background,
  ticks,
  title = "Powder diffraction pattern",
}: {
  twoTheta: readonly number[];
  observed: readonly number[];
  fitted?: readonly number[];
  background?: readonly number[];
  ticks?: readonly PlotTick[];
  title?: string;
}) {
  if (twoTheta.length < 2) return <p className="text-sm text-ink-600">No pattern to plot.</p>;
  const x0 = twoTheta[0];
  const x1 = twoTheta[twoTheta.length - 1];
  const top = Math.max(...observed, ...(fitted ?? []));
  const bottom = Math.min(0, ...observed);
  const x = (v: number) => LEFT + ((v - x0) / (x1 - x0)) * (RIGHT - LEFT);
  const y = (v: number) => MAIN_BOTTOM - ((v - bottom) / (top - bottom || 1)) * (MAIN_BOTTOM - MAIN_TOP);
  const difference = fitted ? observed.map((o, i) => o - fitted[i]) : null;
  const diffSpan = difference ? Math.max(1, ...difference.map(Math.abs)) : 1;
  const diffMid = (DIFF_TOP + DIFF_BOTTOM) / 2;
  const yDiff = (v: number) => diffMid - (v / diffSpan) * ((DIFF_BOTTOM - DIFF_TOP) / 2);
  const step = niceStep(x1 - x0);
  const gridLines: number[] = [];
  for (let v = Math.ceil(x0 / step) * step; v <= x1; v += step) gridLines.push(v);
  const axisBottom = difference ? DIFF_BOTTOM : ticks?.length ? TICK_BOTTOM : MAIN_BOTTOM;

  return (
    <figure className="w-full">
      <svg viewBox={`0 0 ${W} ${H}`} className="h-auto w-full" role="img" aria-label={title}>
        <title>{title}</title>
        {gridLines.map((v) => (
          <g key={v}>
            <line x1={x(v)} x2={x(v)} y1={MAIN_TOP} y2={axisBottom} stroke="#eceef2" />
            <text x={x(v)} y={axisBottom + 16} textAnchor="middle" fontSize="11" fill="#4b5466">
              {v}
            </text>
          </g>
        ))}
        <text x={(LEFT + RIGHT) / 2} y={H - 4} textAnchor="middle" fontSize="12" fill="#3a4151">
          2θ (degrees)
        </text>
        <text
          x={14}
          y={(MAIN_TOP + MAIN_BOTTOM) / 2}
          textAnchor="middle"
          fontSize="12"
          fill="#3a4151"
          transform={`rotate(-90 14 ${(MAIN_TOP + MAIN_BOTTOM) / 2})`}
        >
          Counts
        </text>
        <rect x={LEFT} y={MAIN_TOP} width={RIGHT - LEFT} height={MAIN_BOTTOM - MAIN_TOP} fill="none" stroke="#d6dae2" />
        {background ? <path d={path(twoTheta, background, x, y)} fill="none" stroke="#8690a3" strokeWidth="1" strokeDasharray="4 3" /> : null}
        <path d={path(twoTheta, observed, x, y)} fill="none" stroke="#161a22" strokeWidth="1" />
        {fitted ? <path d={path(twoTheta, fitted, x, y)} fill="none" stroke="#5b4ee6" strokeWidth="1.2" strokeOpacity="0.85" /> : null}
        {ticks?.length ? (
          <g stroke="#15803d" strokeWidth="1.2">
            {ticks
              .filter((t) => t.twoTheta >= x0 && t.twoTheta <= x1)
              .map((t, i) => (
                <line key={`${t.twoTheta}-${i}`} x1={x(t.twoTheta)} x2={x(t.twoTheta)} y1={TICK_TOP} y2={TICK_BOTTOM}>
                  {t.label ? <title>{`${t.label} at ${t.twoTheta.toFixed(3)}°`}</title> : null}
                </line>
              ))}
          </g>
        ) : null}
        {difference ? (
          <>
            <line x1={LEFT} x2={RIGHT} y1={diffMid} y2={diffMid} stroke="#d6dae2" />
            <path d={path(twoTheta, difference, x, yDiff)} fill="none" stroke="#c62828" strokeWidth="1" />
          </>
        ) : null}
      </svg>
      <figcaption className="mt-2 flex flex-wrap gap-4 text-xs text-ink-600">
        <span>
          <span aria-hidden="true" className="mr-1 inline-block h-0.5 w-4 bg-ink-900 align-middle" />
          Observed
        </span>
        {fitted ? (
          <span>
            <span aria-hidden="true" className="mr-1 inline-block h-0.5 w-4 bg-beam-500 align-middle" />
            Fitted
          </span>
        ) : null}
        {background ? <span>- - Background</span> : null}
        {ticks?.length ? (
          <span>
            <span aria-hidden="true" className="mr-1 text-ok-600">
              |
            </span>
            Reflections ({ticks.length})
          </span>
        ) : null}
        {difference ? (
          <span>
            <span aria-hidden="true" className="mr-1 inline-block h-0.5 w-4 bg-danger-600 align-middle" />
            Observed − fitted
          </span>
        ) : null}
      </figcaption>
    </figure>
  );
}
