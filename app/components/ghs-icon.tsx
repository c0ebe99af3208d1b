// GHS hazard pictograms drawn as Diffractory's own icons: the red-bordered diamond of the UN GHS with a plain symbol inside.
import type { ReactNode } from "react";
import { ghsName, type GhsCode } from "~/domain/hazard-codes";

const INK = "#161a22";

/** The symbols, each drawn from simple shapes on a 100 × 100 grid centred on the diamond. */
const SYMBOLS: Record<GhsCode, ReactNode> = {
  // A round charge with a fuse, and fragments flying from it.
  GHS01: (
    <g fill={INK}>
      <circle cx="44" cy="58" r="13" />
      <path d="M52 47 l6 -7" stroke={INK} strokeWidth="3" />
      <path d="M60 30 l3 7 l7 -3 l-3 7 l7 3 l-7 3 l3 7 l-7 -3" />
      <rect x="24" y="34" width="6" height="6" transform="rotate(20 27 37)" />
      <rect x="66" y="60" width="6" height="6" transform="rotate(-25 69 63)" />
    </g>
  ),
  // A flame rising from a bar.
  GHS02: (
    <g fill={INK}>
      <path d="M50 24 C58 36 66 42 64 56 C63 65 57 70 50 70 C42 70 36 64 36 56 C36 48 42 44 44 36 C47 42 48 46 52 48 C54 40 52 32 50 24 Z" />
      <rect x="32" y="73" width="36" height="4" />
    </g>
  ),
  // A flame sitting on a ring.
  GHS03: (
    <g>
      <path d="M50 22 C56 31 61 36 60 45 C59 51 55 54 50 54 C45 54 40 50 40 45 C40 40 44 37 45 32 C47 36 48 38 51 40 C52 34 51 28 50 22 Z" fill={INK} />
      <circle cx="50" cy="63" r="9" fill="none" stroke={INK} strokeWidth="5" />
      <rect x="32" y="76" width="36" height="4" fill={INK} />
    </g>
  ),
  // A cylinder lying on its side with its valve.
  GHS04: (
    <g fill={INK}>
      <rect x="26" y="50" width="42" height="18" rx="9" />
      <rect x="67" y="55" width="6" height="8" />
      <rect x="73" y="53" width="3" height="12" />
    </g>
  ),
  // Two drops falling from a tilted vessel onto a notched surface.
  GHS05: (
    <g fill={INK}>
      <rect x="30" y="26" width="16" height="8" transform="rotate(-20 38 30)" />
      <rect x="54" y="26" width="16" height="8" transform="rotate(20 62 30)" />
      <path d="M38 40 c3 5 4 7 4 9 a4 4 0 0 1 -8 0 c0 -2 1 -4 4 -9 Z" />
      <path d="M62 40 c3 5 4 7 4 9 a4 4 0 0 1 -8 0 c0 -2 1 -4 4 -9 Z" />
      <path d="M26 64 h18 l4 -5 l4 5 h22 v8 h-48 Z" />
    </g>
  ),
  // A skull over two crossed bones.
  GHS06: (
    <g>
      <path d="M30 70 L70 50 M30 50 L70 70" stroke={INK} strokeWidth="6" strokeLinecap="round" />
      <circle cx="50" cy="40" r="14" fill={INK} />
      <rect x="43" y="48" width="14" height="9" rx="2" fill={INK} />
      <circle cx="44.5" cy="39" r="4" fill="#fff" />
      <circle cx="55.5" cy="39" r="4" fill="#fff" />
    </g>
  ),
  // An exclamation mark.
  GHS07: (
    <g fill={INK}>
      <path d="M45 24 h10 l-2 34 h-6 Z" />
      <circle cx="50" cy="68" r="5.5" />
    </g>
  ),
  // A head and shoulders with a burst on the chest.
  GHS08: (
    <g fill={INK}>
      <circle cx="50" cy="30" r="8" />
      <path d="M30 76 C30 52 38 42 50 42 C62 42 70 52 70 76 Z" />
      <path d="M50 50 l3 7 l7 -2 l-4 6 l5 5 l-7 0 l-1 7 l-3 -6 l-3 6 l-1 -7 l-7 0 l5 -5 l-4 -6 l7 2 Z" fill="#fff" />
    </g>
  ),
  // A bare tree and a fish above the water line.
  GHS09: (
    <g>
      <path d="M36 66 V36 M36 46 L28 38 M36 42 L44 32 M36 54 L44 48" stroke={INK} strokeWidth="3.5" strokeLinecap="round" fill="none" />
      <path d="M50 62 C56 55 66 55 70 61 L76 56 L76 68 L70 63 C66 69 56 69 50 62 Z" fill={INK} />
      <rect x="26" y="72" width="50" height="3" fill={INK} />
    </g>
  ),
};

/** One GHS pictogram; the code and name are its accessible name, and are shown beside it when `showLabel`. */
export function GhsIcon({ code, className = "h-10 w-10", showLabel = false }: { code: GhsCode; className?: string; showLabel?: boolean }) {
  const name = `${code} ${ghsName(code)}`;
  const icon = (
    <svg viewBox="0 0 100 100" className={className} role="img" aria-label={name}>
      <title>{name}</title>
      <path d="M50 5 L95 50 L50 95 L5 50 Z" fill="#fff" stroke="#d0121b" strokeWidth="7" strokeLinejoin="miter" />
      {SYMBOLS[code]}
    </svg>
  );
  if (!showLabel) return icon;
  return (
    <span className="inline-flex items-center gap-2">
      {icon}
      <span className="text-sm">
        <span className="font-mono text-xs text-ink-500">{code}</span> {ghsName(code)}
      </span>
    </span>
  );
}
