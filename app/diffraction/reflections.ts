// Allowed powder reflections of a cell: lattice-centering absences, Laue-equivalent planes merged with
// their powder multiplicity, sorted by descending d-spacing.

import { type Cell, type Centering, type CrystalSystem, type Hkl, metricCoefficients, twoThetaFromD } from "./cell";

/** One powder reflection: the representative hkl, d in Å, and how many planes share it by symmetry. */
export interface Reflection {
  h: number;
  k: number;
  l: number;
  d: number;
  multiplicity: number;
  /** Every Laue-equivalent hkl including the representative (only when asked for). */
  equivalents?: Hkl[];
}

export interface ReflectionOptions {
  /** Smallest d-spacing to list, Å. */
  dMin: number;
  /** Largest d-spacing to list, Å. */
  dMax?: number;
  /** Attach the list of equivalent hkl to each reflection (the simulator sums |F|² over them). */
  equivalents?: boolean;
}

/** Whether the lattice centering lets hkl diffract (International Tables Vol. A reflection conditions). */
export function centeringAllows(centering: Centering, h: number, k: number, l: number): boolean {
  switch (centering) {
    case "P":
      return true;
    case "I":
      return ((h + k + l) & 1) === 0;
    case "F":
      return ((h + k) & 1) === 0 && ((k + l) & 1) === 0;
    case "A":
      return ((k + l) & 1) === 0;
    case "B":
      return ((h + l) & 1) === 0;
    case "C":
      return ((h + k) & 1) === 0;
    case "R":
      // Obverse setting on hexagonal axes.
      return (((-h + k + l) % 3) + 3) % 3 === 0;
  }
}

// Operations on Miller indices as integer 3×3 matrices (row-major, hkl' = M·hkl). Each Laue group is the
// closure of a few generators; the centrosymmetric −1 is in every one (Friedel's law).
type Op = readonly number[];

const INVERSION: Op = [-1, 0, 0, 0, -1, 0, 0, 0, -1];
const GENERATORS: Readonly<Record<CrystalSystem, Op[]>> = {
  cubic: [INVERSION, [0, -1, 0, 1, 0, 0, 0, 0, 1], [0, 0, 1, 1, 0, 0, 0, 1, 0]],
  tetragonal: [INVERSION, [0, -1, 0, 1, 0, 0, 0, 0, 1], [1, 0, 0, 0, -1, 0, 0, 0, -1]],
  // Hexagonal axes: six-fold (h, k) → (−k, h + k); two-fold (h, k, l) → (k, h, l).
  hexagonal: [INVERSION, [0, -1, 0, 1, 1, 0, 0, 0, 1], [0, 1, 0, 1, 0, 0, 0, 0, 1]],
  // −3m1: three-fold (h, k) → (k, −h − k); two-fold (h, k, l) → (k, h, −l).
  trigonal: [INVERSION, [0, 1, 0, -1, -1, 0, 0, 0, 1], [0, 1, 0, 1, 0, 0, 0, 0, -1]],
  orthorhombic: [INVERSION, [-1, 0, 0, 0, -1, 0, 0, 0, 1], [-1, 0, 0, 0, 1, 0, 0, 0, -1]],
  monoclinic: [INVERSION, [-1, 0, 0, 0, 1, 0, 0, 0, -1]],
  triclinic: [INVERSION],
};

function compose(x: Op, y: Op): Op {
  const out = new Array<number>(9);
  for (let i = 0; i < 3; i++) for (let j = 0; j < 3; j++) out[i * 3 + j] = x[i * 3] * y[j] + x[i * 3 + 1] * y[3 + j] + x[i * 3 + 2] * y[6 + j];
  return out;
}

function closeGroup(generators: Op[]): Int8Array {
  const ops: Op[] = [[1, 0, 0, 0, 1, 0, 0, 0, 1]];
  const seen = new Set(ops.map((o) => o.join(",")));
  for (let i = 0; i < ops.length; i++) {
    for (const g of generators) {
      const next = compose(g, ops[i]);
      const key = next.join(",");
      if (!seen.has(key)) {
        seen.add(key);
        ops.push(next);
      }
    }
  }
  return Int8Array.from(ops.flat());
}

const LAUE_OPS: Record<CrystalSystem, Int8Array> = Object.fromEntries(
  (Object.keys(GENERATORS) as CrystalSystem[]).map((s) => [s, closeGroup(GENERATORS[s])]),
) as Record<CrystalSystem, Int8Array>;

// Integer key of an hkl for set membership; |index| < 512 is far beyond any powder pattern.
const keyOf = (h: number, k: number, l: number) => ((h + 512) * 1024 + (k + 512)) * 1024 + (l + 512);

