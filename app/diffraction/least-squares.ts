// Small dense linear algebra and a Levenberg–Marquardt routine for peak fits and cell refinement.
//
// Matrices are row-major Float64Arrays of n×n; the problems here are small (a cluster of peaks has at
// most a few dozen parameters, a cell refinement at most seven), so plain Cholesky on the normal
// equations with Marquardt damping is enough and keeps the module free of any library.

/** Row-major square matrix of order n. */
export interface SquareMatrix {
  n: number;
  data: Float64Array;
}

export function squareMatrix(n: number): SquareMatrix {
  return { n, data: new Float64Array(n * n) };
}

/**
 * Cholesky factor L (lower, in place of a copy) of a symmetric positive-definite matrix,
 * or null when a pivot is not positive (the matrix is singular or indefinite to working precision).
 */
export function choleskyFactor(a: SquareMatrix): SquareMatrix | null {
  const { n } = a;
  const l = squareMatrix(n);
  const A = a.data;
  const L = l.data;
  for (let j = 0; j < n; j++) {
    let diag = A[j * n + j];
    for (let k = 0; k < j; k++) diag -= L[j * n + k] * L[j * n + k];
    // Relative pivot test: a pivot that lost all but ~1e-13 of the diagonal is numerically zero.
    if (!(diag > 1e-13 * Math.abs(A[j * n + j])) || !Number.isFinite(diag)) return null;
    const ljj = Math.sqrt(diag);
    L[j * n + j] = ljj;
    for (let i = j + 1; i < n; i++) {
      let s = A[i * n + j];
      for (let k = 0; k < j; k++) s -= L[i * n + k] * L[j * n + k];
      L[i * n + j] = s / ljj;
    }
  }
  return l;
}

/** Solves L Lᵀ x = b given the Cholesky factor L. */
export function choleskySolve(l: SquareMatrix, b: ArrayLike<number>): Float64Array {
  const { n } = l;
  const L = l.data;
  const y = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    let s = b[i];
    for (let k = 0; k < i; k++) s -= L[i * n + k] * y[k];
    y[i] = s / L[i * n + i];
  }
  const x = new Float64Array(n);
  for (let i = n - 1; i >= 0; i--) {
    let s = y[i];
    for (let k = i + 1; k < n; k++) s -= L[k * n + i] * x[k];
    x[i] = s / L[i * n + i];
  }
  return x;
}

/** Inverse of a symmetric positive-definite matrix through its Cholesky factor; null when singular. */
export function invertSymmetric(a: SquareMatrix): SquareMatrix | null {
  const l = choleskyFactor(a);
  if (!l) return null;
  const { n } = a;
  const inv = squareMatrix(n);
  const e = new Float64Array(n);
  for (let j = 0; j < n; j++) {
    e.fill(0);
    e[j] = 1;
    const col = choleskySolve(l, e);
    for (let i = 0; i < n; i++) inv.data[i * n + j] = col[i];
  }
  return inv;
}

/** Solves a general square system by Gaussian elimination with partial pivoting; null when singular. */
export function solveLinear(a: SquareMatrix, b: ArrayLike<number>): Float64Array | null {
  const { n } = a;
  const m = Float64Array.from(a.data);
  const x = Float64Array.from(b as ArrayLike<number>);
  let scale = 0;
  for (let i = 0; i < n * n; i++) scale = Math.max(scale, Math.abs(m[i]));
  for (let col = 0; col < n; col++) {
    let pivot = col;
    for (let r = col + 1; r < n; r++) if (Math.abs(m[r * n + col]) > Math.abs(m[pivot * n + col])) pivot = r;
    if (!(Math.abs(m[pivot * n + col]) > 1e-14 * scale)) return null;
    if (pivot !== col) {
      for (let k = 0; k < n; k++) {
        const t = m[col * n + k];
        m[col * n + k] = m[pivot * n + k];
        m[pivot * n + k] = t;
      }
      const t = x[col];
      x[col] = x[pivot];
      x[pivot] = t;
    }
    for (let r = col + 1; r < n; r++) {
      const f = m[r * n + col] / m[col * n + col];
      if (f === 0) continue;
      for (let k = col; k < n; k++) m[r * n + k] -= f * m[col * n + k];
      x[r] -= f * x[col];
    }
  }
  for (let r = n - 1; r >= 0; r--) {
    let s = x[r];
    for (let k = r + 1; k < n; k++) s -= m[r * n + k] * x[k];
    x[r] = s / m[r * n + r];
  }
  return x;
}

export interface LinearFit {
  params: Float64Array;
  /** (Aᵀ W A)⁻¹ — multiply by the reduced χ² for standard uncertainties when the weights are relative. */
  covariance: SquareMatrix;
  chi2: number;
  dof: number;
}

/**
 * Weighted linear least squares y ≈ A p with weights w (1/σ²); rows[i] is the design row of point i.
 * Returns null when the normal matrix is singular (too few or degenerate observations).
 */
