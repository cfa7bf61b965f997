/**
 * The elementary functions of lib/numeric/elementary.ts against the reference: the IEEE 754
 * double results of V8's Math.exp, over dense grids and edge values.
 * The error is counted in units in the last place of the reference (ulp = |ref|·2⁻⁵²).
 */
import { describe, expect, it } from "vitest";
import { exp } from "../lib/numeric/elementary.js";

const ulps = (got: number, ref: number) => (got === ref ? 0 : Math.abs(got - ref) / (Math.abs(ref) * Number.EPSILON));
const relative = (got: number, ref: number) => (got === ref ? 0 : Math.abs(got - ref) / Math.abs(ref));

/** A deterministic grid: n points evenly over [a, b], then n more at pseudo-random places in it. */
function grid(a: number, b: number, n: number): Float64Array {
  const xs = new Float64Array(2 * n);
  let seed = 0x9e3779b9;
  for (let i = 0; i < n; i++) {
    xs[i] = a + ((b - a) * i) / (n - 1);
    seed = (Math.imul(seed, 1664525) + 1013904223) >>> 0;
    xs[n + i] = a + ((b - a) * seed) / 2 ** 32;
  }
  return xs;
}

function worst(xs: Float64Array, f: (x: number) => number, ref: (x: number) => number) {
  let ulp = 0;
  let rel = 0;
  let at = NaN;
  for (const x of xs) {
    const r = ref(x);
    const g = f(x);
    if (r === 0 || !Number.isFinite(r) || Math.abs(r) < 2.2250738585072014e-308) {
      // zero, infinite or subnormal references must be met exactly (the function hands those to Math)
      if (!Object.is(g, r)) throw new Error(`at x = ${x}: got ${g}, Math gives ${r}`);
      continue;
    }
    const u = ulps(g, r);
    if (u > ulp) [ulp, at] = [u, x];
    rel = Math.max(rel, relative(g, r));
  }
  return { ulp, rel, at };
}

describe("exp (Tang's table method)", () => {
  it("is within 1.5 ulp of Math.exp over the whole normal range", () => {
    const e = worst(grid(-745.2, 709.8, 400_000), exp, Math.exp);
    expect(e.ulp, `worst at x = ${e.at}`).toBeLessThanOrEqual(1.5);
    expect(e.rel).toBeLessThan(1e-15);
  });
  it("is within 1.5 ulp near 0, where r is the whole argument", () => {
    const e = worst(grid(-1e-3, 1e-3, 100_000), exp, Math.exp);
    expect(e.ulp, `worst at x = ${e.at}`).toBeLessThanOrEqual(1.5);
  });
  it("meets Math.exp exactly at the edges: ±0, ±Infinity, NaN, overflow, subnormal results, underflow", () => {
    for (const x of [0, -0, Infinity, -Infinity, NaN, 709.78, 709.79, 710, 1e300, -708.4, -708.39, -720, -745.13, -745.14, -1e300, 5e-324, -5e-324])
      expect(Object.is(exp(x), Math.exp(x)), `exp(${x}) = ${exp(x)}, Math.exp gives ${Math.exp(x)}`).toBe(true);
  });
  it("is exact where e^x is a power of two times a table value: exp(0) = 1", () => {
    expect(exp(0)).toBe(1);
    expect(exp(Math.LN2)).toBeCloseTo(2, 15);
  });
});
