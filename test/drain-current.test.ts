import { describe, expect, it } from "vitest";
import { device, drainCurrent, operatingPoint, Derivation, type DeviceCard, amperesPerVoltSquared, volts, meters, perVolt } from "../lib/index.js";

// Invented card for unit tests (not a real process).
const card: DeviceCard = { name: "test-n", polarity: "nmos", kp: amperesPerVoltSquared(200e-6), vt0: volts(0.5), lambda: perVolt(0.05) };
const m = device(card, meters(10e-6), meters(1e-6));

describe("drain current", () => {
  it("is ½·k·VOV² at the triode/saturation edge and continuous there (common practice)", () => {
    const k = 200e-6 * 10;
    const vov = 0.3;
    const edge = drainCurrent(m, 0.8, vov);
    expect(edge).toBeCloseTo(0.5 * k * vov * vov * (1 + 0.05 * vov), 15);
    const below = drainCurrent(m, 0.8, vov - 1e-9);
    expect(Math.abs(edge - below) / edge).toBeLessThan(1e-7);
  });
  it("agrees between the hot path and the recorded operating point", () => {
    const rec = new Derivation("t");
    const op = operatingPoint(m, { vgs: volts(1.1), vds: volts(0.2) }, {}, rec);
    expect(op.region).toBe("triode");
    expect(op.id).toBe(drainCurrent(m, 1.1, 0.2));
    const current = rec.steps.find((s) => s.kind === "formula" && s.formula === "triodeCurrentClm");
    expect(current?.kind === "formula" && current.result.value).toBe(op.id);
  });
});

describe("drain current at the triode/saturation edge (common practice)", () => {
  const noClm = device({ ...card, lambda: perVolt(0) }, meters(10e-6), meters(1e-6));
  it("equals ½·k·VOV² at VDS = VOV with λ = 0, from both sides", () => {
    for (const vov of [0.05, 0.2, 0.7, 2]) {
      const vgs = 0.5 + vov;
      const half = 0.5 * 2e-3 * vov * vov;
      expect(drainCurrent(noClm, vgs, vov)).toBeCloseTo(half, 15);
      expect(Math.abs(drainCurrent(noClm, vgs, vov * (1 - 1e-9)) - half) / half).toBeLessThan(1e-8);
    }
  });
  it("is continuous there with λ ≠ 0 in the SPICE form, and jumps by λ·VDS in the textbook form", () => {
    const vov = 0.4;
    const at = drainCurrent(m, 0.9, vov, 0, "saturation-only");
    const below = drainCurrent(m, 0.9, vov * (1 - 1e-12), 0, "saturation-only");
    expect((at - below) / below).toBeCloseTo(0.05 * vov, 6);
    const cAt = drainCurrent(m, 0.9, vov);
    const cBelow = drainCurrent(m, 0.9, vov * (1 - 1e-12));
    expect(Math.abs(cAt - cBelow) / cAt).toBeLessThan(1e-9);
  });
  it("agrees with operatingPoint in both CLM modes in triode", () => {
    for (const clm of ["continuous", "saturation-only"] as const) {
      const op = operatingPoint(m, { vgs: volts(1.2), vds: volts(0.3) }, { clm });
      expect(op.id).toBe(drainCurrent(m, 1.2, 0.3, 0, clm));
    }
  });
});

describe("operatingPoint bad input", () => {
  it("names NaN terminal voltages", () => {
    expect(() => operatingPoint(m, { vgs: volts(NaN), vds: volts(1) })).toThrow(/bias\.vgs.*got NaN/);
    expect(() => operatingPoint(m, { vgs: volts(1), vds: volts(Infinity) })).toThrow(/bias\.vds/);
    expect(() => operatingPoint(m, { vgs: volts(1), vds: volts(1), vsb: volts(NaN) })).toThrow(/bias\.vsb/);
  });
});

describe("operating point as data", () => {
  it("explains its region on read and keeps the explanation in its JSON form", () => {
    const op = operatingPoint(m, { vgs: volts(1.1), vds: volts(2) });
    expect(op.reason).toMatch(/^VGS − Vt = 0\.6 V > 0 and VDS = 2 V ≥ VOV: .*saturation \(margin VDS − VOV = 1\.4 V\)\.$/);
    const json = JSON.parse(JSON.stringify(op));
    expect(json.reason).toBe(op.reason);
    expect(json.region).toBe("saturation");
    expect(json.id).toBe(op.id);
  });
});
