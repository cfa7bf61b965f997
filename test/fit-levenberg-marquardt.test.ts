/**
 * The bounded Levenberg–Marquardt solver on problems with known answers:
 * Rosenbrock's function as least squares (minimum at (1, 1); Rosenbrock,
 * Computer Journal 3(3), 175–184, 1960), an exponential decay with exact data,
 * a linear model whose standard errors have the closed form σ²(XᵀX)⁻¹, bounds
 * that bind, and a run that does not converge (the residual reached is named).
 */
import { describe, expect, it } from "vitest";
import { ConvergenceError, InputError } from "../lib/errors.js";
import { leastSquares } from "../lib/fit/levenberg-marquardt.js";

describe("leastSquares", () => {
  it("finds Rosenbrock's minimum from the classical start (−1.2, 1)", () => {
    const res = leastSquares({ m: 2, n: 2, residuals: (p, r) => ((r[0] = 10 * (p[1]! - p[0]! ** 2)), (r[1] = 1 - p[0]!)) }, [-1.2, 1]);
    expect(res.p[0]).toBeCloseTo(1, 6);
    expect(res.p[1]).toBeCloseTo(1, 6);
    expect(res.sumSquares).toBeLessThan(1e-12);
  });
  it("recovers an exponential decay from exact data, with an analytic Jacobian as well", () => {
    const t = Array.from({ length: 30 }, (_, i) => i * 0.2);
    const y = t.map((x) => 3 * Math.exp(-0.7 * x) + 0.5);
    const residuals = (p: Float64Array, r: Float64Array) => t.forEach((x, i) => (r[i] = p[0]! * Math.exp(-p[1]! * x) + p[2]! - y[i]!));
    const fd = leastSquares({ m: t.length, n: 3, residuals }, [1, 0.1, 0]);
    const an = leastSquares(
      { m: t.length, n: 3, residuals, jacobian: (p, _r, j) => t.forEach((x, i) => ((j[i * 3] = Math.exp(-p[1]! * x)), (j[i * 3 + 1] = -p[0]! * x * Math.exp(-p[1]! * x)), (j[i * 3 + 2] = 1))) },
      [1, 0.1, 0],
    );
    for (const res of [fd, an]) {
      expect(res.p[0]).toBeCloseTo(3, 6);
      expect(res.p[1]).toBeCloseTo(0.7, 6);
      expect(res.p[2]).toBeCloseTo(0.5, 6);
    }
  });
  it("gives the textbook standard errors of a straight-line fit, s²(XᵀX)⁻¹", () => {
    const x = [0, 1, 2, 3, 4, 5, 6, 7];
    const y = [0.1, 1.9, 4.2, 5.8, 8.1, 10.2, 11.9, 14.1];
    const res = leastSquares({ m: x.length, n: 2, residuals: (p, r) => x.forEach((xi, i) => (r[i] = p[0]! + p[1]! * xi - y[i]!)) }, [0, 1]);
    const n = x.length;
    const sx = x.reduce((a, b) => a + b, 0);
    const sxx = x.reduce((a, b) => a + b * b, 0);
    const det = n * sxx - sx * sx;
    const s2 = res.sumSquares / (n - 2);
    expect(res.stdErr[0]).toBeCloseTo(Math.sqrt((s2 * sxx) / det), 8);
    expect(res.stdErr[1]).toBeCloseTo(Math.sqrt((s2 * n) / det), 8);
  });
  it("keeps parameters inside their bounds and reports a pinned one as undetermined", () => {
    // unconstrained minimum at p = −1; lower bound 0 binds
    const res = leastSquares({ m: 3, n: 1, residuals: (p, r) => ((r[0] = p[0]! + 1), (r[1] = p[0]! + 1.1), (r[2] = p[0]! + 0.9)) }, [0.5], { lower: [0], upper: [2] });
    expect(res.p[0]).toBeGreaterThanOrEqual(0);
    expect(res.p[0]).toBeLessThan(1e-4);
    expect(res.stdErr[0]).toBe(Infinity);
  });
  it("throws ConvergenceError naming the RMS reached when it runs out of iterations", () => {
    const run = () => leastSquares({ m: 2, n: 2, residuals: (p, r) => ((r[0] = 10 * (p[1]! - p[0]! ** 2)), (r[1] = 1 - p[0]!)) }, [-1.2, 1], { maxIterations: 3, origin: "Rosenbrock" });
    expect(run).toThrow(ConvergenceError);
    expect(run).toThrow(/Rosenbrock: no convergence after 3 iterations; RMS residual reached [0-9.]+/);
  });
  it("refuses too few points, a start outside the bounds, and non-finite residuals", () => {
    expect(() => leastSquares({ m: 1, n: 2, residuals: () => {} }, [0, 0])).toThrow(InputError);
    expect(() => leastSquares({ m: 2, n: 1, residuals: () => {} }, [3], { lower: [0], upper: [1] })).toThrow(/strictly inside/);
    expect(() => leastSquares({ m: 2, n: 1, residuals: (_p, r) => r.fill(NaN) }, [0])).toThrow(ConvergenceError);
  });
});
