// Symbols as the trade writes them (docs/design-system.md, "Symbols"): formulas with subscript counts and superscript
// charges, italic cell parameters, Miller indices in lower case with a bar over negative indices. None of these
// carries a text-transform, and the `symbol` class resets one a parent might set, so "α" never becomes "Α".
import type { ReactNode } from "react";
import { formulaRuns } from "~/domain/formula";

/**
 * A formula, or running text that holds one ("LiFePO4 (olivine)", a request's title): counts subscript, charges
 * superscript. Text without a formula comes back as it is, unmarked.
 */
export function Formula({ children }: { children: string }) {
  const runs = formulaRuns(children);
  if (runs.every((r) => r.kind === "text")) return children;
  return (
    <span className="symbol" data-symbol="formula">
      {runs.map((r, i) => (r.kind === "sub" ? <sub key={i}>{r.text}</sub> : r.kind === "sup" ? <sup key={i}>{r.text}</sup> : r.text))}
    </span>
  );
}

export type CellParameterName = "a" | "b" | "c" | "alpha" | "beta" | "gamma" | "V";
const CELL_SYMBOLS: Record<CellParameterName, string> = { a: "a", b: "b", c: "c", alpha: "α", beta: "β", gamma: "γ", V: "V" };

/** The symbol of a cell parameter, in italics as crystallography prints it (a, b, c, α, β, γ, V). */
export function CellSymbol({ name }: { name: CellParameterName | string }) {
  return (
    <i className="symbol" data-symbol="cell">
      {CELL_SYMBOLS[name as CellParameterName] ?? name}
    </i>
  );
}

/** A cell parameter's symbol with its unit, for column headings: "a (Å)", "α (°)", "V (Å³)". */
export function CellHeading({ name }: { name: CellParameterName | string }) {
  const unit = name === "V" ? "Å³" : ["alpha", "beta", "gamma"].includes(name) ? "°" : "Å";
  return (
    <span className="symbol">
      <CellSymbol name={name} /> ({unit})
    </span>
  );
}

/**
 * Miller indices: from numbers, or from text as the check writes them ("1 1 0", "-1 0 2"). A negative index is
 * drawn with a bar over it; brackets are added when asked: (hkl) for a plane, {hkl} for a family.
 */
export function Hkl({ indices, brackets }: { indices: number[] | string; brackets?: "()" | "{}" }) {
  const values =
    typeof indices === "string"
      ? indices
          .trim()
          .split(/[\s,]+/)
          .filter(Boolean)
      : indices.map(String);
  // Multi-digit indices keep spaces between them, single digits are written together: 110, 1 0 12.
  const spaced = values.some((v) => v.replace("-", "").length > 1);
  const body: ReactNode[] = [];
  values.forEach((v, i) => {
    if (i > 0 && spaced) body.push(" ");
    body.push(
      v.startsWith("-") ? (
        <span key={i}>
          <span className="sr-only">minus </span>
          <span className="overline">{v.slice(1)}</span>
        </span>
      ) : (
        v
      ),
    );
  });
  return (
    <span className="symbol tabular-nums" data-symbol="hkl">
      {brackets?.[0]}
      {body}
      {brackets?.[1]}
    </span>
  );
}

/** The heading of a Miller-index column: hkl in italics. */
export function HklHeading() {
  return (
    <i className="symbol" data-symbol="hkl">
      hkl
    </i>
  );
}

/** 2θ as a heading or label, with its unit when asked. */
export function TwoTheta({ unit }: { unit?: boolean }) {
  return (
    <span className="symbol" data-symbol="two-theta">
      2<i>θ</i>
      {unit ? " (°)" : null}
    </span>
  );
}