export function weightedLinearFit(rows: ArrayLike<number>[], y: ArrayLike<number>, w: ArrayLike<number>): LinearFit | null {
  const m = rows.length;
  if (m === 0) return null;
  const n = rows[0].length;
  const normal = squareMatrix(n);
  const rhs = new Float64Array(n);
  for (let i = 0; i < m; i++) {
    const r = rows[i];
    const wi = w[i];
    for (let j = 0; j < n; j++) {
      rhs[j] += wi * r[j] * y[i];
      for (let k = 0; k <= j; k++) normal.data[j * n + k] += wi * r[j] * r[k];
    }
  }
  symmetrizeLower(normal);
  const covariance = invertSymmetric(normal);
  if (!covariance) return null;
  const params = matVec(covariance, rhs);
  let chi2 = 0;
  for (let i = 0; i < m; i++) {
    let f = 0;
    for (let j = 0; j < n; j++) f += rows[i][j] * params[j];
    chi2 += w[i] * (y[i] - f) ** 2;
  }
  return { params, covariance, chi2, dof: m - n };
}

function symmetrizeLower(a: SquareMatrix): void {
  const { n, data } = a;
  for (let j = 0; j < n; j++) for (let k = 0; k < j; k++) data[k * n + j] = data[j * n + k];
}

export function matVec(a: SquareMatrix, v: ArrayLike<number>): Float64Array {
  const { n, data } = a;
  const out = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    let s = 0;
    for (let j = 0; j < n; j++) s += data[i * n + j] * v[j];
    out[i] = s;
  }
  return out;
}

/**
 * A nonlinear least-squares problem in weighted form: the caller fills
 * residuals[i] = (y_i − f_i(p))·√w_i and, when asked, jacobian[i·nParams + j] = ∂f_i/∂p_j·√w_i.
 */
export interface NonlinearProblem {
  nParams: number;
  nPoints: number;
  evaluate(p: Float64Array, residuals: Float64Array, jacobian: Float64Array | null): void;
}

export interface MarquardtOptions {
  maxIterations?: number;
  /** Stop when χ² improves by less than this fraction. */
  relativeTolerance?: number;
  lower?: ArrayLike<number>;
  upper?: ArrayLike<number>;
}

export interface MarquardtResult {
  params: Float64Array;
  chi2: number;
  dof: number;
  /** (JᵀJ)⁻¹ at the solution, or null when singular; scale by χ²/dof for standard uncertainties. */
  covariance: SquareMatrix | null;
  iterations: number;
  converged: boolean;
}

/**
 * Levenberg–Marquardt with Marquardt's diagonal scaling (Marquardt 1963, SIAM J. Appl. Math. 11, 431 —
 * from memory) and box bounds applied by clamping each trial step.
 */
