// Values written with their symbols (docs/design-system.md, "Symbols"): a declared cell "a 10.33, b 6.01, c 4.69 Å;
// α 90°, β 90°, γ 90°" with italic cell symbols, an acceptance window "a ± 0.002 Å". The stored and sent text stays as it was.
import { CellSymbol } from "~/components/symbols";
import { CELL_KEYS, type AcceptanceWindow } from "~/diffraction/phases";

type CellView = Record<"cellA" | "cellB" | "cellC" | "cellAlpha" | "cellBeta" | "cellGamma", number | null>;

/** A declared cell: "a 10.33, b 6.01, c 4.69 Å; α 90°, β 90°, γ 90°" with the symbols in italics; "—" without one. */
export function CellValues({ cell: s }: { cell: CellView }) {
  if (s.cellA === null) return <>—</>;
  return (
    <span className="symbol" data-symbol="cell-values">
      <CellSymbol name="a" /> {s.cellA}, <CellSymbol name="b" /> {s.cellB}, <CellSymbol name="c" /> {s.cellC} Å; <CellSymbol name="alpha" /> {s.cellAlpha}°,{" "}
      <CellSymbol name="beta" /> {s.cellBeta}°, <CellSymbol name="gamma" /> {s.cellGamma}°
    </span>
  );
}

/** An acceptance window, e.g. "a ± 0.002 Å, c ± 0.3 %" with the symbols in italics; "none" when no parameter has one. */
export function WindowValues({ window }: { window: AcceptanceWindow | null | undefined }) {
  const keys = CELL_KEYS.filter((k) => window?.[k]);
  if (!window || keys.length === 0) return <>none</>;
  return (
    <span className="symbol">
      {keys.map((k, i) => {
        const w = window[k]!;
        const unit = w.unit === "percent" ? " %" : ["a", "b", "c"].includes(k) ? " Å" : "°";
        return (
          <span key={k}>
            {i > 0 ? ", " : null}
            <CellSymbol name={k} /> ± {w.plusMinus}
            {unit}
          </span>
        );
      })}
    </span>
  );
}
