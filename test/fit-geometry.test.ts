/**
 * ΔL, Rsd and ΔW by the channel-resistance method (Terada & Muta, Jpn. J. Appl.
 * Phys. 18(5), 953–959, 1979): exact recovery from invented linear-region data
 * built with the method's own relation Rm = Rsd + (Lm − ΔL)/(Wm − ΔW)/(µCox·(VGS − Vt)),
 * and a plausibility check on the open 180 nm measurements (data/pdk180,
 * GF180MCU 3.3 V NMOS and PMOS, Apache-2.0).
 */
import { describe, expect, it } from "vitest";
import { lengthReduction, widthReduction } from "../lib/fit/geometry.js";
import { parseMeasurements, readMeasurements } from "../lib/measure/read.js";

describe("channel-resistance method", () => {
  // Invented process: ΔL = 80 nm, ΔW = 40 nm, Rsd = 150 Ω, µCox = 200 µA/V², Vt = 0.6 V.
  const dl = 80e-9, dw = 40e-9, rsd = 150, kp = 200e-6, vt = 0.6, vds = 0.05;
  const rows = ["W (um),L (um),vds,vgs,vbs,id"];
  for (const w of [2, 5, 10]) for (const l of [0.5, 1, 2, 5]) for (let g = 0; g <= 33; g++) {
    const vgs = g / 10;
    const id = vgs > vt ? vds / (rsd + (l * 1e-6 - dl) / ((w * 1e-6 - dw) * kp * (vgs - vt))) : 0;
    rows.push(`${w},${l},${vds},${vgs},0,${id}`);
  }
  const set = parseMeasurements(rows.join("\n"), "invented.csv");
  it("recovers ΔL and Rsd where the lines of several gate voltages cross", () => {
    const r = lengthReduction(set, 10e-6, [0.5e-6, 1e-6, 2e-6, 5e-6], { vt });
    expect(r.deltaL).toBeCloseTo(dl, 12);
    expect(r.rsd).toBeCloseTo(rsd, 6);
    expect(r.spread).toBeLessThan(1e-12);
  });
  it("recovers ΔW from the channel conductance against drawn width, Rsd taken off", () => {
    const rsdFound = lengthReduction(set, 10e-6, [0.5e-6, 1e-6, 2e-6, 5e-6], { vt }).rsd;
    const r = widthReduction(set, 5e-6, [2e-6, 5e-6, 10e-6], { vt, rsd: rsdFound });
    expect(r.deltaW).toBeCloseTo(dw, 12);
    expect(r.spread).toBeLessThan(1e-12);
  });
  it("refuses a single length", () => {
    expect(() => lengthReduction(set, 10e-6, [1e-6])).toThrow(/at least two drawn lengths/);
  });
});

describe("open 180 nm measurements (GF180MCU 3.3 V, W = 10 µm, 25 °C)", { timeout: 60_000 }, () => {
  for (const [file, pol] of [["nfet", "spice"], ["pfet", "magnitude"]] as const)
    it(`${file}: ΔL within ±0.2 µm and the lines meet within 50 nm`, () => {
      const set = readMeasurements(`data/pdk180/${file}_03v3_meas_id.csv`);
      const r = lengthReduction(set, 10e-6, [0.28e-6, 0.5e-6, 1e-6, 5e-6, 10e-6], { temp: 298.15, currentSign: pol });
      console.log(`${file}: ΔL = ${(r.deltaL * 1e9).toFixed(1)} nm, Rsd = ${r.rsd.toFixed(1)} Ω, crossings spread ${(r.spread * 1e9).toFixed(1)} nm`);
      expect(Math.abs(r.deltaL)).toBeLessThan(0.2e-6);
      expect(r.rsd).toBeGreaterThan(0);
      expect(r.spread).toBeLessThan(50e-9);
    });
});
