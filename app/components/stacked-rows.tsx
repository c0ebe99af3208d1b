// Tables on a phone: below the `sm` breakpoint (640 px) a table's rows stack as small cards — the first cell as the
// card's title, every other cell as "heading: value" — so a long list never scrolls sideways; from `sm` up it is an
// ordinary table. The table stays a <table> (th scope, caption) in the markup; each cell carries its column's
// heading in `data-label`, which the narrow layout prints before the value (docs/design-system.md, "Phones, tables,
// dates and the safety caution").
import { Children, cloneElement, Fragment, isValidElement, useLayoutEffect, useRef, type ReactElement, type ReactNode } from "react";

/**
 * The classes that stack a `.table` on a narrow screen. Headings stay in the markup for screen readers (sr-only);
 * each cell's label is its `data-label`, drawn in a fixed left column so the value keeps its own layout.
 */
export const STACKED_TABLE =
  "max-sm:block max-sm:[&_tbody]:block max-sm:[&_thead]:sr-only max-sm:[&_tbody_tr]:block max-sm:[&_tbody_tr]:border-b max-sm:[&_tbody_tr]:border-ink-200 max-sm:[&_tbody_tr]:px-3 max-sm:[&_tbody_tr]:py-2.5 max-sm:[&_tbody_tr:last-child]:border-b-0 max-sm:[&_td]:relative max-sm:[&_td]:block max-sm:[&_td]:min-h-6 max-sm:[&_td]:border-0 max-sm:[&_td]:py-0.5 max-sm:[&_td]:pr-0 max-sm:[&_td]:pl-[7.5rem] max-sm:[&_td]:text-left max-sm:[&_td]:whitespace-normal max-sm:[&_td]:break-words max-sm:[&_td]:before:absolute max-sm:[&_td]:before:left-0 max-sm:[&_td]:before:top-1 max-sm:[&_td]:before:w-28 max-sm:[&_td]:before:text-xs max-sm:[&_td]:before:font-sans max-sm:[&_td]:before:font-medium max-sm:[&_td]:before:normal-case max-sm:[&_td]:before:text-ink-500 max-sm:[&_td]:before:content-[attr(data-label)] max-sm:[&_td:not([data-label])]:pl-0 max-sm:[&_td:first-child]:pl-0 max-sm:[&_td:first-child]:pb-1 max-sm:[&_td:first-child]:text-base max-sm:[&_td:first-child]:font-semibold max-sm:[&_td:first-child]:before:hidden";

type Cell = ReactElement<{ colSpan?: number; "data-label"?: string; children?: ReactNode }>;
type Row = ReactElement<{ children?: ReactNode }>;

/** The row's cells with their column's heading as `data-label` (a colSpan cell takes the first heading it spans). */
function labelRow(row: Row, labels: string[]): ReactNode {
  let column = 0;
  const cells = Children.toArray(row.props.children).map((child) => {
    if (!isValidElement(child) || (child.type !== "td" && child.type !== "th")) return child;
    const cell = child as Cell;
    const label = labels[column] ?? "";
    column += Math.max(1, Number(cell.props.colSpan ?? 1));
    if (cell.props["data-label"] !== undefined || !label) return cell;
    return cloneElement(cell, { "data-label": label });
  });
  return cloneElement(row, {}, ...cells);
}

/**
 * Gives every cell of the rows written directly as <tr> (also inside fragments and arrays) its column heading.
 * Rows drawn by a component of their own are labelled after hydration from the table's headings (useStackLabels).
 */
export function labelRows(children: ReactNode, labels: string[]): ReactNode {
  return Children.map(children, (child) => {
    if (!isValidElement(child)) return child;
    if (child.type === "tr") return labelRow(child as Row, labels);
    if (child.type === Fragment) {
      const frag = child as ReactElement<{ children?: ReactNode }>;
      return cloneElement(frag, {}, labelRows(frag.props.children, labels));
    }
    return child;
  });
}

/** For rows that are components of their own: copies each heading's text onto its column's cells that have none. */
export function useStackLabels<T extends HTMLElement>() {
  const ref = useRef<T>(null);
  useLayoutEffect(() => {
    const table = ref.current?.querySelector("table");
    if (!table) return;
    const headings = [...table.querySelectorAll("thead th")].map((th) => (th.textContent ?? "").replace(/, sort (ascending|descending)\s*$/, "").trim());
    for (const tr of table.querySelectorAll("tbody tr")) {
      let column = 0;
      for (const cell of tr.children) {
        const label = headings[column] ?? "";
        column += Math.max(1, Number(cell.getAttribute("colspan") ?? 1));
        if (!cell.hasAttribute("data-label") && label) cell.setAttribute("data-label", label);
      }
    }
  });
  return ref;
}
