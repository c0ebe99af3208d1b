// Unit-cell geometry: the reciprocal metric, d-spacings, Bragg's law, cell constraints of the crystal
// systems, and the linear reciprocal-metric parameters that cell refinement works in.

/** Crystal system of a declared cell; trigonal is on hexagonal axes, monoclinic has unique axis b. */
export type CrystalSystem = "cubic" | "tetragonal" | "hexagonal" | "trigonal" | "orthorhombic" | "monoclinic" | "triclinic";

export const CRYSTAL_SYSTEMS: readonly CrystalSystem[] = ["cubic", "tetragonal", "hexagonal", "trigonal", "orthorhombic", "monoclinic", "triclinic"];

/** Lattice centering; R is rhombohedral obverse on hexagonal axes (−h + k + l = 3n). */
export type Centering = "P" | "I" | "F" | "A" | "B" | "C" | "R";

export const CENTERINGS: readonly Centering[] = ["P", "I", "F", "A", "B", "C", "R"];

/** Direct cell: lengths in Å, angles in degrees. */
export interface Cell {
  a: number;
  b: number;
  c: number;
  alpha: number;
  beta: number;
  gamma: number;
}

/** Miller indices of a lattice plane. */
export interface Hkl {
  h: number;
  k: number;
  l: number;
}

/** A symmetric 3×3 matrix, rows of three numbers. */
export type Matrix3 = number[][];

/**
 * Coefficients of Q = 1/d² = A h² + B k² + C l² + D kl + E hl + F hk (Å⁻²), i.e. A = a*², D = 2 b* c* cos α*
 * and so on — the usual quadratic form used in indexing.
 */
export interface MetricCoefficients {
  A: number;
  B: number;
  C: number;
  D: number;
  E: number;
  F: number;
}

const RAD = Math.PI / 180;

/** Direct metric tensor G (Å²). */
export function directMetric(cell: Cell): Matrix3 {
  const { a, b, c } = cell;
  const ca = Math.cos(cell.alpha * RAD);
  const cb = Math.cos(cell.beta * RAD);
  const cg = Math.cos(cell.gamma * RAD);
  return [
    [a * a, a * b * cg, a * c * cb],
    [a * b * cg, b * b, b * c * ca],
    [a * c * cb, b * c * ca, c * c],
  ];
}

function invertSymmetric3(m: Matrix3): Matrix3 {
  const [[a, b, c], [, d, e], [, , f]] = m;
  const A = d * f - e * e;
  const B = c * e - b * f;
  const C = b * e - c * d;
  const D = a * f - c * c;
  const E = b * c - a * e;
  const F = a * d - b * b;
  const det = a * A + b * B + c * C;
  return [
    [A / det, B / det, C / det],
    [B / det, D / det, E / det],
    [C / det, E / det, F / det],
  ];
}

/** Reciprocal metric tensor G* = G⁻¹ (Å⁻²); 1/d² = hᵀ G* h. */
export function reciprocalMetric(cell: Cell): Matrix3 {
  return invertSymmetric3(directMetric(cell));
}

/** The six coefficients of Q(hkl) for a cell. */
export function metricCoefficients(cell: Cell): MetricCoefficients {
  const g = reciprocalMetric(cell);
  return {
    A: g[0][0],
    B: g[1][1],
    C: g[2][2],
    D: 2 * g[1][2],
    E: 2 * g[0][2],
    F: 2 * g[0][1],
  };
}

/** Q = 1/d² (Å⁻²) of a reflection from the metric coefficients. */
export function qFromCoefficients(m: MetricCoefficients, { h, k, l }: Hkl): number {
  return m.A * h * h + m.B * k * k + m.C * l * l + m.D * k * l + m.E * h * l + m.F * h * k;
}

/** 1/d² in Å⁻² of the plane hkl. */
export function inverseDSquared(cell: Cell, hkl: Hkl): number {
  return qFromCoefficients(metricCoefficients(cell), hkl);
}

/** d-spacing in Å of the plane hkl. */
export function dSpacing(cell: Cell, hkl: Hkl): number {
  return 1 / Math.sqrt(inverseDSquared(cell, hkl));
}

/** Bragg's law λ = 2 d sin θ: 2θ in degrees, NaN when λ/2d > 1 (the plane cannot diffract). */
export function twoThetaFromD(d: number, wavelength: number): number {
  const s = wavelength / (2 * d);
  if (!(s <= 1) || s < 0) return Number.NaN;
  return (2 * Math.asin(s)) / RAD;
}