export function levenbergMarquardt(problem: NonlinearProblem, start: ArrayLike<number>, options: MarquardtOptions = {}): MarquardtResult {
  const { nParams: n, nPoints: m } = problem;
  const maxIterations = options.maxIterations ?? 50;
  const tolerance = options.relativeTolerance ?? 1e-7;
  const clamp = (p: Float64Array) => {
    if (options.lower) for (let j = 0; j < n; j++) p[j] = Math.max(p[j], options.lower[j]);
    if (options.upper) for (let j = 0; j < n; j++) p[j] = Math.min(p[j], options.upper[j]);
  };
  let p = Float64Array.from(start as ArrayLike<number>);
  clamp(p);
  let r = new Float64Array(m);
  let J = new Float64Array(m * n);
  let trialR = new Float64Array(m);
  // Each trial is evaluated with its Jacobian, and an accepted trial's buffers are swapped in: most
  // steps are accepted, so this costs one evaluation per step instead of two.
  let trialJ = new Float64Array(m * n);
  const normal = squareMatrix(n);
  const damped = squareMatrix(n);
  const gradient = new Float64Array(n);
  const freeGradient = new Float64Array(n);
  const frozen = new Uint8Array(n);
  const nonzero = new Int32Array(n);
  // The trial parameters; swapped with p when the step is taken.
  let trial = new Float64Array(n);
  problem.evaluate(p, r, J);
  let chi2 = sumSquares(r);
  let lambda = 1e-3;
  // Growth factor of λ after a rejected step; doubles with each rejection in a row (Nielsen 1999).
  let growth = 2;
  let iterations = 0;
  let converged = false;
  let needNormal = true;
  while (iterations < maxIterations) {
    iterations++;
    if (needNormal) {
      buildNormal(J, r, m, n, normal, gradient, nonzero);
      needNormal = false;
    }
    let step = dampedStep(normal, gradient, lambda, null, damped, freeGradient);
    if (!step) {
      lambda *= 10;
      if (lambda > 1e12) break;
      continue;
    }
    // A parameter sitting on a bound that the step would push through is held there and the step
    // solved for the others: clamping it afterwards would leave the others compensating for a move that
    // never happens, and the fit would then stall, rejecting step after step.
    let held = 0;
    for (let j = 0; j < n; j++) {
      const atLower = options.lower !== undefined && p[j] <= options.lower[j] && step[j] < 0;
      const atUpper = options.upper !== undefined && p[j] >= options.upper[j] && step[j] > 0;
      frozen[j] = atLower || atUpper ? 1 : 0;
      held += frozen[j];
    }
    if (held > 0 && held < n) step = dampedStep(normal, gradient, lambda, frozen, damped, freeGradient) ?? step;
    for (let j = 0; j < n; j++) trial[j] = p[j] + step[j];
    clamp(trial);
    // A step (after the bounds) below 1 % of every parameter's standard uncertainty, σ_j ≈ 1/√N_jj,
    // changes nothing that matters.
    let negligible = true;
    for (let j = 0; j < n && negligible; j++) negligible = (trial[j] - p[j]) ** 2 * normal.data[j * n + j] < 1e-4;
    problem.evaluate(trial, trialR, trialJ);
    const trialChi2 = sumSquares(trialR);
    if (Number.isFinite(trialChi2) && trialChi2 <= chi2) {
      const improvement = (chi2 - trialChi2) / Math.max(chi2, 1e-300);
      // Gain ratio: the actual fall of χ² over the one the linearised model predicts for the step taken
      // (after the bounds), 2δᵀg − δᵀNδ. λ shrinks by up to 3 when the model is good and barely when it
      // is poor, instead of a fixed tenth that swings it back and forth across the right damping.
      let predicted = 0;
      for (let j = 0; j < n; j++) {
        const dj = trial[j] - p[j];
        let nd = 0;
        for (let k = 0; k < n; k++) nd += normal.data[j * n + k] * (trial[k] - p[k]);
        predicted += dj * (2 * gradient[j] - nd);
      }
      const rho = predicted > 0 ? (chi2 - trialChi2) / predicted : 0;
      [p, trial] = [trial, p];
      [r, trialR] = [trialR, r];
      [J, trialJ] = [trialJ, J];
      chi2 = trialChi2;
      needNormal = true;
      lambda = Math.max(lambda * Math.max(1 / 3, 1 - (2 * rho - 1) ** 3), 1e-10);
      growth = 2;
      if (improvement < tolerance || negligible) {
        converged = true;
        break;
      }
    } else {
      lambda *= growth;
      growth *= 2;
      if (lambda > 1e10) {
        // No downhill step at any damping: p is a minimum to working precision.
        converged = true;
        break;
      }
    }
  }
  if (needNormal) buildNormal(J, r, m, n, normal, gradient, nonzero);
  return { params: p, chi2, dof: m - n, covariance: invertSymmetric(normal), iterations, converged };
}

/**
 * The Marquardt step (N + λ diag N) δ = g, with the `frozen` parameters (when given) held fixed: their
 * rows and columns are replaced by the identity and their gradient by zero, so their step is zero.
 */
function dampedStep(
  normal: SquareMatrix,
  gradient: Float64Array,
  lambda: number,
  frozen: Uint8Array | null,
  damped: SquareMatrix,
  freeGradient: Float64Array,
): Float64Array | null {
  const { n } = normal;
  const N = normal.data;
  const D = damped.data;
  for (let j = 0; j < n; j++) {
    for (let k = 0; k < n; k++) D[j * n + k] = frozen && (frozen[j] || frozen[k]) ? 0 : N[j * n + k];
    const d = N[j * n + j];
    D[j * n + j] = frozen && frozen[j] ? 1 : d + lambda * (d > 0 ? d : 1e-12);
    freeGradient[j] = frozen && frozen[j] ? 0 : gradient[j];
  }
  const l = choleskyFactor(damped);
  return l ? choleskySolve(l, freeGradient) : null;
}

// Rows of a peak-cluster Jacobian are mostly zeros (a peak far from a point leaves no derivative), so
// each row's non-zero columns are gathered first and only their products accumulated.
function buildNormal(J: Float64Array, r: Float64Array, m: number, n: number, normal: SquareMatrix, gradient: Float64Array, nonzero: Int32Array): void {
  normal.data.fill(0);
  gradient.fill(0);
  const N = normal.data;
  for (let i = 0; i < m; i++) {
    const o = i * n;
    const ri = r[i];
    let count = 0;
    for (let j = 0; j < n; j++) if (J[o + j] !== 0) nonzero[count++] = j;
    if (count === n) {
      // A row with every column set (every peak of a small cluster near the point): the plain loops,
      // without going through the index list.
      for (let j = 0; j < n; j++) {
        const jj = J[o + j];
        gradient[j] += jj * ri;
        const row = j * n;
        for (let k = 0; k <= j; k++) N[row + k] += jj * J[o + k];
      }
      continue;
    }
    for (let a = 0; a < count; a++) {
      const j = nonzero[a];
      const jj = J[o + j];
      gradient[j] += jj * ri;
      const row = j * n;
      for (let b = 0; b <= a; b++) {
        const k = nonzero[b];
        N[row + k] += jj * J[o + k];
      }
    }
  }
  symmetrizeLower(normal);
}

function sumSquares(v: Float64Array): number {
  let s = 0;
  for (let i = 0; i < v.length; i++) s += v[i] * v[i];
  return s;
}
