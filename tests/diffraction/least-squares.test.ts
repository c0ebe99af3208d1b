// Dense linear algebra and Levenberg–Marquardt against hand-solvable problems (hand calculation).
import fc from "fast-check";
import { describe, expect, it } from "vitest";
import { choleskyFactor, choleskySolve, invertSymmetric, levenbergMarquardt, solveLinear, squareMatrix, weightedLinearFit } from "~/diffraction/least-squares";

const matrix = (rows: number[][]) => {
  const m = squareMatrix(rows.length);
  rows.flat().forEach((v, i) => (m.data[i] = v));
  return m;
};

describe("linear algebra", () => {
  it("solves a 3×3 system by Cholesky (hand calculation: x = (1, −2, 3))", () => {
    // A = [[4,2,0],[2,5,1],[0,1,3]], b = A·(1, −2, 3) = (0, −5, 7).
    const a = matrix([
      [4, 2, 0],
      [2, 5, 1],
      [0, 1, 3],
    ]);
    const l = choleskyFactor(a)!;
    const x = choleskySolve(l, [0, -5, 7]);
    expect([...x].map((v) => +v.toFixed(12))).toEqual([1, -2, 3]);
  });

  it("refuses a singular matrix", () => {
    expect(
      choleskyFactor(
        matrix([
          [1, 1],
          [1, 1],
        ]),
      ),
    ).toBeNull();
    expect(
      solveLinear(
        matrix([
          [1, 2],
          [2, 4],
        ]),
        [1, 2],
      ),
    ).toBeNull();
  });

  it("pivots where Gaussian elimination without pivoting would divide by zero", () => {
    const x = solveLinear(
      matrix([
        [0, 1],
        [1, 0],
      ]),
      [2, 3],
    )!;
    expect([...x]).toEqual([3, 2]);
  });

  it("inverts random symmetric positive-definite matrices (property: A·A⁻¹ = I)", () => {
    fc.assert(
      fc.property(fc.array(fc.double({ min: -3, max: 3, noNaN: true }), { minLength: 16, maxLength: 16 }), (values) => {
        // B Bᵀ + I is symmetric positive definite.
        const n = 4;
        const a = squareMatrix(n);
        for (let i = 0; i < n; i++)
          for (let j = 0; j < n; j++) {
            let s = i === j ? 1 : 0;
            for (let k = 0; k < n; k++) s += values[i * n + k] * values[j * n + k];
            a.data[i * n + j] = s;
          }
        const inv = invertSymmetric(a)!;
        for (let i = 0; i < n; i++)
          for (let j = 0; j < n; j++) {
            let s = 0;
            for (let k = 0; k < n; k++) s += a.data[i * n + k] * inv.data[k * n + j];
            expect(s).toBeCloseTo(i === j ? 1 : 0, 8);
          }
      }),
    );
  });

  it("fits a straight line with the textbook covariance (hand calculation)", () => {
    // y = 1 + 2x at x = 0, 1, 2, 3 with unit weights: exact fit, (AᵀA)⁻¹ = [[0.7, −0.3], [−0.3, 0.2]].
    const rows = [0, 1, 2, 3].map((x) => [1, x]);
    const fit = weightedLinearFit(rows, [1, 3, 5, 7], [1, 1, 1, 1])!;
    expect(fit.params[0]).toBeCloseTo(1, 12);
    expect(fit.params[1]).toBeCloseTo(2, 12);
    expect(fit.covariance.data[0]).toBeCloseTo(0.7, 12);
    expect(fit.covariance.data[1]).toBeCloseTo(-0.3, 12);
    expect(fit.covariance.data[3]).toBeCloseTo(0.2, 12);
    expect(fit.chi2).toBeCloseTo(0, 12);
    expect(fit.dof).toBe(2);
  });
});

describe("Levenberg–Marquardt", () => {
  // A Gaussian h·exp(−(x−c)²/(2s²)) sampled without noise: the fit must return the truth from a poor start.
  const xs = Array.from({ length: 61 }, (_, i) => -3 + i * 0.1);
  const truth = [5, 0.4, 0.7];
  const model = (p: ArrayLike<number>, x: number) => p[0] * Math.exp(-((x - p[1]) ** 2) / (2 * p[2] ** 2));
  const ys = xs.map((x) => model(truth, x));
  const problem = {
    nParams: 3,
    nPoints: xs.length,
    evaluate(p: Float64Array, r: Float64Array, jac: Float64Array | null) {
      xs.forEach((x, i) => {
        const e = Math.exp(-((x - p[1]) ** 2) / (2 * p[2] ** 2));
        r[i] = ys[i] - p[0] * e;
        if (jac) {
          jac[i * 3] = e;
          jac[i * 3 + 1] = (p[0] * e * (x - p[1])) / p[2] ** 2;
          jac[i * 3 + 2] = (p[0] * e * (x - p[1]) ** 2) / p[2] ** 3;
        }
      });
    },
  };

  it("recovers a Gaussian's height, centre and width", () => {
    const result = levenbergMarquardt(problem, [3, -0.2, 1.2], { relativeTolerance: 1e-14, maxIterations: 200 });
    expect(result.converged).toBe(true);
    expect(result.params[0]).toBeCloseTo(5, 6);
    expect(result.params[1]).toBeCloseTo(0.4, 6);
    expect(result.params[2]).toBeCloseTo(0.7, 6);
    expect(result.covariance).not.toBeNull();
  });

  it("keeps parameters inside their bounds", () => {
    const result = levenbergMarquardt(problem, [3, -0.2, 1.2], { lower: [0, -1, 0.1], upper: [4, 1, 2] });
    expect(result.params[0]).toBeLessThanOrEqual(4);
  });
});