/** Bragg's law: d in Å of a reflection at 2θ (degrees). */
export function dFromTwoTheta(twoTheta: number, wavelength: number): number {
  return wavelength / (2 * Math.sin((twoTheta * RAD) / 2));
}

/** Cell volume in Å³. */
export function cellVolume(cell: Cell): number {
  const ca = Math.cos(cell.alpha * RAD);
  const cb = Math.cos(cell.beta * RAD);
  const cg = Math.cos(cell.gamma * RAD);
  const root = 1 - ca * ca - cb * cb - cg * cg + 2 * ca * cb * cg;
  return cell.a * cell.b * cell.c * Math.sqrt(Math.max(root, 0));
}

/**
 * The hexagonal-axes cell (obverse, centering R) of a rhombohedral cell given on rhombohedral axes:
 * a_h = 2 a_r sin(α/2), c_h = a_r √(3 (1 + 2 cos α)) (International Tables Vol. A, common practice).
 */
export function rhombohedralToHexagonal(aRhombohedral: number, alphaDegrees: number): Cell {
  const alpha = alphaDegrees * RAD;
  const a = 2 * aRhombohedral * Math.sin(alpha / 2);
  const c = aRhombohedral * Math.sqrt(3 * (1 + 2 * Math.cos(alpha)));
  return { a, b: a, c, alpha: 90, beta: 90, gamma: 120 };
}

// Tolerances for "equal" lengths and "right" angles in a declared cell: loose enough for values
// typed with a few decimals or produced by refinement, tight enough to catch a real distortion.
const LENGTH_TOLERANCE = 1e-5;
const ANGLE_TOLERANCE = 1e-3;

const fmt = (x: number) => String(Number(x.toPrecision(7)));
const sameLength = (x: number, y: number) => Math.abs(x - y) <= LENGTH_TOLERANCE * Math.max(x, y);
const isAngle = (x: number, target: number) => Math.abs(x - target) <= ANGLE_TOLERANCE;

/** A sentence saying how the cell breaks the crystal system's constraints, or null if it fits. */
export function checkCellForSystem(system: CrystalSystem, cell: Cell): string | null {
  const { a, b, c, alpha, beta, gamma } = cell;
  for (const [name, v] of [
    ["a", a],
    ["b", b],
    ["c", c],
  ] as const) {
    if (!Number.isFinite(v) || v <= 0) return `The cell length ${name} must be a positive number of ångström; got ${v}.`;
  }
  for (const [name, v] of [
    ["alpha", alpha],
    ["beta", beta],
    ["gamma", gamma],
  ] as const) {
    if (!Number.isFinite(v) || v <= 0 || v >= 180) return `The cell angle ${name} must lie between 0° and 180°; got ${v}.`;
  }
  const lengths = `a = ${fmt(a)}, b = ${fmt(b)}, c = ${fmt(c)} Å`;
  const angles = `alpha = ${fmt(alpha)}°, beta = ${fmt(beta)}°, gamma = ${fmt(gamma)}°`;
  const right = (x: number) => isAngle(x, 90);
  switch (system) {
    case "cubic":
      if (!sameLength(a, b) || !sameLength(a, c)) return `A cubic cell needs a = b = c; got ${lengths}.`;
      if (!right(alpha) || !right(beta) || !right(gamma)) return `A cubic cell needs all angles 90°; got ${angles}.`;
      break;
    case "tetragonal":
      if (!sameLength(a, b)) return `A tetragonal cell needs a = b; got ${lengths}.`;
      if (!right(alpha) || !right(beta) || !right(gamma)) return `A tetragonal cell needs all angles 90°; got ${angles}.`;
      break;
    case "hexagonal":
    case "trigonal":
      if (system === "trigonal" && sameLength(a, b) && sameLength(a, c) && isAngle(alpha, beta) && isAngle(alpha, gamma) && !right(alpha))
        return `This looks like a rhombohedral cell on rhombohedral axes (${lengths}, ${angles}); give it on hexagonal axes with centering R.`;
      if (!sameLength(a, b)) return `A ${system} cell (hexagonal axes) needs a = b; got ${lengths}.`;
      if (!right(alpha) || !right(beta) || !isAngle(gamma, 120))
        return `A ${system} cell (hexagonal axes) needs alpha = beta = 90° and gamma = 120°; got ${angles}.`;
      break;
    case "orthorhombic":
      if (!right(alpha) || !right(beta) || !right(gamma)) return `An orthorhombic cell needs all angles 90°; got ${angles}.`;
      break;
    case "monoclinic":
      if (!right(alpha) || !right(gamma)) return `A monoclinic cell (unique axis b) needs alpha = gamma = 90°; got ${angles}.`;
      break;
    case "triclinic":
      break;
  }
  const ca = Math.cos(alpha * RAD);
  const cb = Math.cos(beta * RAD);
  const cg = Math.cos(gamma * RAD);
  if (1 - ca * ca - cb * cb - cg * cg + 2 * ca * cb * cg <= 0) return `The angles ${angles} do not form a cell (its volume would be zero or imaginary).`;
  return null;
}

