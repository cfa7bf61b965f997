import { describe, expect, it } from "vitest";
import { omegaBlockSize, omegaSegmentEdges, wrightOmega, wrightOmegaBlock } from "../lib/numeric/wright-omega.js";
import { InputError } from "../lib/errors.js";
import { wrightOmegaByBisection } from "./support/reevaluate.js";

// Reference: ω + ln ω = y solved by bisection on u = ln ω (test/support/reevaluate.ts), 200 halvings. Its own
// error is about one ulp of u, so its relative accuracy is about ulp(|y|) for large negative y (1·10⁻¹³ at −708).
const bisected = wrightOmegaByBisection;
const relative = (y: number) => Math.abs(wrightOmega(y) / bisected(y) - 1);

const bits = new DataView(new ArrayBuffer(8));
/** The neighbouring double of a finite y, one ulp up (+1) or down (−1). */
function neighbour(y: number, direction: 1 | -1): number {
  if (y === 0) return direction * Number.MIN_VALUE;
  bits.setFloat64(0, y);
  const step = (y > 0) === (direction > 0) ? 1n : -1n;
  bits.setBigInt64(0, bits.getBigInt64(0) + step);
  return bits.getFloat64(0);
}

describe("the Wright ω function (lib/numeric/wright-omega.ts)", () => {
  const edges = omegaSegmentEdges();

  it("has segments from −7 to 297 that get no narrower as y grows", () => {
    expect(edges[0]).toBe(-7);
    expect(edges[edges.length - 1]).toBe(297);
    for (let k = 2; k < edges.length; k++) expect(edges[k]! - edges[k - 1]!).toBeGreaterThanOrEqual(edges[k - 1]! - edges[k - 2]!);
  });

  it("is within 2·10⁻¹³ (relative) of bisection on a dense grid from y = −708 to 10⁶, and within 10⁻¹⁴ on the polynomial range −7…297", () => {
    let worst = 0;
    let worstPolynomial = 0;
    for (let y = -708; y < 1e6; y += y < -20 ? 0.37 : y < 300 ? 0.000713 : y < 2000 ? 0.29 : 977.3) {
      const r = relative(y);
      worst = Math.max(worst, r);
      if (y >= -7 && y < 297) worstPolynomial = Math.max(worstPolynomial, r);
    }
    expect(worst).toBeLessThan(2e-13);
    expect(worstPolynomial).toBeLessThan(1e-14);
  });

  it("is within 10⁻¹⁴ of bisection at every segment edge and one ulp either side of it", () => {
    let worst = 0;
    for (const edge of edges) for (const y of [neighbour(edge, -1), edge, neighbour(edge, 1)]) worst = Math.max(worst, relative(y));
    expect(worst).toBeLessThan(1e-14);
  });

  it("is continuous across every segment edge: the values one ulp either side agree to a few ulp of ω", () => {
    let worst = 0;
    for (const edge of edges) {
      const below = wrightOmega(neighbour(edge, -1));
      const above = wrightOmega(neighbour(edge, 1));
      worst = Math.max(worst, Math.abs(above - below) / above);
    }
    expect(worst).toBeLessThan(1e-14);
  });

  it("has the known values ω(1) = 1 and ω(0) = W(1) = Ω = 0.5671432904097838 (the omega constant)", () => {
    expect(wrightOmega(1)).toBeCloseTo(1, 15);
    expect(wrightOmega(0)).toBeCloseTo(0.5671432904097838, 15);
  });

  it("is 0 where eʸ underflows and for −Infinity, ≈ y − ln y far out, +Infinity for +Infinity, NaN for NaN", () => {
    expect(wrightOmega(-746)).toBe(0);
    expect(wrightOmega(-800)).toBe(0);
    expect(wrightOmega(-Infinity)).toBe(0);
    expect(wrightOmega(-740)).toBeGreaterThan(0);
    expect(wrightOmega(1e200) / (1e200 - Math.log(1e200))).toBeCloseTo(1, 15);
    expect(wrightOmega(Infinity)).toBe(Infinity);
    expect(Number.isNaN(wrightOmega(NaN))).toBe(true);
  });

  describe("block form (wrightOmegaBlock, which the generated block evaluators call)", () => {
    // every zone, the series below −7, the far-out method above 297, segment edges and their neighbours, and the specials
    const specials = [-Infinity, -800, -746, -740, -300, -7.000001, 1e6, 1e200, Infinity, NaN, 0, 1];
    const grid = [...specials, ...edges.flatMap((e) => [neighbour(e, -1), e, neighbour(e, 1)])];
    for (let k = 0; grid.length % omegaBlockSize !== 0 || grid.length < 4 * omegaBlockSize; k++) grid.push(-40 + 400 * ((k * 0.6180339887498949) % 1));

    it("equals wrightOmega value by value, into another array and in place, in full and partial blocks", () => {
      for (const count of [omegaBlockSize, 1, 37, 0]) {
        for (let from = 0; from + count <= grid.length; from += Math.max(count, 1) * 3 + 1) {
          const y = Float64Array.from(grid.slice(from, from + count));
          const w = new Float64Array(count + 3).fill(7);
          wrightOmegaBlock(y, w, count);
          for (let k = 0; k < count; k++) if (!Object.is(w[k], wrightOmega(y[k]!))) throw new Error(`y = ${y[k]}: block ${w[k]}, scalar ${wrightOmega(y[k]!)}`);
          for (let k = count; k < count + 3; k++) expect(w[k]).toBe(7);
          const inPlace = Float64Array.from(y);
          wrightOmegaBlock(inPlace, inPlace, count);
          for (let k = 0; k < count; k++) expect(Object.is(inPlace[k], w[k])).toBe(true);
        }
      }
    });

    it("refuses a count beyond one block or beyond its arrays with a typed error naming the count", () => {
      const a = new Float64Array(omegaBlockSize + 1);
      expect(() => wrightOmegaBlock(a, a, omegaBlockSize + 1)).toThrow(InputError);
      expect(() => wrightOmegaBlock(a, new Float64Array(3), 4)).toThrow(/got 4, expected a value count of at most 256/);
      expect(() => wrightOmegaBlock(a, a, 2.5)).toThrow(InputError);
      expect(() => wrightOmegaBlock(a, a, -1)).toThrow(InputError);
    });
  });
});
