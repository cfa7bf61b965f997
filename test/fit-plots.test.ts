/**
 * Figures of a fit (lib/plot/fit.ts) on the open 180 nm measurements
 * (data/pdk180, GF180MCU 3.3 V NMOS W = 10 µm L = 1 µm, 25 °C): measured against
 * model on a log axis (transfer) and a linear one (output), residuals in %, and
 * the validity map whose bands agree with the fit's own errors. Also a fit that
 * runs out of iterations says so with the residual reached.
 */
import { describe, expect, it } from "vitest";
import { ConvergenceError } from "../lib/errors.js";
import { fitSweep } from "../lib/fit/fit.js";
import { ekvFit, squareLawFit } from "../lib/fit/models.js";
import { readMeasurements } from "../lib/measure/read.js";
import { select } from "../lib/measure/select.js";
import { fitFigures, validityColours } from "../lib/plot/fit.js";

const s = select(readMeasurements("data/pdk180/nfet_03v3_meas_id.csv"), { w: 10e-6, l: 1e-6, temp: 298.15 });

describe("fit figures", { timeout: 60_000 }, () => {
  const fit = fitSweep(ekvFit, s);
  const figs = fitFigures(fit, s);
  it("draws transfer curves on a log axis and output curves on a linear one, measured as markers and the model as lines", () => {
    expect(figs.map((f) => f.kind)).toEqual(["measured-against-model", "measured-against-model", "fit-residuals", "fit-residuals", "validity-map"]);
    const [transfer, output] = figs;
    expect(transfer!.figure.layout.yaxis.type).toBe("log");
    expect(output!.figure.layout.yaxis.type).toBeUndefined();
    expect(transfer!.figure.data.filter((t) => t.meta?.role === "measured")).toHaveLength(5); // five VBS at VDS = 0.05 V
    expect(output!.figure.data.filter((t) => t.meta?.role === "model")).toHaveLength(6); // six VGS
    for (const t of transfer!.figure.data) expect(Math.min(...t.y)).toBeGreaterThanOrEqual(1e-8);
  });
  it("puts every point above the floor at VBS = 0 in exactly one validity band, matching the fit's errors", () => {
    const map = figs[4]!.figure.data;
    expect(map.map((t) => t.marker?.color)).toEqual([validityColours.within5, validityColours.within10, validityColours.outside]);
    let expected = 0;
    let within5 = 0;
    for (let i = 0; i < s.id.length; i++) {
      const e = fit.accuracy.error[i]!;
      if (Number.isNaN(e) || s.vbs[i] !== 0) continue;
      expected++;
      if (Math.abs(e) <= 0.05) within5++;
    }
    expect(map.reduce((a, t) => a + t.x.length, 0)).toBe(expected);
    expect(map[0]!.x.length).toBe(within5);
  });
  it("plots residuals in percent, equal to the fit's relative errors", () => {
    const res = figs[3]!.figure.data[0]!;
    const curve = fit.accuracy.map.find((c) => c.kind === "output" && c.fixed.vbs === 0)!;
    const errs = curve.error.filter((e): e is number => e !== null);
    expect(res.y[0]).toBeCloseTo(100 * errs[0]!, 3);
  });
});

describe("a fit that does not converge", () => {
  it("throws ConvergenceError naming the device and the RMS reached", () => {
    const run = () => fitSweep(squareLawFit, s, { window: {}, maxIterations: 1 });
    expect(run).toThrow(ConvergenceError);
    expect(run).toThrow(/nfet_03v3_meas_id\.csv: square-law fit, nmos W=10 µm L=1 µm 25 °C: no convergence after 1 iterations; RMS residual reached [0-9.]+/);
  });
});
