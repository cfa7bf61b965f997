/**
 * E-series against IEC 60063 (tables written from memory of IEC 60063:2015; the
 * standard text was not available here). Cross-checks that do not rely on memory:
 * E48/E96/E192 against round(10^(i/N)) to three significant figures, E3–E24 against
 * the rounded geometric sequence with the departures IEC 60063 is known for.
 */
import { describe, expect, it } from "vitest";
import fc from "fast-check";
import {
  eSeries,
  isStandard,
  nearestStandard,
  neighbours,
  seriesNames,
  seriesOf,
  standardValues,
  standardValuesAround,
  toleranceOf,
  logDistance,
} from "../lib/bias/eseries.js";
import { InputError } from "../lib/errors.js";

const rounded = (n: number, i: number, digits: number) => Math.round(10 ** (digits - 1) * 10 ** (i / n));

describe("IEC 60063 tables", () => {
  it("has the tabulated count per decade and strictly increasing values from 1.0 to below 10", () => {
    const counts = { E3: 3, E6: 6, E12: 12, E24: 24, E48: 48, E96: 96, E192: 192 };
    for (const name of seriesNames) {
      const s = eSeries[name];
      expect(s.count).toBe(counts[name]);
      expect(s.table.length).toBe(counts[name]);
      const mant = standardValues(name, 0);
      expect(mant[0]).toBe(1);
      expect(mant.at(-1)!).toBeLessThan(10);
      for (let i = 1; i < mant.length; i++) expect(mant[i]!).toBeGreaterThan(mant[i - 1]!);
    }
  });

  it("E48, E96, E192 are round(10^(i/N)) to 3 figures except E192's 9.20 (IEC 60063; rounding gives 9.19)", () => {
    for (const name of ["E48", "E96", "E192"] as const) {
      const s = eSeries[name];
      const departures = s.table.flatMap((v, i) => (v === rounded(s.count, i, 3) ? [] : [[i, v, rounded(s.count, i, 3)]]));
      expect(departures).toEqual(name === "E192" ? [[185, 920, 919]] : []);
    }
  });

  it("E3–E24 depart from the rounded geometric sequence exactly where IEC 60063 keeps older values", () => {
    const expected: Record<string, Array<[number, number]>> = {
      E3: [[47, 46]],
      E6: [[33, 32], [47, 46]],
      E12: [[27, 26], [33, 32], [39, 38], [47, 46], [82, 83]],
      E24: [[27, 26], [30, 29], [33, 32], [36, 35], [39, 38], [43, 42], [47, 46], [82, 83]],
    };
    for (const name of ["E3", "E6", "E12", "E24"] as const) {
      const s = eSeries[name];
      const departures = s.table.flatMap((v, i) => (v === rounded(s.count, i, 2) ? [] : [[v, rounded(s.count, i, 2)]]));
      expect(departures).toEqual(expected[name]);
    }
  });

  it("spot values (IEC 60063, from memory)", () => {
    expect(standardValues("E6", 0)).toEqual([1, 1.5, 2.2, 3.3, 4.7, 6.8]);
    expect(standardValues("E12", 3)).toEqual([1000, 1200, 1500, 1800, 2200, 2700, 3300, 3900, 4700, 5600, 6800, 8200]);
    expect(standardValues("E24", 1)).toEqual([10, 11, 12, 13, 15, 16, 18, 20, 22, 24, 27, 30, 33, 36, 39, 43, 47, 51, 56, 62, 68, 75, 82, 91]);
    // E48 and E96 from an independent memory of the printed tables (not derived from E192).
    expect(standardValues("E48", 0).slice(0, 12)).toEqual([1, 1.05, 1.1, 1.15, 1.21, 1.27, 1.33, 1.4, 1.47, 1.54, 1.62, 1.69]);
    expect(standardValues("E48", 0).slice(-6)).toEqual([7.5, 7.87, 8.25, 8.66, 9.09, 9.53]);
    expect(standardValues("E96", 2).slice(0, 8)).toEqual([100, 102, 105, 107, 110, 113, 115, 118]);
    expect(standardValues("E96", 2)).toContain(499);
    expect(standardValues("E96", 2)).toContain(976);
    expect(standardValues("E192", 0)).toContain(9.2);
    expect(standardValues("E192", 0)).not.toContain(9.19);
  });

  it("pairs each series with its IEC 60063 tolerance band", () => {
    expect(eSeries.E6.tolerance).toBe(0.2);
    expect(eSeries.E12.tolerance).toBe(0.1);
    expect(eSeries.E24.tolerance).toBe(0.05);
    expect(eSeries.E48.tolerance).toBe(0.02);
    expect(eSeries.E96.tolerance).toBe(0.01);
    expect(eSeries.E192.tolerance).toBe(0.005);
    expect(eSeries.E192.tolerances).toEqual([0.005, 0.0025, 0.001]);
    // Each finer series is at least as tight as the coarser ones.
    for (let i = 1; i < seriesNames.length; i++) expect(eSeries[seriesNames[i]!].tolerance).toBeLessThan(eSeries[seriesNames[i - 1]!].tolerance);
  });

  it("builds values exactly (integer × power of ten)", () => {
    expect(standardValues("E12", 3)[8]).toBe(4700);
    expect(standardValues("E96", -1)).toContain(0.487);
    expect(standardValues("E24", 6)).toContain(8_200_000);
  });
});