// Representative preference: fewest negative indices, then the lexicographically largest (h, k, l);
// gives the indices the trade writes (110 rather than 2−10 on hexagonal axes).
function preferred(h: number, k: number, l: number, H: number, K: number, L: number): boolean {
  const neg = (h < 0 ? 1 : 0) + (k < 0 ? 1 : 0) + (l < 0 ? 1 : 0);
  const NEG = (H < 0 ? 1 : 0) + (K < 0 ? 1 : 0) + (L < 0 ? 1 : 0);
  if (neg !== NEG) return neg < NEG;
  if (h !== H) return h > H;
  if (k !== K) return k > K;
  return l > L;
}

// Per-system quick test that an hkl can be a representative, to skip most of the box before the orbit
// is built: every orbit of these Laue classes has its preferred member inside the region.
const MAY_REPRESENT: Record<CrystalSystem, (h: number, k: number, l: number) => boolean> = {
  cubic: (h, k, l) => h >= k && k >= l && l >= 0,
  tetragonal: (h, k, l) => h >= k && k >= 0 && l >= 0,
  hexagonal: (h, k, l) => h >= k && k >= 0 && l >= 0,
  orthorhombic: (h, k, l) => h >= 0 && k >= 0 && l >= 0,
  // In 2/m the member with k ≥ 0 always has fewer negative indices than its mirror image.
  monoclinic: (_h, k) => k >= 0,
  // No shortcut: the orbit test decides.
  trigonal: () => true,
  triclinic: () => true,
};

/**
 * The allowed reflections of a cell between dMin and dMax, one per set of Laue-equivalent planes, with
 * the powder multiplicity; centering absences applied; sorted by descending d. Accidental coincidences
 * (different planes at the same d, e.g. cubic 511 and 333) stay separate reflections.
 */
export function allowedReflections(cell: Cell, system: CrystalSystem, centering: Centering, options: ReflectionOptions): Reflection[] {
  const { dMin, dMax = Number.POSITIVE_INFINITY, equivalents: withEquivalents = false } = options;
  if (!(dMin > 0)) throw new RangeError("dMin must be a positive d-spacing in Å");
  const m = metricCoefficients(cell);
  const qMax = (1 / (dMin * dMin)) * (1 + 1e-12);
  const qMin = Number.isFinite(dMax) ? (1 / (dMax * dMax)) * (1 - 1e-12) : 0;
  // |h| ≤ a/dMin because h = r·a with |r| = 1/d.
  const hMax = Math.floor(cell.a / dMin + 1e-9);
  const kMax = Math.floor(cell.b / dMin + 1e-9);
  const lMax = Math.floor(cell.c / dMin + 1e-9);
  const ops = LAUE_OPS[system];
  const nOps = ops.length / 9;
  const mayRepresent = MAY_REPRESENT[system];
  const orbitH = new Int32Array(nOps);
  const orbitK = new Int32Array(nOps);
  const orbitL = new Int32Array(nOps);
  const seen = new Set<number>();
  const out: Reflection[] = [];

  for (let h = -hMax; h <= hMax; h++) {
    for (let k = -kMax; k <= kMax; k++) {
      for (let l = -lMax; l <= lMax; l++) {
        if (!mayRepresent(h, k, l)) continue;
        if (h === 0 && k === 0 && l === 0) continue;
        const q = m.A * h * h + m.B * k * k + m.C * l * l + m.D * k * l + m.E * h * l + m.F * h * k;
        if (q > qMax || q < qMin) continue;
        if (!centeringAllows(centering, h, k, l)) continue;
        // Build the orbit; stop early if a preferred member exists (then this hkl is not the representative).
        seen.clear();
        let count = 0;
        let isRepresentative = true;
        for (let o = 0; o < nOps && isRepresentative; o++) {
          const b = o * 9;
          const H = ops[b] * h + ops[b + 1] * k + ops[b + 2] * l;
          const K = ops[b + 3] * h + ops[b + 4] * k + ops[b + 5] * l;
          const L = ops[b + 6] * h + ops[b + 7] * k + ops[b + 8] * l;
          if (preferred(H, K, L, h, k, l)) isRepresentative = false;
          const key = keyOf(H, K, L);
          if (!seen.has(key)) {
            seen.add(key);
            orbitH[count] = H;
            orbitK[count] = K;
            orbitL[count] = L;
            count++;
          }
        }
        if (!isRepresentative) continue;
        const reflection: Reflection = { h, k, l, d: 1 / Math.sqrt(q), multiplicity: count };
        if (withEquivalents) {
          const eq: Hkl[] = new Array(count);
          for (let i = 0; i < count; i++) eq[i] = { h: orbitH[i], k: orbitK[i], l: orbitL[i] };
          reflection.equivalents = eq;
        }
        out.push(reflection);
      }
    }
  }
  // Descending d; ties broken by the indices so the order is reproducible.
  out.sort((x, y) => y.d - x.d || y.h - x.h || y.k - x.k || y.l - x.l);
  return out;
}

/** 2θ in degrees of a reflection for a wavelength in Å (NaN beyond the Bragg limit). */
export function twoThetaOf(reflection: { d: number }, wavelength: number): number {
  return twoThetaFromD(reflection.d, wavelength);
}