/** Conventional centerings of each system (monoclinic with unique axis b allows the A and I settings of C). */
export const CENTERINGS_BY_SYSTEM: Readonly<Record<CrystalSystem, readonly Centering[]>> = {
  cubic: ["P", "I", "F"],
  tetragonal: ["P", "I"],
  hexagonal: ["P"],
  trigonal: ["P", "R"],
  orthorhombic: ["P", "I", "F", "A", "B", "C"],
  monoclinic: ["P", "C", "A", "I"],
  triclinic: ["P"],
};

/** A sentence when the centering is not a lattice of the system, or null if it is. */
export function checkCentering(system: CrystalSystem, centering: Centering): string | null {
  const allowed = CENTERINGS_BY_SYSTEM[system];
  if (allowed.includes(centering)) return null;
  return `A ${system} lattice cannot have centering ${centering}; use ${allowed.join(", ")}.`;
}

// ---------------------------------------------------------------------------------------------
// Free reciprocal-metric parameters. Q = 1/d² is linear in A…F, so least squares in Q with these
// parameters is linear; each system keeps only the ones its constraints leave free.

/** Names of the free parameters of Q for a system, in the order of the parameter vectors below. */
export function freeParameters(system: CrystalSystem): string[] {
  switch (system) {
    case "cubic":
      return ["A"];
    case "tetragonal":
    case "hexagonal":
    case "trigonal":
      return ["A", "C"];
    case "orthorhombic":
      return ["A", "B", "C"];
    case "monoclinic":
      return ["A", "B", "C", "E"];
    case "triclinic":
      return ["A", "B", "C", "D", "E", "F"];
  }
}

/** Design row ∂Q/∂p for the plane hkl: Q(hkl) = Σ row[i]·p[i]. */
export function qDesignRow(system: CrystalSystem, { h, k, l }: Hkl): number[] {
  switch (system) {
    case "cubic":
      return [h * h + k * k + l * l];
    case "tetragonal":
      return [h * h + k * k, l * l];
    case "hexagonal":
    case "trigonal":
      // γ* = 60° on hexagonal axes, so F = 2a*² cos 60° = A.
      return [h * h + k * k + h * k, l * l];
    case "orthorhombic":
      return [h * h, k * k, l * l];
    case "monoclinic":
      return [h * h, k * k, l * l, h * l];
    case "triclinic":
      return [h * h, k * k, l * l, k * l, h * l, h * k];
  }
}

/** Q = 1/d² (Å⁻²) of hkl from a system's free parameter vector. */
export function qFromMetricParams(system: CrystalSystem, p: readonly number[], hkl: Hkl): number {
  const row = qDesignRow(system, hkl);
  let q = 0;
  for (let i = 0; i < row.length; i++) q += row[i] * p[i];
  return q;
}

/** The full coefficients A…F from a system's free parameter vector. */
export function coefficientsFromMetricParams(system: CrystalSystem, p: readonly number[]): MetricCoefficients {
  switch (system) {
    case "cubic":
      return { A: p[0], B: p[0], C: p[0], D: 0, E: 0, F: 0 };
    case "tetragonal":
      return { A: p[0], B: p[0], C: p[1], D: 0, E: 0, F: 0 };
    case "hexagonal":
    case "trigonal":
      return { A: p[0], B: p[0], C: p[1], D: 0, E: 0, F: p[0] };
    case "orthorhombic":
      return { A: p[0], B: p[1], C: p[2], D: 0, E: 0, F: 0 };
    case "monoclinic":
      return { A: p[0], B: p[1], C: p[2], D: 0, E: p[3], F: 0 };
    case "triclinic":
      return { A: p[0], B: p[1], C: p[2], D: p[3], E: p[4], F: p[5] };
  }
}