describe("lookup", () => {
  it("nearest, neighbours and membership on hand-picked values", () => {
    expect(nearestStandard(4600, "E12")).toBe(4700);
    expect(nearestStandard(1234, "E24")).toBe(1200);
    expect(nearestStandard(9700, "E12")).toBe(10000); // wraps into the next decade
    expect(nearestStandard(0.99, "E6")).toBe(1);
    expect(neighbours(5000, "E12")).toEqual({ below: 4700, above: 5600 });
    expect(neighbours(4700, "E12")).toEqual({ below: 4700, above: 4700 });
    expect(neighbours(9500, "E12")).toEqual({ below: 8200, above: 10000 });
    expect(isStandard(3300, "E6")).toBe(true);
    expect(isStandard(3900, "E6")).toBe(false);
    expect(isStandard(0.1 + 0.2 + 0.7, "E3")).toBe(true); // 1.0000000000000002 is still 1.0
    expect(isStandard(1.000001, "E3")).toBe(false);
    expect(neighbours(1e-13 + 1, "E3")).toEqual({ below: 1, above: 1 }); // within 1e-9: the standard value itself
    expect(standardValuesAround(5000, "E12", 3)).toEqual([3900, 4700, 5600]);
    expect(standardValuesAround(5200, "E12", 3)).toEqual([4700, 5600, 6800]);
    expect(standardValuesAround(1000, "E24", 3)).toEqual([910, 1000, 1100]);
  });

  it("property: neighbours bracket the value, are members, and the nearest is the closer of them", () => {
    fc.assert(
      fc.property(fc.constantFrom(...seriesNames), fc.double({ min: -5, max: 13, noNaN: true }), (name, exp) => {
        const v = 10 ** exp;
        const { below, above } = neighbours(v, name);
        // A value within 1e-9 relative of a standard value counts as that value (eseries.ts).
        expect(below).toBeLessThanOrEqual(v * (1 + 1e-9));
        expect(above).toBeGreaterThanOrEqual(v * (1 - 1e-9));
        expect(isStandard(below, name)).toBe(true);
        expect(isStandard(above, name)).toBe(true);
        const n = nearestStandard(v, name);
        expect(logDistance(v, n)).toBeLessThanOrEqual(Math.min(logDistance(v, below), logDistance(v, above)) + 1e-15);
        // No member lies strictly between below and above: the step is at most one table step.
        const step = Math.log10(above / below);
        expect(step).toBeLessThanOrEqual(Math.max(...eSeries[name].table.map((x, i, t) => Math.log10((t[i + 1] ?? t[0]! * 10) / x))) + 1e-12);
      }),
    );
  });

  it("rejects bad input with typed errors naming the value", () => {
    expect(() => nearestStandard(-10, "E12", "RD")).toThrow(InputError);
    expect(() => nearestStandard(Number.NaN, "E12", "RD")).toThrow(/RD: got NaN/);
    expect(() => nearestStandard(0, "E12")).toThrow(InputError);
    expect(() => nearestStandard(1e30, "E12")).toThrow(InputError);
    expect(() => seriesOf("E25" as never)).toThrow(/one of E3, E6/);
    expect(() => standardValues("E12", 2.5)).toThrow(InputError);
    expect(() => standardValuesAround(1000, "E12", 0)).toThrow(InputError);
    expect(() => toleranceOf("E24", 1.5)).toThrow(InputError);
    expect(toleranceOf("E24")).toBe(0.05);
    expect(toleranceOf("E24", 0.01)).toBe(0.01);
  });
});
