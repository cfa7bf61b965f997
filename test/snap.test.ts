import { describe, expect, it } from "vitest";
import fc from "fast-check";
import { snapToSeries } from "../lib/bias/snap.js";
import { nearestStandard, standardValuesAround } from "../lib/bias/eseries.js";
import { InfeasibleError, InputError, PinchoffError } from "../lib/errors.js";
import { Derivation } from "../lib/record/derivation.js";

/** A gate divider scored on its ratio: the case where rounding each half on its own goes wrong. */
const ratioObjective = (target: number) => (v: readonly number[]) => Math.abs(v[1]! / (v[0]! + v[1]!) - target) / target;

describe("snapToSeries", () => {
  it("beats independent rounding on a divider whose halves round apart", () => {
    // Ideal R1 = 5.05 kΩ rounds down to 4.7 kΩ, ideal R2 = 5.2 kΩ rounds up to 5.6 kΩ (E12):
    // the ratio moves from 0.5073 to 0.5437 (+7.2 %); equal halves keep it at 0.5 (−1.4 %). Both
    // 4.7 k/4.7 k and 5.6 k/5.6 k give 0.5; the tie goes to the pair closer to the ideal values in
    // total log distance (0.0751 against 0.0771 decades).
    const ideal = [5050, 5200];
    const target = 5200 / 10250;
    const rec = new Derivation("divider snap");
    const r = snapToSeries({ names: ["R1", "R2"], ideal, series: "E12", objective: ratioObjective(target), objectiveLabel: "ratio error" }, rec);
    expect(r.components.map((c) => c.nearest)).toEqual([4700, 5600]);
    expect(r.chosen).toEqual([4700, 4700]);
    expect(r.nearestScore).toBeCloseTo(Math.abs(5600 / 10300 - target) / target, 12);
    expect(r.score).toBeCloseTo(Math.abs(0.5 - target) / target, 12);
    expect(r.score).toBeLessThan(r.nearestScore / 4);
    expect(r.combinationsTried).toBe(4);
    expect(r.components[0]!.deviation).toBeCloseTo(4700 / 5050 - 1, 12);
    const text = rec.steps.map((s) => (s.kind === "note" ? s.text : "")).join("\n");
    expect(text).toMatch(/Tried 4 combinations/);
    expect(text).toMatch(/for rounding each value on its own \(R1 = 4\.700 kΩ, R2 = 5\.600 kΩ\)/);
    expect(rec.sources).toContain("IEC 60063 (preferred number series for resistors and capacitors)");
  });

  it("property: the winner is the brute-force minimum over the candidate grid and never worse than independent rounding", () => {
    fc.assert(
      fc.property(
        fc.array(fc.double({ min: 2, max: 6, noNaN: true }), { minLength: 1, maxLength: 4 }),
        fc.constantFrom("E6", "E12", "E24", "E96"),
        fc.integer({ min: 1, max: 3 }),
        fc.double({ min: 0.05, max: 0.95, noNaN: true }),
        (exps, series, n, target) => {
          const ideal = exps.map((e) => 10 ** e);
          // Score: ratio of the last value to the sum, plus the total against its ideal.
          const sum0 = ideal.reduce((a, b) => a + b, 0);
          const obj = (v: readonly number[]) => {
            const sum = v.reduce((a, b) => a + b, 0);
            return Math.abs(v.at(-1)! / sum - target) + Math.abs(sum / sum0 - 1);
          };
          const r = snapToSeries({ names: ideal.map((_, i) => `R${i + 1}`), ideal, series, candidates: n, objective: obj });
          // Independent brute force over the same grid.
          const grids = ideal.map((v) => standardValuesAround(v, series, n));
          let min = Infinity;
          const walk = (i: number, acc: number[]) => {
            if (i === grids.length) return void (min = Math.min(min, obj(acc)));
            for (const c of grids[i]!) walk(i + 1, [...acc, c]);
          };
          walk(0, []);
          expect(r.score).toBe(min);
          expect(r.score).toBe(obj(r.chosen));
          if (n >= 2) expect(r.score).toBeLessThanOrEqual(obj(ideal.map((v) => nearestStandard(v, series))));
        },
      ),
      { numRuns: 200 },
    );
  });

  it("counts combinations the objective rejects and keeps the reason", () => {
    const rec = new Derivation("rejections");
    const r = snapToSeries(
      {
        names: ["R1"],
        ideal: [1000],
        series: "E24",
        candidates: 3,
        objective: (v) => {
          if (v[0]! < 1000) throw new InfeasibleError("device in cutoff with this value");
          return v[0]! / 1000 - 1;
        },
      },
      rec,
    );
    expect(r.combinationsRejected).toBe(1);
    expect(r.chosen).toEqual([1000]);
    expect(JSON.stringify(rec.steps)).toMatch(/R1 = 910: infeasible|R1 = 910: .*cutoff/);
  });

  it("fails with a typed error when every combination is rejected, and on bad input", () => {
    const reject = () => {
      throw new InfeasibleError("always");
    };
    expect(() => snapToSeries({ names: ["R"], ideal: [1000], series: "E12", objective: reject })).toThrow(PinchoffError);
    expect(() => snapToSeries({ names: ["R1", "R2"], ideal: [1000], series: "E12", objective: () => 0 })).toThrow(InputError);
    expect(() => snapToSeries({ names: ["R1"], ideal: [-5], series: "E12", objective: () => 0 })).toThrow(/ideal R1: got -5/);
    expect(() => snapToSeries({ names: ["R1"], ideal: [100], series: "E7" as never, objective: () => 0 })).toThrow(/snap.series/);
    expect(() =>
      snapToSeries({ names: Array.from({ length: 10 }, (_, i) => `R${i}`), ideal: new Array(10).fill(1000), series: "E12", candidates: 3, objective: () => 0 }),
    ).toThrow(/at most 20000 combinations/);
    // A programming error inside the objective is not swallowed.
    expect(() => snapToSeries({ names: ["R"], ideal: [1000], series: "E12", objective: () => { throw new TypeError("bug"); } })).toThrow(TypeError);
  });
});

describe("snapToSeries ranking", () => {
  it("lists the best combinations in the order the choice uses (score, then closeness to the ideal)", () => {
    const r = snapToSeries({ names: ["R1", "R2"], ideal: [5050, 5200], series: "E12", objective: ratioObjective(0.5) });
    expect(r.ranking[0]!.values).toEqual(r.chosen);
    expect(r.ranking[0]!.score).toBe(r.score);
  });
});
