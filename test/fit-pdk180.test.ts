/**
 * Fits to the open 180 nm process's published measurements (data/pdk180:
 * GF180MCU 3.3 V NMOS and PMOS, measured I–V from
 * google/globalfoundries-pdk-libs-gf180mcu_fd_pr, Apache-2.0), W = 10 µm,
 * every measured point with |ID| ≥ 10 nA. Prints the per-geometry table the
 * README quotes (run with `npx vitest run test/fit-pdk180.test.ts`).
 *
 * Targets (issue 8): EKV per L RMS ≤ 5 % and 95th percentile ≤ 10 % for
 * L ≥ 0.5 µm, RMS ≤ 10 % at L = 0.28 µm; temperature predictions RMS ≤ 8 %
 * for L ≥ 1 µm. The test asserts each target.
 */
import { describe, expect, it } from "vitest";
import type { ErrorSummary } from "../lib/fit/accuracy.js";
import { describeWindow, fitSweep } from "../lib/fit/fit.js";
import { ekvFit, fitModels, squareLawFit } from "../lib/fit/models.js";
import { fitTemperature } from "../lib/fit/temperature.js";
import { readMeasurements } from "../lib/measure/read.js";
import { select } from "../lib/measure/select.js";

const sets = {
  nmos: readMeasurements("data/pdk180/nfet_03v3_meas_id.csv"),
  pmos: readMeasurements("data/pdk180/pfet_03v3_meas_id.csv"),
};
const sweep = (pol: "nmos" | "pmos", l: number, tempC = 25) =>
  select(sets[pol], { w: 10e-6, l: l * 1e-6, temp: tempC + 273.15, currentSign: pol === "pmos" ? "magnitude" : "spice" });
const pct = (e: ErrorSummary) => `${(100 * e.rms!).toFixed(1)} % / ${(100 * e.p95!).toFixed(1)} % / ${(100 * e.max!).toFixed(1)} %`;

describe("EKV fitted per L to the open 180 nm measurements (GF180MCU 3.3 V, W = 10 µm, 25 °C, |ID| ≥ 10 nA)", { timeout: 120_000 }, () => {
  for (const pol of ["nmos", "pmos"] as const)
    for (const l of [0.28, 0.5, 1, 5, 10]) {
      it(`${pol} L = ${l} µm`, () => {
        const f = fitSweep(ekvFit, sweep(pol, l));
        const e = f.accuracy.overall;
        const r = f.accuracy.regions;
        console.log(`| ${pol} | ${l} | ${e.points} | ${pct(e)} | ${r.weak.rms === undefined ? "–" : (100 * r.weak.rms).toFixed(1)} / ${(100 * r.moderate.rms!).toFixed(1)} / ${(100 * r.strong.rms!).toFixed(1)} % | ${(100 * r.triode.rms!).toFixed(1)} / ${(100 * r.saturation.rms!).toFixed(1)} % |`);
        if (l >= 0.5) {
          expect(e.rms!).toBeLessThanOrEqual(0.05);
          expect(e.p95!).toBeLessThanOrEqual(0.1);
        } else expect(e.rms!).toBeLessThanOrEqual(0.1);
        expect(e.points).toBeGreaterThan(500);
      });
    }
});

describe("temperature: card at 25 °C plus fitted drift predicts −40 °C and 125 °C (open 180 nm measurements, W = 10 µm)", { timeout: 120_000 }, () => {
  for (const pol of ["nmos", "pmos"] as const)
    for (const l of [1, 5, 10]) {
      it(`${pol} L = ${l} µm: square law in its window, EKV over every point`, () => {
        const ss = [-40, 25, 125].map((t) => sweep(pol, l, t));
        for (const model of [squareLawFit, ekvFit]) {
          const ref = fitSweep(model, ss[1]!);
          const tf = fitTemperature(model, ref, ss);
          const rows = tf.predictions.map((p) => `${(p.temp - 273.15).toFixed(0)} °C ${(100 * p.inWindow.rms!).toFixed(1)} %`);
          console.log(`| ${pol} | ${l} | ${model.id} | ${(tf.alphaVt * 1e3).toFixed(2)} mV/K | ${tf.muExp.toFixed(2)} | ${rows.join(", ")} |`);
          // physically sensible: |Vt| falls with temperature, mobility exponent between 0.5 and 2.5 (common practice)
          expect(tf.alphaVt).toBeLessThan(0);
          expect(tf.muExp).toBeGreaterThan(0.5);
          expect(tf.muExp).toBeLessThan(2.5);
          // the target: 8 % for both models at every L ≥ 1 µm
          for (const p of tf.predictions) expect(p.inWindow.rms!).toBeLessThanOrEqual(0.08);
        }
      });
    }
});

describe("square law with mobility degradation and velocity saturation over the strong-inversion plane (open 180 nm measurements, W = 10 µm, 25 °C)", { timeout: 120_000 }, () => {
  const mobility = fitModels["square-law-mobility"]!;
  for (const pol of ["nmos", "pmos"] as const)
    for (const l of [0.28, 0.5, 1, 5, 10]) {
      it(`${pol} L = ${l} µm: RMS ≤ 5 % in its window`, () => {
        const f = fitSweep(mobility, sweep(pol, l));
        const p = Object.fromEntries(f.parameters.map((q) => [q.name, q.value]));
        console.log(`| ${pol} | ${l} | ${describeWindow(f.window).replace(/\|VBS\| = 0 V/, "VBS = 0")} (${f.window.points} pts) | ${(100 * f.inWindow.rms!).toFixed(1)} % / ${(100 * f.inWindow.p95!).toFixed(1)} % | ${(p.theta! as number).toFixed(3)} | ${((p.ecrit! as number) / 1e6).toFixed(2)} |`);
        expect(f.meetsTarget).toBe(true);
        expect(f.inWindow.rms!).toBeLessThanOrEqual(0.05);
      });
    }
});