/** A system's free parameter vector for a cell (the inverse of cellFromMetricParams). */
export function metricParamsFromCell(system: CrystalSystem, cell: Cell): number[] {
  const m = metricCoefficients(cell);
  const all: Record<string, number> = { ...m };
  return freeParameters(system).map((name) => all[name]);
}

function reciprocalFromCoefficients(m: MetricCoefficients): Matrix3 {
  return [
    [m.A, m.F / 2, m.E / 2],
    [m.F / 2, m.B, m.D / 2],
    [m.E / 2, m.D / 2, m.C],
  ];
}

function cellFromDirectMetric(g: Matrix3): Cell {
  const a = Math.sqrt(g[0][0]);
  const b = Math.sqrt(g[1][1]);
  const c = Math.sqrt(g[2][2]);
  return {
    a,
    b,
    c,
    alpha: Math.acos(g[1][2] / (b * c)) / RAD,
    beta: Math.acos(g[0][2] / (a * c)) / RAD,
    gamma: Math.acos(g[0][1] / (a * b)) / RAD,
  };
}

const CELL_KEYS = ["a", "b", "c", "alpha", "beta", "gamma"] as const;

/**
 * Jacobian ∂(a, b, c, α, β, γ)/∂p (Å and degrees per Å⁻²), one row per cell parameter, one column
 * per free parameter. From G = (G*)⁻¹: dG = −G dG* G, then the lengths and angles of G.
 */
export function cellJacobian(system: CrystalSystem, p: readonly number[]): number[][] {
  const g = invertSymmetric3(reciprocalFromCoefficients(coefficientsFromMetricParams(system, p)));
  const cell = cellFromDirectMetric(g);
  const n = p.length;
  const jac = CELL_KEYS.map(() => new Array<number>(n).fill(0));
  for (let j = 0; j < n; j++) {
    const unit = p.map((_, i) => (i === j ? 1 : 0));
    // Q is linear in p, so dG*/dp_j is the metric built from the unit vector.
    const dgs = reciprocalFromCoefficients(coefficientsFromMetricParams(system, unit));
    const dg = multiply3(multiply3(g, dgs), g).map((row) => row.map((x) => -x));
    const lengths = [cell.a, cell.b, cell.c];
    const dl = [0, 1, 2].map((i) => dg[i][i] / (2 * lengths[i]));
    // Angle opposite pair (u, v): cos = G_uv / (l_u l_v).
    const pairs: [number, number][] = [
      [1, 2],
      [0, 2],
      [0, 1],
    ];
    pairs.forEach(([u, v], i) => {
      const angle = [cell.alpha, cell.beta, cell.gamma][i] * RAD;
      const dcos = (dg[u][v] - g[u][v] * (dl[u] / lengths[u] + dl[v] / lengths[v])) / (lengths[u] * lengths[v]);
      jac[3 + i][j] = -dcos / Math.sin(angle) / RAD;
    });
    for (let i = 0; i < 3; i++) jac[i][j] = dl[i];
  }
  return jac;
}

function multiply3(x: Matrix3, y: Matrix3): Matrix3 {
  return [0, 1, 2].map((i) => [0, 1, 2].map((j) => x[i][0] * y[0][j] + x[i][1] * y[1][j] + x[i][2] * y[2][j]));
}

/**
 * The direct cell of a system's free parameter vector, and its standard uncertainties propagated from
 * the covariance of the parameters (σ² = J C Jᵀ); `esd` is null when no covariance is given.
 */
export function cellFromMetricParams(system: CrystalSystem, p: readonly number[], cov?: readonly (readonly number[])[]): { cell: Cell; esd: Cell | null } {
  const g = invertSymmetric3(reciprocalFromCoefficients(coefficientsFromMetricParams(system, p)));
  const cell = cellFromDirectMetric(g);
  // Constrained angles come out of acos at 90° or 120° up to rounding; state them exactly.
  if (system !== "triclinic") {
    cell.alpha = 90;
    cell.gamma = system === "hexagonal" || system === "trigonal" ? 120 : 90;
    if (system !== "monoclinic") cell.beta = 90;
  }
  if (!cov) return { cell, esd: null };
  const jac = cellJacobian(system, p);
  const variances = jac.map((row) => {
    let v = 0;
    for (let i = 0; i < row.length; i++) for (let j = 0; j < row.length; j++) v += row[i] * cov[i][j] * row[j];
    return Math.sqrt(Math.max(v, 0));
  });
  const esd = Object.fromEntries(CELL_KEYS.map((key, i) => [key, variances[i]])) as unknown as Cell;
  return { cell, esd };
}
