import { describe, expect, it } from "vitest";
import {
  Derivation,
  InfeasibleError,
  InputError,
  amperes,
  amperesPerVoltSquared,
  device,
  drainCurrent,
  extractBodyEffect,
  extractLambda,
  extractThresholdAndGain,
  fitLine,
  meters,
  perVolt,
  ratio,
  sqrtVolts,
  volts,
  type DeviceCard,
} from "../lib/index.js";
import { runNgspice } from "./support/ngspice.js";

describe("straight-line least squares", () => {
  it("recovers an exact line with zero residuals and reports the rms of a perturbed one", () => {
    const x = [0, 1, 2, 3];
    const exact = fitLine(x, [1, 3, 5, 7]);
    expect(exact.slope).toBeCloseTo(2, 14);
    expect(exact.intercept).toBeCloseTo(1, 14);
    expect(exact.rms).toBeLessThan(1e-14);
    // y = 2x + 1 with residuals +0.1, −0.1, −0.1, +0.1 (orthogonal to 1 and x): fit unchanged, rms 0.1.
    const bumped = fitLine(x, [1.1, 2.9, 4.9, 7.1]);
    expect(bumped.slope).toBeCloseTo(2, 12);
    expect(bumped.intercept).toBeCloseTo(1, 12);
    expect(bumped.rms).toBeCloseTo(0.1, 12);
  });
});

/**
 * The ngspice Level 1 oracle as the "bench": drain currents of a known card
 * (vto = 0.7 V, kp = 100 µA/V², λ = 0.02 /V, γ = 0.4 √V, 2φF = 0.7 V, W/L = 32/1,
 * invented for this test, IS = 0), then the card is recovered by extraction.
 */
describe("extraction recovers a Level 1 card from ngspice currents", () => {
  const vgsList = [1.4, 1.6, 1.8, 2.0, 2.2, 2.4]; // above the highest threshold, 1.13 V at VSB = 3 V
  const vsbList = [0, 0.5, 1, 2, 3];
  const vdsSat = 3;
  const vdsList = [1.5, 2, 2.5, 3, 3.5, 4];
  const control: string[] = [];
  for (const vsb of vsbList)
    for (const vgs of vgsList) control.push(`alter VB dc = ${-vsb}`, `alter VG dc = ${vgs}`, `alter VD dc = ${vdsSat}`, "op", "print -i(VD)");
  for (const vds of vdsList) control.push(`alter VB dc = 0`, `alter VG dc = 1.5`, `alter VD dc = ${vds}`, "op", "print -i(VD)");
  control.push("quit 0"); // ngspice 39 batch mode otherwise exits with status 1 after .control
  const printed = runNgspice({
    circuit: [
      ".model NX nmos level=1 vto=0.7 kp=100u lambda=0.02 gamma=0.4 phi=0.7 is=0",
      "M1 d g 0 b NX W=32u L=1u",
      "VD d 0 0",
      "VG g 0 0",
      "VB b 0 0",
      ".option gmin=1e-18", // keep junction leakage out of the currents
    ].join("\n"),
    control: control.join("\n"),
  }).map((r) => r[1]);
  const transfer = (b: number) => vgsList.map((vgs, i) => ({ vgs: volts(vgs), id: amperes(printed[b * vgsList.length + i]!) }));
  const output = vdsList.map((vds, i) => ({ vds: volts(vds), id: amperes(printed[vsbList.length * vgsList.length + i]!) }));

  it("has every value it asked for", () => {
    expect(printed.length).toBe(vsbList.length * vgsList.length + vdsList.length);
  });
  it("Vt = 0.7 V and k = k'·W/L·(1 + λ·VDS) from √ID against VGS at VSB = 0", () => {
    const rec = new Derivation("fit");
    const fit = extractThresholdAndGain(transfer(0), { wl: ratio(32) }, rec);
    expect(fit.vt).toBeCloseTo(0.7, 9);
    expect(fit.k).toBeCloseTo(100e-6 * 32 * (1 + 0.02 * vdsSat), 12);
    expect(fit.kp).toBeCloseTo(100e-6 * (1 + 0.02 * vdsSat), 12);
    expect(fit.maxRelativeResidual).toBeLessThan(1e-9);
    expect(rec.findings).toEqual([]);
  });
  it("λ = 0.02 /V from ID against VDS in saturation", () => {
    const fit = extractLambda(output);
    expect(fit.lambda).toBeCloseTo(0.02, 9);
    expect(fit.id0).toBeCloseTo(0.5 * 3.2e-3 * 0.8 * 0.8, 12);
  });
  it("γ = 0.4 √V from the thresholds extracted at five VSB", () => {
    const points = vsbList.map((vsb, b) => ({ vsb: volts(vsb), vt: extractThresholdAndGain(transfer(b)).vt }));
    const fit = extractBodyEffect(points, { phi: volts(0.7) });
    expect(fit.gamma).toBeCloseTo(0.4, 8);
    expect(fit.vt0).toBeCloseTo(0.7, 8);
    expect(fit.rmsResidual).toBeLessThan(1e-8);
  });
});

describe("extraction from PMOS data with SPICE signs, and with measurement scatter", () => {
  // Invented PMOS card; currents from our own forward model, so the expected values are exact.
  const card: DeviceCard = { name: "ex-p", polarity: "pmos", kp: amperesPerVoltSquared(40e-6), vt0: volts(-0.8), lambda: perVolt(0.05), gamma: sqrtVolts(0.6), phi: volts(0.8) };
  const d = device(card, meters(50e-6), meters(2e-6));
  it("gives a negative Vt and the k of the card (λ folded in at the measured VDS)", () => {
    const pts = [-1.2, -1.5, -1.8, -2.1].map((vgs) => ({ vgs: volts(vgs), id: drainCurrent(d, vgs, -3) }));
    const fit = extractThresholdAndGain(pts, { polarity: "pmos" });
    expect(fit.vt).toBeCloseTo(-0.8, 12);
    expect(fit.k).toBeCloseTo(40e-6 * 25 * (1 + 0.05 * 3), 15);
    const body = extractBodyEffect(
      [0, -0.5, -1, -2].map((vsb) => ({ vsb: volts(vsb), vt: volts(-(0.8 + 0.6 * (Math.sqrt(0.8 - vsb) - Math.sqrt(0.8)))) })),
      { polarity: "pmos", phi: volts(0.8) },
    );
    expect(body.gamma).toBeCloseTo(0.6, 12);
    expect(body.vt0).toBeCloseTo(-0.8, 12);
    const out = extractLambda([-1.5, -2, -3, -4].map((vds) => ({ vds: volts(vds), id: drainCurrent(d, -2, vds) })), { polarity: "pmos" });
    expect(out.lambda).toBeCloseTo(0.05, 12);
  });
  it("reports residuals, and cautions when the square law misses points by more than 5 %", () => {
    const clean = [1.0, 1.3, 1.6, 1.9, 2.2].map((vgs) => ({ vgs: volts(vgs), id: amperes(0.5e-3 * (vgs - 0.6) ** 2) }));
    const noisy = clean.map((p, i) => ({ ...p, id: amperes(p.id * (i % 2 ? 1.08 : 0.92)) }));
    const rec = new Derivation("noisy");
    const fit = extractThresholdAndGain(noisy, {}, rec);
    expect(fit.residuals).toHaveLength(5);
    expect(fit.rmsResidual).toBeGreaterThan(0);
    expect(fit.maxRelativeResidual).toBeGreaterThan(0.05);
    expect(rec.findings.map((f) => f.severity)).toEqual(["caution"]);
  });
});

describe("extraction refuses data it cannot fit", () => {
  const sat = (pairs: Array<[number, number]>) => pairs.map(([vgs, id]) => ({ vgs: volts(vgs), id: amperes(id) }));
  it("under-determined: fewer than three points", () => {
    expect(() => extractThresholdAndGain(sat([[1, 1e-4], [2, 4e-4]]))).toThrow(InputError);
    expect(() => extractThresholdAndGain(sat([[1, 1e-4], [2, 4e-4]]))).toThrow(/got 2, expected at least 3 points/);
    expect(() => extractLambda([])).toThrow(/got 0, expected at least 3/);
  });
  it("non-monotonic: ID falling as VGS rises, or repeated VGS", () => {
    expect(() => extractThresholdAndGain(sat([[1, 1e-4], [1.5, 3e-4], [2, 2e-4]]))).toThrow(/not monotonic/);
    expect(() => extractThresholdAndGain(sat([[1, 1e-4], [1, 2e-4], [2, 4e-4]]))).toThrow(/distinct vgs/);
    expect(() => extractLambda([1, 2, 3].map((v, i) => ({ vds: volts(v), id: amperes(1e-4 - i * 1e-6) })))).toThrow(/not monotonic/);
    expect(() => extractBodyEffect([0, 1, 2].map((v, i) => ({ vsb: volts(v), vt: volts(0.7 - 0.1 * i) })))).toThrow(/not monotonic/);
  });
  it("wrong signs and bad values name the point", () => {
    expect(() => extractThresholdAndGain(sat([[1, 1e-4], [1.5, -3e-4], [2, 5e-4]]))).toThrow(/\[1\]\.id: got -0\.0003, expected a conducting NMOS drain current > 0 A/);
    expect(() => extractThresholdAndGain(sat([[1, 1e-4], [NaN, 3e-4], [2, 5e-4]]))).toThrow(/\[1\]\.vgs: got NaN/);
    expect(() => extractLambda([1, -2, 3].map((v) => ({ vds: volts(v), id: amperes(1e-4) })), { polarity: "nmos" })).toThrow(/\[1\]\.vds: got -2, expected VDS ≥ 0 V/);
    expect(() => extractBodyEffect([0, 1, 2].map((v) => ({ vsb: volts(v), vt: volts(-0.7) })), { polarity: "pmos" })).toThrow(/\[1\]\.vsb: got 1, expected reverse body bias VSB ≤ 0 V for a PMOS/);
    expect(() => extractThresholdAndGain(sat([[1, 1e-4], [2, 4e-4], [3, 9e-4]]), { wl: ratio(-2) })).toThrow(/opts\.wl: got -2/);
    expect(() => extractBodyEffect([0, 1, 2].map((v) => ({ vsb: volts(v), vt: volts(0.7 + 0.1 * v) })), { phi: volts(0) })).toThrow(/opts\.phi: got 0, expected 2φF > 0/);
  });
  it("points below threshold: a fit that puts Vt above the lowest VGS is infeasible", () => {
    // √ID falls on a line crossing zero at 1.5 V, but a point sits at VGS = 1 V.
    const bad = sat([[1, 1e-10], [2, 0.25e-3], [3, 2.25e-3]]);
    expect(() => extractThresholdAndGain(bad)).toThrow(InfeasibleError);
    expect(() => extractThresholdAndGain(bad)).toThrow(/not below the lowest \|VGS\| = 1 V/);
  });
});
